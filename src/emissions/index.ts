// The public names of this folder: a deliberate list (docs/api.md lists them; tests/api-surface.test.ts
// checks the two agree). The filter prototype tables, series rounding and order choice are internal.
export {
  checkEmissions,
  type EmissionCheck,
  type EmissionCheckOptions,
  type EmissionItem,
  type EmissionProduct,
} from './check.js';
export {
  DEFAULT_OOB_PRACTICE_DBC,
  type EmissionBands,
  type EmissionDomain,
  emissionBands,
  type LimitContext,
  type LimitReference,
  type ResolvedLimit,
  RULE_ALIASES,
  RULE_SETS,
  type RuleSet,
  ruleSetName,
} from './limits.js';
export {
  designOutputFilter,
  type FilterPoint,
  type LadderElement,
  type LadderResponse,
  type OutputFilter,
  type OutputFilterSpec,
  type ValueSeries,
  validateOutputFilter,
} from './output-filter.js';
export {
  captureProducts,
  type SimulateProductsOptions,
  simulateProducts,
  twoToneProducts,
} from './products.js';
export { judgeDrift, type VerifyQuantity, type VerifyReading, type VerifyResult } from './verify.js';
