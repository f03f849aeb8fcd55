/** Name and version of the engine, as results and records report them. */

/** Engine name written into every result and record. */
export const ENGINE_NAME = 'polyadic';

/** Engine version; bump it when a result for the same input and settings may change. */
export const ENGINE_VERSION = '0.1.1';
