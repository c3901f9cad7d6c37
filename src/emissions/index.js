export * from './check.js';
export * from './limits.js';
export * from './output-filter.js';
export * from './products.js';
export * from './verify.js';
