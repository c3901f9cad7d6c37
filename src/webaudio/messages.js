import { TRIM_LIMITS } from '../core/trims.js';
/** Name under which the quadrature generator processor is registered. */
export const QUADRATURE_PROCESSOR_NAME = 'orthotone-quadrature';
/** Name under which the capture (recorder) processor is registered. */
export const CAPTURE_PROCESSOR_NAME = 'orthotone-capture';
/** The AudioParams of the quadrature node, all k-rate (one value per 128-frame quantum). */
export const QUADRATURE_PARAMS = Object.freeze([
  { name: 'gainDb', defaultValue: 0, minValue: -TRIM_LIMITS.gainDb, maxValue: TRIM_LIMITS.gainDb },
  { name: 'phaseDeg', defaultValue: 0, minValue: -TRIM_LIMITS.phaseDeg, maxValue: TRIM_LIMITS.phaseDeg },
  {
    name: 'skewSamples',
    defaultValue: 0,
    minValue: -TRIM_LIMITS.skewSamples,
    maxValue: TRIM_LIMITS.skewSamples,
  },
  { name: 'dcI', defaultValue: 0, minValue: -TRIM_LIMITS.dc, maxValue: TRIM_LIMITS.dc },
  { name: 'dcQ', defaultValue: 0, minValue: -TRIM_LIMITS.dc, maxValue: TRIM_LIMITS.dc },
  /** Source level, dB: gain on the node input, or the test source level in dBFS. */
  { name: 'levelDb', defaultValue: -6, minValue: -140, maxValue: 24 },
]);
/** The trim names, in the order of {@link Trims}. */
export const TRIM_NAMES = Object.freeze(['gainDb', 'phaseDeg', 'skewSamples', 'dcI', 'dcQ']);
