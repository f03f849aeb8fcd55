/**
 * Number formatting of the Results views (display only; the values come from the model).
 * Counts use the one count formatter of src/engine/text.ts, re-exported here.
 */
import { formatCount } from '../../engine/text';

export { formatCount };

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

/** Adequacy: two significant digits below 10, whole numbers above. */
export function formatAdequacy(value: number): string {
  if (!Number.isFinite(value)) {
    return String(value);
  }
  if (value >= 10) {
    return formatCount(Math.round(value));
  }
  return value.toPrecision(2);
}
