/** The front-end side of the kernel bridge: connector, decoding, encoding, protocol and errors. */
export * from './connector';
export * from './decode';
export * from './encode';
export * from './errors';
export * from './kernel';
export * from './protocol';
export * from './registry';
