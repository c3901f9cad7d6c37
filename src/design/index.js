export * from './allpass-pair.js';
export {
  allpassBranchGroupDelay,
  analyzeNetwork,
  bandFigures,
  firGroupDelay,
  networkCost,
  predictFigures,
} from './analysis.js';
export * from './design-network.js';
export * from './elliptic.js';
export * from './hilbert-fir.js';
export * from './kaiser.js';
export * from './network.js';
export * from './quantize.js';
export * from './remez.js';
