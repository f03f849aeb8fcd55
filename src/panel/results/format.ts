/**
 * Number formatting of the Results views (display only; the values come from the model): the
 * one module of formatters, src/engine/text.ts, re-exported here.
 */
export { formatAdequacy, formatCount, formatDataValue, formatValue } from '../../engine/text';
