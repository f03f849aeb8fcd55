/**
 * The JSON Schema (draft 2020-12) of the record that Polyadic keeps in a notebook's metadata
 * under the key `polyadic`. Its one source is the file src/record/record.schema.json (for people
 * and tools outside the extension too; the npm package ships it as lib/record/record.schema.json);
 * this module imports it, so the front end and the CLI bundle that very document.
 */
import RECORD_SCHEMA_FILE from './record.schema.json';

/** The record schema, version 2 (src/record/layouts/ keeps the older layouts for migration). */
export const RECORD_SCHEMA: Readonly<Record<string, unknown>> = RECORD_SCHEMA_FILE;

/** The `$id` of the record schema, version 2. */
export const RECORD_SCHEMA_ID: string = RECORD_SCHEMA_FILE.$id;

/** Pattern of a record id: `pd-` and 8 to 32 lower-case letters or digits. */
export const RECORD_ID_PATTERN: string = RECORD_SCHEMA_FILE.$defs.recordId.pattern;
