/**
 * The one evaluator of a network's frequency response from its coefficients: the FIR response
 * (Hilbert FIRs, correction filters) and the all-pass branch response. Every figure in the
 * library (`evaluateBranches`, `analyzeNetwork`, `predicted`, the FIR designer's own evaluation)
 * goes through these two functions, so two parts of the library cannot disagree about a design.
 * Also the one golden-section search used to refine extrema between grid points.
 *
 * scipy.signal has the same shape: one `freqz` that its designs' tests and its users call.
 */
import type { Complex } from '../core/complex.js';
import type { AllpassBranch } from './network.js';

/**
 * Response of an FIR relative to its centre, `Σ h_k·e^{−jω(k−D)}` with D = (N − 1)/2, written into
 * `out[at]` (real part) and `out[at + 1]` (imaginary part). The common factor e^{−jωD} is left out
 * (multiply by it for the response from tap 0), which changes no ratio between branches delayed
 * alike. Summed outward from the centre with a rotating phasor re-anchored every 64 steps, so the
 * error grows as k·ε (not as the 1/sin ω of a Chebyshev recurrence). For an even length D is a half
 * sample and the taps pair up around it the same way.
 * @param taps FIR taps (any length ≥ 1).
 * @param w angular frequency, rad/sample.
 * @param out receives the real and imaginary parts (caller-owned, no allocation).
 * @param at index of the real part in `out` (default 0).
 * Method: direct evaluation of the DTFT on the unit circle (Oppenheim & Schafer, Discrete-Time
 * Signal Processing, 3rd ed., §2.7).
 * @throws never (taps are not checked; non-finite taps give non-finite results).
 * @internal
 */
export function firResponseInto(taps: ArrayLike<number>, w: number, out: Float64Array, at = 0): void {
  const n = taps.length;
  const half = n >> 1;
  let re = 0;
  let im = 0;
  // Odd length: the centre tap at offset 0; even: the pairs sit at ±(j − ½).
  const odd = n % 2 === 1;
  if (odd) re = taps[half]!;
  const c1 = Math.cos(w);
  const s1 = Math.sin(w);
  let c = odd ? 1 : Math.cos(w / 2);
  let s = odd ? 0 : -Math.sin(w / 2);
  for (let j = 1; j <= half; j++) {
    const cn = c * c1 - s * s1;
    s = s * c1 + c * s1;
    c = cn;
    if (j % 64 === 0) {
      // re-anchor the rotating phasor now and then
      const x = odd ? j * w : (j - 0.5) * w;
      c = Math.cos(x);
      s = Math.sin(x);
    }
    const hp = taps[odd ? half + j : half + j - 1]!;
    const hm = taps[half - j]!;
    re += (hp + hm) * c;
    im -= (hp - hm) * s;
  }
  out[at] = re;
  out[at + 1] = im;
}

/**
 * {@link firResponseInto} returning a new complex number: `Σ h_k·e^{−jω(k−D)}`, D = (N − 1)/2.
 * @param taps FIR taps.
 * @param w angular frequency, rad/sample.
 * @returns the response relative to the centre delay.
 * Method: direct evaluation of the DTFT (Oppenheim & Schafer §2.7).
 * @throws never
 * @internal
 */
export function firResponse(taps: ArrayLike<number>, w: number): Complex {
  const buf = new Float64Array(2);
  firResponseInto(taps, w, buf, 0);
  return { re: buf[0]!, im: buf[1]! };
}

/**
 * Response of one all-pass branch `z^−delay·Π (a + z^−m)/(1 + a·z^−m)` at ω, written into
 * `out[at]`, `out[at + 1]` (caller-owned, no allocation).
 * @param b the branch (delay in samples, sections of order m = 1 or 2).
 * @param w angular frequency, rad/sample.
 * @param out receives the real and imaginary parts.
 * @param at index of the real part in `out` (default 0).
 * Method: direct evaluation of the transfer function on the unit circle (DESIGN.md §3; Regalia,
 * Mitra & Vaidyanathan, "The digital all-pass filter", Proc. IEEE 76(1), 1988).
 * @throws never (the branch is not checked; give one that passed `validateNetwork`).
 * @internal
 */
export function allpassBranchResponseInto(b: AllpassBranch, w: number, out: Float64Array, at = 0): void {
  let re = Math.cos(b.delay * w);
  let im = -Math.sin(b.delay * w);
  for (const s of b.sections) {
    // (a + z^-m)/(1 + a z^-m) with z^-m = c − j·s
    const c = Math.cos(s.order * w);
    const sn = -Math.sin(s.order * w);
    const nr = s.a + c;
    const dr = 1 + s.a * c;
    const di = s.a * sn;
    const d = dr * dr + di * di;
    const hr = (nr * dr + sn * di) / d;
    const hi = (sn * dr - nr * di) / d;
    const r = re * hr - im * hi;
    im = re * hi + im * hr;
    re = r;
  }
  out[at] = re;
  out[at + 1] = im;
}

/**
 * Golden-section search for a maximum of `fn` in [a, b]: narrows the bracket by 1/φ per step, for
 * `iterations` steps or until it is narrower than `tolerance`·|b|.
 * @param fn the function (any units).
 * @param a lower end of the bracket.
 * @param b upper end of the bracket.
 * @param iterations most steps (default 40).
 * @param tolerance relative bracket width to stop at (default 1e-13).
 * @returns the larger of the two final interior values and where it occurs.
 * Method: golden-section search (J. Kiefer, "Sequential minimax search for a maximum",
 * Proc. Amer. Math. Soc. 4:502, 1953).
 * @throws never itself; an exception from `fn` is passed on.
 * @internal
 */
export function goldenSectionMax(
  fn: (x: number) => number,
  a: number,
  b: number,
  iterations = 40,
  tolerance = 1e-13,
): { value: number; at: number } {
  const invPhi = (Math.sqrt(5) - 1) / 2;
  let x1 = b - invPhi * (b - a);
  let x2 = a + invPhi * (b - a);
  let f1 = fn(x1);
  let f2 = fn(x2);
  for (let it = 0; it < iterations && b - a > tolerance * Math.abs(b); it++) {
    if (f1 < f2) {
      a = x1;
      x1 = x2;
      f1 = f2;
      x2 = a + invPhi * (b - a);
      f2 = fn(x2);
    } else {
      b = x2;
      x2 = x1;
      f2 = f1;
      x1 = b - invPhi * (b - a);
      f1 = fn(x1);
    }
  }
  return f2 > f1 ? { value: f2, at: x2 } : { value: f1, at: x1 };
}
