export * from './allpass-pair.js';
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
export * from './arithmetic-analysis.js';
export * from './design-network.js';
export * from './elliptic.js';
export * from './hilbert-fir.js';
export * from './kaiser.js';
export * from './kit-arithmetic.js';
export * from './network.js';
export * from './quantize.js';
export * from './remez.js';
