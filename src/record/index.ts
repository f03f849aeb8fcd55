/** The record of analyses in notebook metadata: types, schema, validation, migration, fingerprint, store. */

export * from './types';
export { RECORD_ID_PATTERN, RECORD_SCHEMA, RECORD_SCHEMA_ID } from './schema';
export * from './validate';
export * from './migrate';
export * from './fingerprint';
export * from './scan-fingerprint';
export * from './ids';
export * from './summary';
export * from './markdown';
export * from './recordFromResult';
export * from './settings';
export * from './store';
export * from './robustness';
