/**
 * The front-end side of the kernel bridge: connector, request channel, decoding, encoding,
 * protocol with its guards, and errors.
 */
export * from './channel';
export * from './connector';
export * from './decode';
export * from './encode';
export * from './errors';
export * from './guards';
export * from './kernel';
export * from './protocol';
export * from './registry';
