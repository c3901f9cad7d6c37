export * from './cautions.js';
export * from './complex.js';
export * from './errors.js';
export * from './rng.js';
export * from './trims.js';
export * from './units.js';
export * from './validate.js';
export * from './windows.js';
