export * from './fft.js';
export * from './leakage.js';
export * from './sideband.js';
export * from './signal.js';
export * from './spectrum.js';
export * from './tones.js';
export * from './two-tone.js';
