/**
 * Record ids: `pd-` and lower-case letters or digits. The strict form is what makes it safe to
 * write an id into a code cell (`polyadic.show("pd-…")`): nothing else from the metadata is
 * ever pasted into code, and an id is checked before it is.
 */

import { PolyadicError } from '../engine/errors';
import { RECORD_ID_PATTERN } from './schema';

/** Characters of the random part of a new id. */
const ALPHABET = '0123456789abcdefghijklmnopqrstuvwxyz';

/** Length of the random part of a new id: 16 characters of 36, about 82 bits. */
export const NEW_ID_LENGTH = 16;

/** The id pattern as a regular expression. */
export const RECORD_ID_REGEXP = new RegExp(RECORD_ID_PATTERN);

/** Whether a value is a valid record id. */
export function isRecordId(value: unknown): value is string {
  return typeof value === 'string' && RECORD_ID_REGEXP.test(value);
}

/** A new random record id, from `crypto.getRandomValues` (browser and Node alike). */
export function newRecordId(): string {
  let out = 'pd-';
  const bytes = new Uint8Array(32);
  while (out.length < 3 + NEW_ID_LENGTH) {
    globalThis.crypto.getRandomValues(bytes);
    for (let i = 0; i < bytes.length && out.length < 3 + NEW_ID_LENGTH; i++) {
      // 252 = 7 · 36: dropping 252…255 keeps every character equally likely
      if (bytes[i] < 252) {
        out += ALPHABET[bytes[i] % 36];
      }
    }
  }
  return out;
}

/**
 * The source of a analysis cell showing a record: `import polyadic` and
 * `polyadic.show("<id>")`. Refuses anything but a valid id, so no metadata text reaches code.
 */
export function showCellSource(id: string): string {
  if (!isRecordId(id)) {
    throw new PolyadicError(
      'input',
      `'${String(id).slice(0, 80)}' is not a record id (pd- followed by 8 to 32 lower-case letters or digits); ` +
        'no cell was inserted.',
      { value: String(id).slice(0, 80) }
    );
  }
  // JSON.stringify quotes a string the way Python reads it; the pattern already excludes quotes
  return `import polyadic\npolyadic.show(${JSON.stringify(id)})`;
}
