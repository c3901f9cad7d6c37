// The public names of this folder: a deliberate list (docs/api.md lists them; tests/api-surface.test.ts
// checks the two agree). Everything else here is internal: import it from its own file.
export { cautionsText, TRANSMIT_CAUTIONS } from './cautions.js';
export { isOrthotoneError, OrthotoneError } from './errors.js';
export { createRng } from './rng.js';
export { TRIM_LIMITS, validateTrims, ZERO_TRIMS } from './trims.js';
export { ampToDb, dbfsToPeak, dbToAmp, dbToPow, degToRad, imageRejectionDb, peakToDbfs, powToDb, radToDeg, } from './units.js';
export { createWindow, WINDOW_NAMES, windowFigures } from './windows.js';
