/**
 * Trims applied after the 90° network (DESIGN.md §4), shared by generate/, simulate/ and calibrate/.
 * Order: (1) gain and phase on Q: `Q' = 10^(gainDb/20)·(Q·cos φ + I·sin φ)`, `I' = I`;
 * (2) skew: Q' delayed by `skewSamples` relative to I'; (3) DC added last.
 */
import { OrthotoneError } from './errors.js';
import { requireFinite } from './validate.js';

/** The trims applied after the 90° network, in the order and units of this file's header. */
export interface Trims {
  /** Q gain relative to I, dB. */
  gainDb: number;
  /** Phase trim φ, degrees: `Q' = Q·cos φ + I·sin φ`. */
  phaseDeg: number;
  /** Q delay relative to I, samples (fractional, may be negative). */
  skewSamples: number;
  /** DC added to I, full-scale units. */
  dcI: number;
  /** DC added to Q, full-scale units. */
  dcQ: number;
}

/** All-zero trims. */
export const ZERO_TRIMS: Readonly<Trims> = Object.freeze({
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
 * A frequency-dependent correction realised as a widely-linear FIR pair (Anttila, Valkama &
 * Renfors, IEEE TCAS-II, Apr 2008), applied between trim steps 1 and 3:
 * `Q_c[n] = Σ qFromQ[k]·Q'[n−k] + Σ qFromI[k]·I'[n−k]`, and I' delayed by `(length−1)/2` samples
 * so both stay aligned. Both arrays have the same odd length. The identity correction is
 * `qFromQ = [0,…,1,…,0]` (centre tap 1) and `qFromI` all zero.
 */
export interface Correction {
  /** Taps from Q' to the corrected Q (odd length). */
  qFromQ: number[];
  /** Taps from I' to the corrected Q (same odd length). */
  qFromI: number[];
}

/**
 * Validates a partial trim set: every given value finite, |gainDb| ≤ 6 dB, |phaseDeg| ≤ 45°,
 * |skewSamples| ≤ 16, |dcI|, |dcQ| ≤ 1 full scale.
 * @throws {OrthotoneError} INVALID_ARGUMENT naming the trim, its value and the allowed range.
 */
export function validateTrims(t: Partial<Trims>): Partial<Trims> {
  const check = (name: keyof Trims, lim: number, unit: string): void => {
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
