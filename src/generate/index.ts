// The public names of this folder: a deliberate list (docs/api.md lists them; tests/api-surface.test.ts
// checks the two agree). Everything else here is internal: import it from its own file.

export { CORRECTION_MAX_ABS_SUM, DEFAULT_MAX_CORRECTION_TAPS, validateCorrection } from './correction.js';
export { KitModel, renderKit } from './fixed-point.js';
export { createMultitoneSource, MAX_MULTITONE_TONES, type MultitoneSource } from './multitone-source.js';
export type { NetworkRuntime } from './network-runtime.js';
export {
  type PredictedPeaks,
  predictCarrierDbc,
  predictOutputPeaks,
  predictSuppressionDb,
} from './prediction.js';
export {
  createNetworkRuntime,
  createQuadratureGenerator,
  type GeneratorArithmetic,
  type QuadratureGenerator,
  type QuadratureGeneratorOptions,
} from './quadrature-generator.js';
export {
  type AnalyticSource,
  createAnalyticSource,
  createSignalSource,
  type SignalLevels,
  type SignalSource,
  type SignalSpec,
  signalLevels,
  validateSignalSpec,
} from './sources.js';
export type { GeneratorStats, Sideband, TrimStageOptions } from './trim-stage.js';
