/**
 * Number formatting of the Results views (display only; the values come from the model): the
 * one count and value formatters of src/engine/text.ts, re-exported here, and adequacy.
 */
import { formatCount } from '../../engine/text';

export { formatCount, formatDataValue, formatValue } from '../../engine/text';

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
