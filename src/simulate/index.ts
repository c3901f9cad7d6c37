// The public names of this folder: a deliberate list (docs/api.md lists them; tests/api-surface.test.ts
// checks the two agree). Everything else here is internal: import it from its own file.

export { type Analyzer, type AnalyzerOptions, createAnalyzer, DEFAULT_ANALYZER_OPTIONS } from './analyzer.js';
export {
  createVirtualExciter,
  DEFAULT_EXCITER_OPTIONS,
  type VirtualExciter,
  type VirtualExciterOptions,
} from './exciter.js';
export {
  DEFAULT_TOLERANCE,
  drawDevice,
  drawDevices,
  type ExciterModel,
  type FourPhases,
  HOMEBREW_BENCH_SEED,
  homebrewBenchDevice,
  IDEAL_MODEL,
  TOLERANCE_PRESETS,
  type TolerancePreset,
  type TolerancePresetName,
  validateModel,
  validateTolerance,
} from './model.js';
export { predictedSuppression, type ToneResponse, toneResponse } from './response.js';
export {
  applyTrimMismatch,
  drawTrimMismatch,
  EXACT_TRIMS,
  MISMATCH_BENCH_RANGES,
  type TrimMismatch,
  type TrimMismatchRanges,
} from './trim-mismatch.js';
