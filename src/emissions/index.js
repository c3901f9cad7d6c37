// The public names of this folder: a deliberate list (docs/api.md lists them; tests/api-surface.test.ts
// checks the two agree). The filter prototype tables, series rounding and order choice are internal.
export { checkEmissions, } from './check.js';
export { DEFAULT_OOB_PRACTICE_DBC, emissionBands, RULE_ALIASES, RULE_SETS, ruleSetName, } from './limits.js';
export { designOutputFilter, validateOutputFilter, } from './output-filter.js';
export { captureProducts, simulateProducts, twoToneProducts, } from './products.js';
export { judgeDrift } from './verify.js';
