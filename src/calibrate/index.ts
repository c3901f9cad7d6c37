// The public names of this folder: a deliberate list (docs/api.md lists them; tests/api-surface.test.ts
// checks the two agree). Everything else here is internal: import it from its own file.
// The correction filter's design (designCorrection, equivalentTrims, ...) is public from design/.

export {
  type AskTell,
  type BaselineOptions,
  createCoordinateDescent,
  createNelderMead,
} from './baselines.js';
export { type CarrierCalibrationOptions, calibrateCarrier, carrierAxes } from './carrier.js';
export {
  type BothLevels,
  type CombinedCalibrationOptions,
  type CombinedCalibrationResult,
  type CombinedSeeker,
  calibrateSidebandAndCarrier,
  createCombinedSeeker,
} from './combined.js';
export type { Diagnosis, DiagnosisCode } from './diagnosis.js';
export {
  calibrateMultitone,
  createMultitoneSeeker,
  fitImbalanceModel,
  type MultitoneOptions,
  type MultitoneResult,
  type MultitoneSeeker,
  type MultitoneSeekerOptions,
  type MultitoneVerification,
  type ToneFit,
  type ToneOptimum,
} from './multitone.js';
export {
  type AxisStatus,
  createNullSeeker,
  type NullSeeker,
  type NullSeekerOptions,
  type NullSeekerState,
  type ReadingRole,
  restoreNullSeeker,
  type SeekerBest,
  type SeekerEstimate,
  type SeekerModel,
  type SeekerReading,
  type StopReason,
} from './null-seeker.js';
export {
  type CalibrationProfile,
  createProfile,
  type ProfileInput,
  type ProfileReading,
  type ProfileResults,
  validateProfile,
} from './profile.js';
export type { NullSurface } from './quadratic-fit.js';
export { type RunSeekerOptions, runNullSeeker, type SeekerProgress } from './run-null-seeker.js';
export {
  type AnalyzerLike,
  analyzerSource,
  functionSource,
  type LiveLevels,
  liveGuard,
  mapSource,
  PASS_THROUGH,
  type ReadingContext,
  type ReadingSource,
  runSession,
  type SavedSeeker,
  type Seeker,
  type SessionBest,
  type SessionCommand,
  type SessionOptions,
  type SessionResult,
  type SessionStep,
  type TrimApplier,
} from './session.js';
export { calibrateSideband, SIDEBAND_AXES, sidebandAxes, sidebandPoint, sidebandTrims } from './sideband.js';
export {
  type CalibrationStep,
  createTrimSeeker,
  type HardwareTrimOptions,
  type TrimAxes,
  type TrimCalibrationOptions,
  type TrimCalibrationResult,
  type TrimName,
} from './trim-calibration.js';
