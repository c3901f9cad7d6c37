/**
 * Checks for the frequency-dependent correction (a widely-linear FIR pair, `Correction` in
 * src/core/trims.ts; Anttila, Valkama & Renfors, IEEE TCAS-II, Apr 2008) before a generator runs it.
 */
import { OrthotoneError } from '../core/errors.js';
/** Default largest correction length a generator preallocates, taps (odd). */
export const DEFAULT_MAX_CORRECTION_TAPS = 63;
/**
 * Largest allowed `Σ|qFromQ| + Σ|qFromI|`. A correction for real imbalance is close to the identity
 * (sum ≈ 1); a much larger sum means a fitting error and would drive the output far over full scale.
 */
export const CORRECTION_MAX_ABS_SUM = 16;
/**
 * Validates a correction against a generator's preallocated length.
 * @param c the correction: `qFromQ`, `qFromI` of the same odd length.
 * @param maxTaps the generator's `maxCorrectionTaps`.
 * @returns `c`, unchanged.
 * @throws {OrthotoneError} INVALID_ARGUMENT naming the field and the fix when the arrays are missing,
 *   of different or even length, longer than `maxTaps`, hold a non-finite tap, or their absolute
 *   sum exceeds {@link CORRECTION_MAX_ABS_SUM}.
 */
export function validateCorrection(c, maxTaps) {
  const bad = (msg, v) => {
    throw new OrthotoneError('INVALID_ARGUMENT', msg, v);
  };
  if (typeof c !== 'object' || c === null) bad('correction must be { qFromQ, qFromI } or null', c);
  const { qFromQ, qFromI } = c;
  if (!Array.isArray(qFromQ) || !Array.isArray(qFromI)) {
    bad('correction.qFromQ and correction.qFromI must both be arrays of taps');
  }
  if (qFromQ.length !== qFromI.length) {
    bad(
      `correction.qFromQ has ${qFromQ.length} taps but qFromI has ${qFromI.length}: give both the same odd length`,
      qFromI.length,
    );
  }
  const n = qFromQ.length;
  if (n < 1 || n % 2 === 0) bad(`correction length ${n} must be odd (centre tap aligned with I)`, n);
  if (n > maxTaps) {
    bad(
      `correction length ${n} exceeds this generator's maxCorrectionTaps ${maxTaps}: shorten it or create the generator with a larger maxCorrectionTaps`,
      n,
    );
  }
  let sum = 0;
  for (let k = 0; k < n; k++) {
    const a = qFromQ[k];
    const b = qFromI[k];
    if (typeof a !== 'number' || !Number.isFinite(a))
      bad(`correction.qFromQ[${k}] ${String(a)} must be finite`, a);
    if (typeof b !== 'number' || !Number.isFinite(b))
      bad(`correction.qFromI[${k}] ${String(b)} must be finite`, b);
    sum += Math.abs(a) + Math.abs(b);
  }
  if (sum > CORRECTION_MAX_ABS_SUM) {
    bad(
      `correction absolute tap sum ${sum} exceeds ${CORRECTION_MAX_ABS_SUM}: a correction for real imbalance is close to the identity; check the fit`,
      sum,
    );
  }
  return c;
}
