// The public names of this folder: a deliberate list (docs/api.md lists them; tests/api-surface.test.ts
// checks the two agree). Everything else here is internal: import it from its own file.
export { analogAllpassPrototype, designAllpassPair, MAX_DESIGN_TARGET_DB, } from './allpass-pair.js';
export { allpassBranchGroupDelay, analyzeNetwork, bandFigures, firGroupDelay, networkCost, predictFigures, } from './analysis.js';
export { designCorrection, equivalentTrims, evaluateImbalanceModel, } from './correction.js';
export { designNetwork } from './design-network.js';
export { designHilbertFir, hilbertRippleFromSuppression, hilbertSuppressionFromRipple, } from './hilbert-fir.js';
export { evaluateBranches, gainErrorDbFromResponse, phaseErrorDegFromResponse, suppressionFromResponse, validateNetwork, } from './network.js';
export { COEFFICIENT_FORMATS, quantizationReport, quantizeCoefficient, quantizeNetwork, } from './quantize.js';
export { remez } from './remez.js';
