/** Node-only entry: files, WAV, streams. */
export * from '../index.js';
