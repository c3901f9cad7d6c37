/**
 * Kaiser window and Kaiser's empirical design formulas for windowed FIR filters.
 *
 * References:
 * [1] J. F. Kaiser, "Nonrecursive digital filter design using the I0-sinh window function",
 *     Proc. IEEE Int. Symp. Circuits and Systems, 1974, pp. 20–23.
 * [2] A. V. Oppenheim & R. W. Schafer, Discrete-Time Signal Processing, 2nd ed., §7.5.3
 *     (β formula and order estimate), as reproduced in the scipy documentation of
 *     `scipy.signal.kaiser_beta` / `kaiserord`.
 */
import { OrthotoneError } from '../core/errors.js';
import { requireFinite, requireInteger } from '../core/validate.js';
/**
 * Modified Bessel function of the first kind, order 0, by its power series
 * `I0(x) = Σ ((x/2)^k / k!)²`.
 *
 * Hand-written rather than taken from a library: none of the project's dependencies provides I0,
 * the series is ten lines, converges for every real x (all terms positive, so no cancellation),
 * and for the β values a window uses (0…~40) it needs at most ~60 terms to reach full double
 * precision. Reference: Abramowitz & Stegun 9.6.12.
 * @param x real argument (dimensionless).
 * @throws never
 */
export function besselI0(x) {
  const q = (x * x) / 4;
  let term = 1;
  let sum = 1;
  for (let k = 1; k < 500; k++) {
    term *= q / (k * k);
    sum += term;
    if (term < sum * 1e-17) break;
  }
  return sum;
}
/**
 * Kaiser's β for a given attenuation (stop-band attenuation and pass-band ripple, in dB):
 * `0.1102·(A − 8.7)` for A > 50; `0.5842·(A − 21)^0.4 + 0.07886·(A − 21)` for 21 < A ≤ 50;
 * 0 otherwise [2].
 * @param attenuationDb attenuation A in dB, positive (A = −20·log10 δ).
 * @returns β, dimensionless.
 * @throws {OrthotoneError} INVALID_ARGUMENT when A is not a finite number.
 * @example
 * kaiserBeta(65); // 6.20426 (scipy documentation example)
 */
export function kaiserBeta(attenuationDb) {
  const a = requireFinite('attenuationDb', attenuationDb, 'give the attenuation in dB, e.g. 60');
  if (a > 50) return 0.1102 * (a - 8.7);
  if (a > 21) return 0.5842 * (a - 21) ** 0.4 + 0.07886 * (a - 21);
  return 0;
}
/**
 * Kaiser's estimate of the window length for a windowed FIR design [1, 2]:
 * `numtaps = ⌈(A − 7.95) / (2.285·π·Δ) + 1⌉`, and β from {@link kaiserBeta}.
 * Kaiser's paper (and scipy's `kaiserord`) use 7.95; Oppenheim & Schafer print the rounded 8.
 * @param attenuationDb attenuation A in dB, at least 8 (the formula is not valid below).
 * @param transitionWidth transition width Δ normalised to Nyquist = 1 (scipy's convention), 0 < Δ ≤ 1.
 * @returns `{ numtaps, beta }`.
 * @throws {OrthotoneError} INVALID_ARGUMENT when A < 8 or Δ is outside (0, 1].
 * @example
 * kaiserOrder(65, 24 / 500); // { numtaps: 167, beta: 6.20426 } (scipy documentation example)
 */
export function kaiserOrder(attenuationDb, transitionWidth) {
  const a = requireFinite('attenuationDb', attenuationDb, 'give the attenuation in dB, e.g. 60');
  if (a < 8) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `attenuationDb ${a} is below 8 dB, where Kaiser's length formula is not valid: ask for at least 8 dB`,
      attenuationDb,
    );
  }
  const w = requireFinite('transitionWidth', transitionWidth, 'give a width from 0 to 1 (Nyquist = 1)');
  if (w <= 0 || w > 1) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `transitionWidth ${w} must be greater than 0 and at most 1 (normalised to Nyquist = 1)`,
      transitionWidth,
    );
  }
  const numtaps = Math.ceil((a - 7.95) / (2.285 * Math.PI * w) + 1);
  return { numtaps, beta: kaiserBeta(a) };
}
/**
 * Attenuation that a Kaiser-windowed design of `numtaps` taps and transition width Δ achieves by
 * Kaiser's formula, the inverse of {@link kaiserOrder}: `A = 2.285·(numtaps − 1)·π·Δ + 7.95` [1].
 * @param numtaps window length, taps.
 * @param transitionWidth Δ normalised to Nyquist = 1.
 * @returns A in dB.
 * @throws never
 */
export function kaiserAttenuation(numtaps, transitionWidth) {
  return 2.285 * (numtaps - 1) * Math.PI * transitionWidth + 7.95;
}
/**
 * The symmetric Kaiser window `w[n] = I0(β·√(1 − ((n − α)/α)²)) / I0(β)`, α = (length − 1)/2 [1].
 * @param length number of points, 1 … 1 048 576.
 * @param beta shape parameter β ≥ 0 (0 gives a rectangular window).
 * @returns the window, peak 1 at the centre.
 * @throws {OrthotoneError} INVALID_ARGUMENT for a bad length or a negative / non-finite β.
 */
export function kaiserWindow(length, beta) {
  const n = requireInteger('length', length, 1, 1 << 20);
  const b = requireFinite('beta', beta, 'use β ≥ 0, e.g. kaiserBeta(60)');
  if (b < 0) {
    throw new OrthotoneError('INVALID_ARGUMENT', `beta ${b} must be 0 or greater`, beta);
  }
  const w = new Float64Array(n);
  if (n === 1) {
    w[0] = 1;
    return w;
  }
  const alpha = (n - 1) / 2;
  const norm = besselI0(b);
  for (let k = 0; k <= (n - 1) >> 1; k++) {
    const r = (k - alpha) / alpha;
    const v = besselI0(b * Math.sqrt(Math.max(0, 1 - r * r))) / norm;
    w[k] = v;
    w[n - 1 - k] = v;
  }
  return w;
}
