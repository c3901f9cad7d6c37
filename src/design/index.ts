// The public names of this folder: a deliberate list (docs/api.md lists them; tests/api-surface.test.ts
// checks the two agree). Everything else here is internal: import it from its own file.

export {
  type AllpassPairDesign,
  type AllpassPairSpec,
  type AnalogAllpassPrototype,
  analogAllpassPrototype,
  designAllpassPair,
  MAX_DESIGN_TARGET_DB,
} from './allpass-pair.js';
export {
  type AnalyzeOptions,
  allpassBranchGroupDelay,
  analyzeNetwork,
  type BandFigures,
  bandFigures,
  firGroupDelay,
  type NetworkAnalysis,
  type NetworkCoefficients,
  networkCost,
  predictFigures,
} from './analysis.js';
export {
  analyzeKitArithmetic,
  type KitArithmeticAnalysis,
  type KitOperations,
} from './arithmetic-analysis.js';
export {
  designCorrection,
  equivalentTrims,
  evaluateImbalanceModel,
  type ImbalanceModel,
} from './correction.js';
export { type DesignCandidate, designNetwork, type NetworkSpec } from './design-network.js';
export {
  designHilbertFir,
  type HilbertFirDesign,
  type HilbertFirSpec,
  hilbertRippleFromSuppression,
  hilbertSuppressionFromRipple,
} from './hilbert-fir.js';
export {
  KIT_ARITHMETICS,
  KIT_WORD_LENGTHS,
  type KitArithmetic,
  type KitBranch,
  type KitPlan,
  type KitTrimWords,
  type KitWordLengths,
  kitPlan,
  kitTrimWords,
} from './kit-arithmetic.js';
export {
  type AllpassBranch,
  type AllpassNetwork,
  type AllpassSection,
  type BranchResponse,
  evaluateBranches,
  type FirNetwork,
  gainErrorDbFromResponse,
  type Network,
  type NetworkCost,
  type NetworkSpecEcho,
  type PredictedFigures,
  phaseErrorDegFromResponse,
  suppressionFromResponse,
  validateNetwork,
} from './network.js';
export {
  COEFFICIENT_FORMATS,
  type CoefficientFormat,
  type QuantizationFigures,
  quantizationReport,
  quantizeCoefficient,
  quantizeNetwork,
} from './quantize.js';
export { type RemezOptions, type RemezResult, remez } from './remez.js';
