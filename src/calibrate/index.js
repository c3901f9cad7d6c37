// The public names of this folder: a deliberate list (docs/api.md lists them; tests/api-surface.test.ts
// checks the two agree). Everything else here is internal: import it from its own file.
// The correction filter's design (designCorrection, equivalentTrims, ...) is public from design/.
export { createCoordinateDescent, createNelderMead, } from './baselines.js';
export { calibrateCarrier, carrierAxes } from './carrier.js';
export { calibrateSidebandAndCarrier, createCombinedSeeker, } from './combined.js';
export { calibrateMultitone, createMultitoneSeeker, fitImbalanceModel, } from './multitone.js';
export { createNullSeeker, restoreNullSeeker, } from './null-seeker.js';
export { createProfile, validateProfile, } from './profile.js';
export { runNullSeeker } from './run-null-seeker.js';
export { analyzerSource, functionSource, mapSource, PASS_THROUGH, runSession, } from './session.js';
export { calibrateSideband, SIDEBAND_AXES, sidebandAxes, sidebandPoint, sidebandTrims } from './sideband.js';
export { createTrimSeeker, } from './trim-calibration.js';
