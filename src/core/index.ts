// The public names of this folder: a deliberate list (docs/api.md lists them; tests/api-surface.test.ts
// checks the two agree). Everything else here is internal: import it from its own file.

export { cautionsText, TRANSMIT_CAUTIONS } from './cautions.js';
export type { Complex } from './complex.js';
export { isOrthotoneError, OrthotoneError, type OrthotoneErrorCode } from './errors.js';
export { createRng, type Rng } from './rng.js';
export { type Correction, TRIM_LIMITS, type Trims, validateTrims, ZERO_TRIMS } from './trims.js';
export {
  ampToDb,
  dbfsToPeak,
  dbToAmp,
  dbToPow,
  degToRad,
  imageRejectionDb,
  peakToDbfs,
  powToDb,
  radToDeg,
} from './units.js';
export { createWindow, WINDOW_NAMES, type WindowFigures, type WindowName, windowFigures } from './windows.js';
