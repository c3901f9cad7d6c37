/** Node-only entry: files, WAV, streams. */
export * from '../index.js';
export * from './bridge.js';
export * from './files.js';
export * from './iq-stream.js';
export * from './serial-transport.js';
export * from './wav.js';
