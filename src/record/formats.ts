/**
 * The string formats of the record schema: the one check of each, shared by the validators
 * generated at build time (scripts/build-validators.mjs) and those compiled at run time for the
 * older layouts (src/record/validate.ts).
 */

/** RFC 3339 date-time, as `Date.prototype.toISOString` writes it and people type it. */
const DATE_TIME = /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}(?:\.\d+)?(?:Z|[+-]\d{2}:\d{2})$/i;

/** Each format's check, by the name the schema uses. */
export const FORMATS = {
  'date-time': (text: string): boolean => DATE_TIME.test(text) && !Number.isNaN(Date.parse(text))
};
