export * from './hilbert-fir.js';
export * from './kaiser.js';
export * from './network.js';
export * from './remez.js';
