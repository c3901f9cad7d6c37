// The public names of this folder: a deliberate list (docs/api.md lists them; tests/api-surface.test.ts
// checks the two agree). Everything else here is internal: import it from its own file.
export { createAnalyzer, DEFAULT_ANALYZER_OPTIONS } from './analyzer.js';
export { createVirtualExciter, DEFAULT_EXCITER_OPTIONS, } from './exciter.js';
export { DEFAULT_TOLERANCE, drawDevice, drawDevices, HOMEBREW_BENCH_SEED, homebrewBenchDevice, IDEAL_MODEL, TOLERANCE_PRESETS, validateModel, validateTolerance, } from './model.js';
export { predictedSuppression, toneResponse } from './response.js';
export { applyTrimMismatch, drawTrimMismatch, EXACT_TRIMS, MISMATCH_BENCH_RANGES, } from './trim-mismatch.js';
