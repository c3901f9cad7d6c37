/**
 * Trims applied after the 90° network (DESIGN.md §4), shared by generate/, simulate/ and calibrate/.
 * Order: (1) gain and phase on Q: `Q' = 10^(gainDb/20)·(Q·cos φ + I·sin φ)`, `I' = I`;
 * (2) skew: Q' delayed by `skewSamples` relative to I'; (3) DC added last.
 */
import { OrthotoneError } from './errors.js';
import { requireFinite } from './validate.js';
/** All-zero trims. */
export const ZERO_TRIMS = Object.freeze({
  gainDb: 0,
  phaseDeg: 0,
  skewSamples: 0,
  dcI: 0,
  dcQ: 0,
});
/** Limits enforced by {@link validateTrims}. */
export const TRIM_LIMITS = Object.freeze({
  gainDb: 6,
  phaseDeg: 45,
  skewSamples: 16,
  dc: 1,
});
/**
 * Validates a partial trim set: every given value finite, |gainDb| ≤ 6 dB, |phaseDeg| ≤ 45°,
 * |skewSamples| ≤ 16, |dcI|, |dcQ| ≤ 1 full scale.
 * @throws {OrthotoneError} INVALID_ARGUMENT naming the trim, its value and the allowed range.
 */
export function validateTrims(t) {
  const check = (name, lim, unit) => {
    const v = t[name];
    if (v === undefined) return;
    requireFinite(name, v, `use a value from ${-lim} to ${lim} ${unit}`);
    if (Math.abs(v) > lim) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        `${name} ${v} ${unit} is out of range: use a value from ${-lim} to ${lim} ${unit}`,
        v,
      );
    }
  };
  check('gainDb', TRIM_LIMITS.gainDb, 'dB');
  check('phaseDeg', TRIM_LIMITS.phaseDeg, 'degrees');
  check('skewSamples', TRIM_LIMITS.skewSamples, 'samples');
  check('dcI', TRIM_LIMITS.dc, 'full scale');
  check('dcQ', TRIM_LIMITS.dc, 'full scale');
  return t;
}
