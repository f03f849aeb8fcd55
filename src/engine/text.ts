/**
 * Numbers and counted nouns in the text people read: engine messages, the CLI, the panel and
 * the analysis cells all go through these helpers, so every count has grouped digits, every
 * noun agrees with its count, every information value reads alike (formatValue) and every data
 * value such as a bin edge reads alike (formatDataValue). The one exception is the Markdown
 * fallback of a record (record/markdown.ts), whose tables keep fixed decimals that the kernel's
 * Python side writes to the same bytes.
 */

/** Fixed locale, so "1,099,511,627,775" reads the same in every browser, in Node and in tests. */
const COUNT_FORMAT = new Intl.NumberFormat('en-US', { maximumFractionDigits: 0 });

/** A count with thousands separators: 1099511627775 → "1,099,511,627,775" (numbers or bigints). */
export function formatCount(value: number | bigint): string {
  if (typeof value === 'number' && !Number.isFinite(value)) {
    return String(value);
  }
  return COUNT_FORMAT.format(value);
}

/**
 * A count with its noun, the noun made to agree: `plural(1, 'bin')` → "1 bin",
 * `plural(4, 'bin')` → "4 bins", `plural(2, 'analysis', 'analyses')` → "2 analyses".
 */
export function plural(count: number | bigint, singular: string, pluralForm = `${singular}s`): string {
  return `${formatCount(count)} ${wordFor(count, singular, pluralForm)}`;
}

/** One word made to agree with `count`: `wordFor(n, 'has', 'have')`, `wordFor(n, 'multiplet')`. */
export function wordFor(count: number | bigint, singular: string, pluralForm = `${singular}s`): string {
  return count === 1 || count === 1n ? singular : pluralForm;
}

/** An information value with 4 significant digits, a true minus sign, and − 0 shown as 0. */
export function formatValue(value: number): string {
  if (!Number.isFinite(value)) {
    return String(value);
  }
  if (value === 0 || Math.abs(value) < 5e-13) {
    return '0';
  }
  const abs = Math.abs(value);
  const text = abs >= 1e4 || abs < 1e-3 ? abs.toExponential(3) : abs.toPrecision(4);
  return (value < 0 ? '\u2212' : '') + text;
}

/**
 * A value with a fixed number of decimals (JavaScript's toFixed), −0 written as 0, and `minus`
 * before negatives (a true minus sign by default). The Markdown fallback's tables use 4 decimals,
 * so their columns align in plain text (polyadic/show.py writes the same).
 */
export function formatFixed(value: number, decimals: number, minus = '\u2212'): string {
  if (!Number.isFinite(value)) {
    return String(value);
  }
  const text = (value === 0 ? 0 : value).toFixed(decimals);
  return text.startsWith('-') ? `${minus}${text.slice(1)}` : text;
}

/** Adequacy (rows per possible joint cell): two significant digits below 10, whole numbers above. */
export function formatAdequacy(value: number): string {
  if (!Number.isFinite(value)) {
    return String(value);
  }
  if (value >= 10) {
    return formatCount(Math.round(value));
  }
  return value.toPrecision(2);
}

/** A data value (a bin edge, a column's range): whole numbers as they are, others in 4 significant digits. */
export function formatDataValue(value: number): string {
  return Number.isInteger(value) ? String(value) : Number(value.toPrecision(4)).toString();
}
