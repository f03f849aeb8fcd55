/**
 * Numbers and counted nouns in the text people read: engine messages, the CLI, the panel and
 * the analysis cells all go through these two helpers, so every count has grouped digits and
 * every noun agrees with its count.
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
