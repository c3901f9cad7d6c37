// The public names of this folder: a deliberate list (docs/api.md lists them; tests/api-surface.test.ts
// checks the two agree). Everything else here is internal: import it from its own file.
export { CORRECTION_MAX_ABS_SUM, DEFAULT_MAX_CORRECTION_TAPS, validateCorrection } from './correction.js';
export { createMultitoneSource, MAX_MULTITONE_TONES } from './multitone-source.js';
export { predictCarrierDbc, predictOutputPeaks, predictSuppressionDb, } from './prediction.js';
export { createNetworkRuntime, createQuadratureGenerator, } from './quadrature-generator.js';
export { createAnalyticSource, createSignalSource, signalLevels, validateSignalSpec, } from './sources.js';
