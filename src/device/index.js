export * from './link.js';
export * from './protocol.js';
export * from './streams.js';
