export * from './analyzer.js';
export * from './exciter.js';
export * from './model.js';
export * from './response.js';
export * from './trim-mismatch.js';
