/**
 * orthotone: design, run, measure and calibrate 90° audio networks for phasing-method SSB and
 * I/Q exciters. Browser-safe entry (no Node APIs); files, WAV and streams live in `orthotone/node`.
 */
export * from './calibrate/index.js';
export * from './core/index.js';
export * from './design/index.js';
export * from './device/index.js';
export * from './emissions/index.js';
export * from './export/index.js';
export * from './generate/index.js';
export * from './measure/index.js';
export * from './simulate/index.js';
export * from './webaudio/index.js';
