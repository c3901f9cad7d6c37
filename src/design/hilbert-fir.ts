/**
 * Hilbert-transformer FIR design for the 90° network (DESIGN.md §3, kind "fir"): Q is the FIR, I is
 * a pure delay of (N − 1)/2 samples, and Q lags I by 90° across the band. Type III (odd length,
 * antisymmetric), textbook sign: the ideal response is h(n) = 2/(πn) for odd n, 0 for even n.
 *
 * Two methods:
 * - 'remez' (default): equiripple, Parks–McClellan. When the design band is symmetric about fs/4 the
 *   optimum has every even-offset tap zero (a half-band structure); the zeros are imposed exactly and
 *   only the odd taps are designed, as a type IV problem of half the size on the doubled frequency axis.
 * - 'kaiser': the ideal response truncated by a Kaiser window (always half-band).
 *
 * Every design is evaluated independently of the method (dense FFT grid over the band plus the band
 * edges) and the figures reported are what the taps give, not what was asked for.
 *
 * References:
 * [1] J. H. McClellan, T. W. Parks & L. R. Rabiner, IEEE Trans. Audio Electroacoust. AU-21(6), 1973.
 * [2] A. Reilly, G. Frazer & B. Boashash, "Analytic signal generation: tips and traps", IEEE Trans.
 *     Signal Processing 42(11):3241–3245, 1994 (ideal response, half-band zeros).
 * [3] O. Herrmann, L. R. Rabiner & D. S. K. Chan, "Practical design rules for optimum finite impulse
 *     response low-pass digital filters", Bell Syst. Tech. J. 52(6):769–799, 1973 (length estimate).
 * [4] J. F. Kaiser, Proc. IEEE ISCAS 1974; Oppenheim & Schafer, Discrete-Time Signal Processing §7.5.3.
 */
import FFT from 'fft.js';
import { OrthotoneError } from '../core/errors.js';
import {
  requireBand,
  requireInteger,
  requireOneOf,
  requireRange,
  requireSampleRate,
  withDefaults,
} from '../core/validate.js';
import { kaiserAttenuation, kaiserBeta, kaiserOrder, kaiserWindow } from './kaiser.js';
import { remezExchange } from './remez.js';
import { firResponseInto, goldenSectionMax } from './response.js';

/** Specification of a Hilbert FIR. Give `taps`, `targetDb`, or both. */
export interface HilbertFirSpec {
  /** Sample rate, Hz. */
  sampleRate: number;
  /** Band [lo, hi] in Hz over which Q must lag I by 90° with equal gain; 0 < lo < hi < fs/2. */
  band: [number, number];
  /** 'remez' (equiripple, default) or 'kaiser' (windowed ideal response). */
  method?: 'remez' | 'kaiser';
  /** Filter length, odd (type III). Lengths 4K − 1 use every tap of a half-band design; 4K + 1 carry two zero end taps. */
  taps?: number;
  /** Worst opposite-sideband suppression wanted over the band, dB (10 … 150). */
  targetDb?: number;
  /** Longest length the target search may use (default 4095). */
  maxTaps?: number;
  /**
   * 'halfband': design over the band widened symmetrically about fs/4 ([e, fs/2 − e] with
   * e = min(lo, fs/2 − hi)), so every even-offset tap is exactly zero (half the multiplies) and the
   * gain stays near 1 outside the band too. 'full': a type III design over exactly [lo, hi]; the
   * response outside the band is unconstrained and can rise far above 1 when the band is narrow.
   * 'auto' (default) = 'halfband'. The Kaiser method is always half-band.
   */
  structure?: 'auto' | 'halfband' | 'full';
  /** Remez grid density (default 16). */
  gridDensity?: number;
}

/** A designed Hilbert FIR and its independently evaluated figures. */
export interface HilbertFirDesign {
  /** Q-branch taps, textbook sign (h[c+1] > 0). I is a delay of (taps.length − 1)/2 samples. */
  taps: number[];
  method: 'remez' | 'kaiser';
  /** Number of taps that are exactly 0 (centre tap and, for half-band designs, every even offset). */
  zeroTaps: number;
  /** True when the response is symmetric about fs/4: every even-offset tap is exactly zero. */
  symmetricAboutQuarterRate: boolean;
  /** Worst opposite-sideband suppression over the requested band, dB, evaluated from the taps. */
  worstSuppressionDb: number;
  /** Largest |A(f) − 1| over the requested band, A the Q gain relative to I (phase is exactly 90°). */
  ripple: number;
  /** Remez exchange iterations (method 'remez'). */
  iterations?: number;
  /** Whether the Remez exchange converged (method 'remez'); the figures above hold either way. */
  converged?: boolean;
  /** Kaiser β (method 'kaiser'). */
  beta?: number;
  /** Band the taps were optimised over, Hz (the requested band, or its half-band widening). */
  designBand: [number, number];
  /** Delay of the I branch, samples: (taps.length − 1)/2. */
  delaySamples: number;
  /** Peak Q gain relative to I anywhere from 0 to fs/2, dB (shows out-of-band overshoot). */
  peakGainDb: number;
}

/** Figures of a Hilbert FIR evaluated from its taps. */
export interface HilbertFirEvaluation {
  /** Worst opposite-sideband suppression over the band, dB. */
  worstSuppressionDb: number;
  /** Largest |A − 1| over the band (A: Q gain relative to I, signed). */
  ripple: number;
  /** Peak |Hq/Hi| over 0 … fs/2, dB. */
  peakGainDb: number;
}

const DEFAULTS = Object.freeze({
  method: 'remez' as 'remez' | 'kaiser',
  maxTaps: 4095,
  structure: 'auto' as 'auto' | 'halfband' | 'full',
  gridDensity: 16,
});

/** Largest FIR length designed (the Remez design of a full type III of this size takes seconds). */
export const MAX_TAPS_LIMIT = 16383;

/**
 * Worst opposite-sideband suppression of a Hilbert FIR with amplitude ripple δ and exact 90°:
 * the Q/I gain g lies in [1 − δ, 1 + δ] and suppression is `(1 + g)/|1 − g|` (docs/REFERENCES.md §1 with
 * φ = 0), which is smallest at g = 1 − δ: `20·log10((2 − δ)/δ)` dB. (At g = 1 + δ it is
 * `20·log10((2 + δ)/δ)`, about 0.1 dB better at 45 dB.)
 * @param ripple δ, 0 < δ < 1.
 * @returns suppression in dB.
 * @throws never (δ outside (0, 1) gives NaN or a meaningless number: not checked).
 */
export function hilbertSuppressionFromRipple(ripple: number): number {
  return 20 * Math.log10((2 - ripple) / ripple);
}

/**
 * Ripple δ that gives a worst suppression of `suppressionDb` (inverse of
 * {@link hilbertSuppressionFromRipple}): δ = 2/(R + 1), R = 10^(dB/20). `suppressionDb` in dB;
 * δ is a linear amplitude ripple (dimensionless).
 * @throws never
 */
export function hilbertRippleFromSuppression(suppressionDb: number): number {
  return 2 / (10 ** (suppressionDb / 20) + 1);
}

/**
 * Herrmann–Rabiner–Chan length estimate for an equiripple low-pass filter with pass- and stop-band
 * ripples δ1, δ2 and transition width Δf (cycles/sample) [3]:
 * `N ≈ D∞(δ1, δ2)/Δf − f(δ1, δ2)·Δf + 1`. Coefficients as printed in [3] and in Rabiner & Gold,
 * Theory and Application of DSP (1975), eq. 3.69 (transcribed from memory; the estimate only seeds
 * the length search, which evaluates every candidate).
 * @param delta1 pass-band ripple δ1 (linear, dimensionless).
 * @param delta2 stop-band ripple δ2 (linear, dimensionless).
 * @param transitionWidth Δf in cycles/sample (Hz / sample rate).
 * @returns estimated length in taps (not rounded).
 * @throws never
 */
export function herrmannLength(delta1: number, delta2: number, transitionWidth: number): number {
  const l1 = Math.log10(delta1);
  const l2 = Math.log10(delta2);
  const dinf =
    (5.309e-3 * l1 * l1 + 7.114e-2 * l1 - 4.761e-1) * l2 + (-2.66e-3 * l1 * l1 - 5.941e-1 * l1 - 4.278e-1);
  const f = 11.01217 + 0.51244 * (l1 - l2);
  return dinf / transitionWidth - f * transitionWidth + 1;
}

/** Number of largest grid peaks refined by direct evaluation in {@link evaluateHilbertFir}. */
const REFINED_PEAKS = 8;

/** Power of two ≥ n. */
function nextPow2(n: number): number {
  let p = 1;
  while (p < n) p *= 2;
  return p;
}

/** S − jA at angular frequency w (rad/sample), relative to the centre tap (the one FIR evaluator). */
function responseAt(taps: ArrayLike<number>, w: number, buf: Float64Array): { s: number; a: number } {
  firResponseInto(taps, w, buf, 0);
  return { s: buf[0]!, a: -buf[1]! };
}

/**
 * Evaluates a Hilbert FIR (Q branch; I a delay of (N − 1)/2) from its taps alone: its response
 * relative to the delay, `S(ω) − jA(ω)`, on an FFT grid (64·N points over the circle), with the
 * largest interior peaks refined by golden-section search on the directly summed response and exact
 * values at the band edges.
 * Suppression at each frequency is `|1 + A + jS| / |1 − A − jS|` (DESIGN.md §2 sign: ideal A = 1,
 * S = 0).
 * @param taps odd-length taps (any values; antisymmetry is not assumed).
 * @param sampleRate Hz.
 * @param band [lo, hi] Hz.
 * @returns worst suppression (dB), ripple max |A − 1|, and peak gain over 0 … fs/2 (dB).
 * Method: golden-section search (J. Kiefer, Proc. Amer. Math. Soc. 4:502, 1953) on a DFT grid.
 * @throws never (inputs are not validated: the designers pass checked taps and band).
 */
export function evaluateHilbertFir(
  taps: ArrayLike<number>,
  sampleRate: number,
  band: [number, number],
): HilbertFirEvaluation {
  const n = taps.length;
  const c = (n - 1) >> 1;
  const size = nextPow2(Math.max(512, 64 * n));
  const fft = new FFT(size);
  const input = new Array<number>(size).fill(0);
  // Centre tap at index 0, later taps at m, earlier taps wrapped to size − m.
  for (let k = 0; k < n; k++) {
    const m = k - c;
    input[m >= 0 ? m : size + m] = taps[k]!;
  }
  const out = fft.createComplexArray() as number[];
  fft.realTransform(out, input);
  const [lo, hi] = band;
  const kLo = Math.ceil((lo / sampleRate) * size);
  const kHi = Math.floor((hi / sampleRate) * size);
  // Ratio unwanted/wanted power and |A − 1| at bin k: G = S − jA.
  const ratio = (s: number, a: number): number => {
    const u = (1 - a) * (1 - a) + s * s;
    const v = (1 + a) * (1 + a) + s * s;
    return u / v;
  };
  let peak = 0;
  for (let k = 0; k <= size / 2; k++) {
    const g = Math.hypot(out[2 * k]!, out[2 * k + 1]!);
    if (g > peak) peak = g;
  }
  const rk = (k: number): number => ratio(out[2 * k]!, -out[2 * k + 1]!);
  const dk = (k: number): number => Math.abs(-out[2 * k + 1]! - 1);
  let worst = 0;
  let ripple = 0;
  const buf = new Float64Array(2);
  for (const f of [lo, hi]) {
    const r = responseAt(taps, (2 * Math.PI * f) / sampleRate, buf);
    worst = Math.max(worst, ratio(r.s, r.a));
    ripple = Math.max(ripple, Math.abs(r.a - 1));
  }
  // Interior local maxima on the FFT grid, then the largest few refined by golden-section search
  // on the directly summed response (the FFT grid alone can miss a narrow peak near a band edge).
  const peaksQ: number[] = [];
  const peaksD: number[] = [];
  for (let k = kLo; k <= kHi; k++) {
    const q = rk(k);
    const d = dk(k);
    if (q > worst) worst = q;
    if (d > ripple) ripple = d;
    if (k > kLo && k < kHi) {
      if (q >= rk(k - 1) && q >= rk(k + 1)) peaksQ.push(k);
      if (d >= dk(k - 1) && d >= dk(k + 1)) peaksD.push(k);
    }
  }
  const wOf = (k: number): number => (2 * Math.PI * k) / size;
  // 14 steps narrow the two-bin bracket by 1/φ¹⁴ ≈ 1/843, ample for a 64·N-point grid.
  const golden = (k: number, fn: (w: number) => number): number =>
    goldenSectionMax(fn, wOf(k - 1), wOf(k + 1), 14, 0).value;
  const top = (ks: number[], val: (k: number) => number): number[] =>
    ks.sort((x, y) => val(y) - val(x)).slice(0, REFINED_PEAKS);
  for (const k of top(peaksQ, rk)) {
    worst = Math.max(
      worst,
      golden(k, (w) => {
        const r = responseAt(taps, w, buf);
        return ratio(r.s, r.a);
      }),
    );
  }
  for (const k of top(peaksD, dk)) {
    ripple = Math.max(
      ripple,
      golden(k, (w) => Math.abs(responseAt(taps, w, buf).a - 1)),
    );
  }
  return {
    worstSuppressionDb: worst === 0 ? Number.POSITIVE_INFINITY : -10 * Math.log10(worst),
    ripple,
    peakGainDb: 20 * Math.log10(peak),
  };
}

/**
 * Kaiser-windowed ideal Hilbert response, textbook sign: h[c ± n] = ±w[c ± n]·2/(πn), n odd [2], [4].
 * @param numtaps length in taps (odd for a type III design).
 * @param beta Kaiser β, dimensionless, ≥ 0.
 * @throws {OrthotoneError} INVALID_ARGUMENT from {@link kaiserWindow} for a length outside
 *   1 … 1 048 576 or a negative / non-finite β.
 */
export function kaiserHilbertTaps(numtaps: number, beta: number): Float64Array {
  const w = kaiserWindow(numtaps, beta);
  const c = (numtaps - 1) >> 1;
  const h = new Float64Array(numtaps);
  for (let m = 1; m <= c; m += 2) {
    const v = (2 / (Math.PI * m)) * w[c + m]!;
    h[c + m] = v;
    h[c - m] = -v;
  }
  return h;
}

interface Candidate {
  taps: Float64Array;
  evaluation: HilbertFirEvaluation;
  /** The worst suppression that decides the length search (the judge's, else the evaluation's), dB. */
  score: number;
  iterations?: number;
  converged?: boolean;
  roundOff?: boolean;
  beta?: number;
}

interface Plan {
  fs: number;
  band: [number, number];
  designBand: [number, number];
  halfBand: boolean;
  method: 'remez' | 'kaiser';
  gridDensity: number;
  judge: HilbertFirJudge | undefined;
}

/**
 * The figure that decides the length search: the worst suppression (dB) a caller will report for
 * these taps (e.g. after rounding them to a coefficient format, evaluated by its own evaluator).
 * @internal
 */
export type HilbertFirJudge = (taps: Float64Array) => number;

function scored(plan: Plan, c: Omit<Candidate, 'score'>): Candidate {
  return { ...c, score: plan.judge ? plan.judge(c.taps) : c.evaluation.worstSuppressionDb };
}

function isSymmetric(band: [number, number], fs: number): boolean {
  return Math.abs(band[0] + band[1] - fs / 2) <= 1e-9 * fs;
}

/** Remez taps (textbook sign) of length n for the plan. */
function remezTaps(
  plan: Plan,
  n: number,
): { taps: Float64Array; iterations: number; converged: boolean; roundOff: boolean } {
  const { fs, designBand } = plan;
  const opts = { type: 'hilbert' as const, gridDensity: plan.gridDensity, maxIterations: 100 };
  if (plan.halfBand) {
    // Only odd offsets are non-zero: A(ω) = Σ c_m sin((2m−1)ω) is a type IV response in ω' = 2ω,
    // optimised over [2·lo/fs, 0.5] (the half of the band below fs/4; the rest follows by symmetry).
    // Its 2K taps, interleaved with zeros, are the odd-offset taps of the 4K − 1 type III filter.
    const k = (n + 1) >> 2;
    const res = remezExchange(2 * k, [(2 * designBand[0]) / fs, 0.5], [1], opts);
    const taps = new Float64Array(n);
    const pad = (n - (4 * k - 1)) / 2;
    for (let i = 0; i < 2 * k; i++) taps[pad + 2 * i] = -res.taps[i]!; // scipy sign → textbook
    return { taps, iterations: res.iterations, converged: res.converged, roundOff: !!res.roundOffLimited };
  }
  const res = remezExchange(n, [designBand[0] / fs, designBand[1] / fs], [1], opts);
  const taps = new Float64Array(n);
  for (let i = 0; i < n; i++) taps[i] = res.taps[i] === 0 ? 0 : -res.taps[i]!;
  return { taps, iterations: res.iterations, converged: res.converged, roundOff: !!res.roundOffLimited };
}

/** Transition width of the Kaiser design, normalised to Nyquist = 1: the window smears the ideal
 * response's jump at 0 (and at fs/2) over ±e, e the design band's distance from 0 and fs/2. */
function kaiserWidth(plan: Plan): number {
  return (4 * plan.designBand[0]) / plan.fs;
}

function designAt(plan: Plan, n: number, beta?: number): Candidate {
  if (plan.method === 'kaiser') {
    const b = beta ?? kaiserBeta(kaiserAttenuation(n, kaiserWidth(plan)));
    const taps = kaiserHilbertTaps(n, b);
    return scored(plan, { taps, evaluation: evaluateHilbertFir(taps, plan.fs, plan.band), beta: b });
  }
  const r = remezTaps(plan, n);
  return scored(plan, {
    taps: r.taps,
    evaluation: evaluateHilbertFir(r.taps, plan.fs, plan.band),
    iterations: r.iterations,
    converged: r.converged,
    roundOff: r.roundOff,
  });
}

/** Candidate lengths are indexed: half-band 4i − 1, full type III 2i + 1 (i ≥ 1). */
function lengthOf(plan: Plan, i: number): number {
  return plan.halfBand ? 4 * i - 1 : 2 * i + 1;
}

function indexFor(plan: Plan, n: number): number {
  return Math.max(1, plan.halfBand ? Math.round((n + 1) / 4) : Math.round((n - 1) / 2));
}

function maxIndex(plan: Plan, maxTaps: number): number {
  return plan.halfBand ? Math.floor((maxTaps + 1) / 4) : Math.floor((maxTaps - 1) / 2);
}

/** Length estimate for a target (Herrmann–Rabiner–Chan for Remez, Kaiser's formula for Kaiser). */
function estimateLength(plan: Plan, targetDb: number): number {
  const fs = plan.fs;
  const edge = plan.halfBand ? plan.designBand[0] : Math.min(plan.band[0], fs / 2 - plan.band[1]);
  const delta = hilbertRippleFromSuppression(targetDb);
  if (plan.method === 'kaiser') {
    const a = 20 * Math.log10(10 ** (targetDb / 20) + 1);
    return kaiserOrder(Math.max(8, a), Math.min(1, (4 * edge) / fs)).numtaps;
  }
  // A Hilbert transformer is a half-band low-pass (ripple δ/2, transition 2e) shifted by fs/4 [2].
  return herrmannLength(delta / 2, delta / 2, (2 * edge) / fs);
}

/**
 * Shortest candidate meeting the target, searched from an estimate: gallop away from the estimate
 * until the outcome flips, then bisect. Each candidate is designed and evaluated on its own.
 * Returns undefined when even index `iMax` fails (its design is left in `cache`).
 */
function searchShortest(
  plan: Plan,
  targetDb: number,
  iStart: number,
  iMax: number,
  cache: Map<number, Candidate>,
  beta?: number,
): number | undefined {
  if (iMax < 1) return undefined;
  const passes = (i: number): boolean => {
    let c = cache.get(i);
    if (!c) {
      c = designAt(plan, lengthOf(plan, i), beta);
      cache.set(i, c);
    }
    return c.score >= targetDb;
  };
  let i0 = Math.min(Math.max(1, iStart), iMax);
  let pass: number;
  let fail: number;
  if (passes(i0)) {
    pass = i0;
    let step = 1;
    for (;;) {
      const j = pass - step;
      if (j < 1) {
        fail = 0;
        break;
      }
      if (passes(j)) {
        pass = j;
        step *= 2;
      } else {
        fail = j;
        break;
      }
    }
  } else {
    fail = i0;
    let step = 1;
    for (;;) {
      const j = Math.min(fail + step, iMax);
      if (passes(j)) {
        pass = j;
        break;
      }
      if (j === iMax) return undefined;
      fail = j;
      step *= 2;
    }
  }
  while (pass - fail > 1) {
    const mid = (pass + fail) >> 1;
    if (mid < 1) break;
    if (passes(mid)) pass = mid;
    else fail = mid;
  }
  i0 = pass;
  return i0;
}

/** Kaiser target search: β from the target plus a small margin (Kaiser's β formula can fall a
 * fraction of a dB short [4]); keeps the shortest length over the margins tried. */
function searchKaiser(
  plan: Plan,
  targetDb: number,
  iMax: number,
): { index: number; cand: Candidate } | { index: undefined; best: Candidate } {
  const a = 20 * Math.log10(10 ** (targetDb / 20) + 1);
  let bestIndex: number | undefined;
  let bestCand: Candidate | undefined;
  let fallback: Candidate | undefined;
  for (const margin of [0, 0.5, 1, 2, 3, 5]) {
    const beta = kaiserBeta(a + margin);
    const cache = new Map<number, Candidate>();
    const limit = bestIndex === undefined ? iMax : bestIndex - 1;
    const i = searchShortest(
      plan,
      targetDb,
      indexFor(plan, estimateLength(plan, targetDb + margin)),
      limit,
      cache,
      beta,
    );
    if (i !== undefined) {
      bestIndex = i;
      bestCand = cache.get(i)!;
    } else if (bestIndex === undefined) {
      const c = cache.get(limit);
      if (c && (!fallback || c.score > fallback.score)) fallback = c;
    }
  }
  if (bestIndex !== undefined && bestCand) return { index: bestIndex, cand: bestCand };
  return { index: undefined, best: fallback ?? designAt(plan, lengthOf(plan, iMax)) };
}

function fmt(x: number): string {
  return Number.isFinite(x) ? x.toFixed(1) : String(x);
}

function finish(plan: Plan, cand: Candidate): HilbertFirDesign {
  const taps = Array.from(cand.taps);
  let zeros = 0;
  for (const t of taps) if (t === 0) zeros++;
  const c = (taps.length - 1) / 2;
  let halfBand = true;
  for (let m = 2; m <= c; m += 2) {
    if (taps[c + m] !== 0 || taps[c - m] !== 0) {
      halfBand = false;
      break;
    }
  }
  const out: HilbertFirDesign = {
    taps,
    method: plan.method,
    zeroTaps: zeros,
    symmetricAboutQuarterRate: halfBand,
    worstSuppressionDb: cand.evaluation.worstSuppressionDb,
    ripple: cand.evaluation.ripple,
    designBand: [plan.designBand[0], plan.designBand[1]],
    delaySamples: c,
    peakGainDb: cand.evaluation.peakGainDb,
  };
  if (cand.iterations !== undefined) out.iterations = cand.iterations;
  if (cand.converged !== undefined) out.converged = cand.converged;
  if (cand.beta !== undefined) out.beta = cand.beta;
  return out;
}

/**
 * Designs a type III Hilbert-transformer FIR for the Q branch of a 90° network (I = delay of
 * (N − 1)/2 samples; Q lags I by 90°, DESIGN.md §2–3), by Parks–McClellan [1] or Kaiser window [4].
 *
 * With `taps` only, designs that length. With `targetDb` only, finds the shortest length whose
 * independently evaluated worst suppression over the band meets the target (estimate, then a
 * galloping search and bisection). With both, designs `taps` and checks the target.
 *
 * @param spec sampleRate (Hz), band [lo, hi] (Hz), method, taps (odd), targetDb, maxTaps, structure.
 * @returns taps (textbook sign) and the figures the taps give over the requested band.
 * @throws {OrthotoneError} INVALID_ARGUMENT / INVALID_BAND for a bad spec (naming value and fix);
 *   UNREACHABLE_TARGET when the target is not met (naming the suppression reached and, when found,
 *   the taps needed); NO_CONVERGENCE when the Remez exchange yields non-finite taps.
 * @example
 * ```ts
 * import { designHilbertFir } from 'orthotone';
 *
 * const d = designHilbertFir({ sampleRate: 48000, band: [300, 3000], targetDb: 60 });
 * // the shortest 4K − 1 length reaching 60 dB over 300–3000 Hz; I is a delay of d.delaySamples
 * console.log(d.taps.length, 'taps,', d.worstSuppressionDb.toFixed(1), 'dB');
 * ```
 */
export function designHilbertFir(spec: HilbertFirSpec): HilbertFirDesign {
  return designHilbertFirJudged(spec, undefined);
}

/**
 * {@link designHilbertFir} whose length search is decided by `judge` (the caller's own figure for
 * the taps) instead of the FIR designer's evaluation, so a caller that reports other figures (the
 * network document's `predicted`, rounded coefficients) needs no second length search.
 * @param spec as for {@link designHilbertFir}.
 * @param judge worst suppression in dB the caller will report for the taps; undefined: the
 *   designer's own evaluation.
 * @returns as {@link designHilbertFir}.
 * @throws {OrthotoneError} as {@link designHilbertFir}; the target is judged by `judge`.
 * Method: as {@link designHilbertFir} (McClellan, Parks & Rabiner 1973; Kaiser 1974).
 * @internal
 */
export function designHilbertFirJudged(
  spec: HilbertFirSpec,
  judge: HilbertFirJudge | undefined,
): HilbertFirDesign {
  if (typeof spec !== 'object' || spec === null) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `spec ${String(spec)} must be an object such as { sampleRate: 48000, band: [300, 3000], targetDb: 60 }`,
      spec,
    );
  }
  const o = withDefaults<Omit<HilbertFirSpec, 'sampleRate' | 'band'>>(DEFAULTS, spec, [
    'sampleRate',
    'band',
    'taps',
    'targetDb',
  ]);
  const fs = requireSampleRate(spec.sampleRate);
  const band = requireBand(spec.band, fs);
  const method = requireOneOf('method', o.method, ['remez', 'kaiser'] as const);
  const structure = requireOneOf('structure', o.structure, ['auto', 'halfband', 'full'] as const);
  if (method === 'kaiser' && structure === 'full') {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      "structure 'full' applies to method 'remez' only: a Kaiser-windowed ideal Hilbert response is always half-band; drop structure or use method 'remez'",
      structure,
    );
  }
  const maxTaps = requireInteger('maxTaps', o.maxTaps, 3, MAX_TAPS_LIMIT);
  const gridDensity = requireInteger('gridDensity', o.gridDensity, 4, 256);
  let taps: number | undefined;
  if (o.taps !== undefined) {
    const t = o.taps;
    if (typeof t === 'number' && Number.isInteger(t) && t % 2 === 0) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        `taps ${t} must be odd (a type III Hilbert FIR is antisymmetric about its centre tap): use ${t - 1} or ${t + 1}`,
        t,
      );
    }
    // A length given without maxTaps is limited by what can be designed, not by the search's default cap.
    taps = requireInteger('taps', t, 3, spec.maxTaps === undefined ? MAX_TAPS_LIMIT : maxTaps);
  }
  const targetDb = o.targetDb === undefined ? undefined : requireRange('targetDb', o.targetDb, 10, 150, 'dB');
  if (taps === undefined && targetDb === undefined) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      'give taps (an odd length) or targetDb (the worst suppression wanted, dB), or both',
      spec,
    );
  }

  const edge = Math.min(band[0], fs / 2 - band[1]);
  const halfBand = method === 'kaiser' || structure !== 'full' || isSymmetric(band, fs);
  const plan: Plan = {
    fs,
    band,
    designBand: halfBand ? [edge, fs / 2 - edge] : band,
    halfBand,
    method,
    gridDensity,
    judge,
  };
  const where = `over [${band[0]}, ${band[1]}] Hz at sampleRate ${fs}`;
  const iMax = maxIndex(plan, maxTaps);

  if (taps !== undefined) {
    let cand: Candidate;
    if (method === 'kaiser' && targetDb !== undefined) {
      // β from the target (with margins) or from Kaiser's formula for this length: keep the best.
      const a = 20 * Math.log10(10 ** (targetDb / 20) + 1);
      const options = [0, 0.5, 1, 2, 3].map((m) => kaiserBeta(a + m));
      options.push(kaiserBeta(kaiserAttenuation(taps, kaiserWidth(plan))));
      cand = options.map((b) => designAt(plan, taps, b)).reduce((x, y) => (y.score > x.score ? y : x));
    } else {
      cand = designAt(plan, taps);
    }
    const met = targetDb !== undefined && cand.score >= targetDb;
    if (cand.converged === false && !met) {
      throw new OrthotoneError(
        'NO_CONVERGENCE',
        cand.roundOff
          ? `taps ${taps} are far more than the band needs ${where}: the equiripple optimum lies below double-precision round-off (these taps give only ${fmt(cand.evaluation.worstSuppressionDb)} dB). Give targetDb instead of taps to get the shortest length, or use fewer taps`
          : `the Remez exchange did not converge for taps ${taps} ${where} (${cand.iterations} iterations; the taps give ${fmt(cand.evaluation.worstSuppressionDb)} dB): use fewer taps, a wider band, or method 'kaiser'`,
        { taps, reachedDb: cand.evaluation.worstSuppressionDb },
      );
    }
    if (targetDb !== undefined && !met) {
      let needed: number | undefined;
      if (method === 'kaiser') {
        const r = searchKaiser(plan, targetDb, iMax);
        if (r.index !== undefined) needed = lengthOf(plan, r.index);
      } else {
        const i = searchShortest(
          plan,
          targetDb,
          indexFor(plan, estimateLength(plan, targetDb)),
          iMax,
          new Map(),
        );
        if (i !== undefined) needed = lengthOf(plan, i);
      }
      throw new OrthotoneError(
        'UNREACHABLE_TARGET',
        `taps ${taps} give ${fmt(cand.score)} dB worst suppression ${where}, below targetDb ${targetDb} dB: ` +
          (needed !== undefined
            ? `use taps ${needed} or more, or lower the target`
            : `no length up to maxTaps ${maxTaps} reaches it; widen the band, raise maxTaps, or use an all-pass network`),
        { targetDb, reachedDb: cand.score, tapsNeeded: needed },
      );
    }
    return finish(plan, cand);
  }

  const target = targetDb as number;
  if (method === 'kaiser') {
    const r = searchKaiser(plan, target, iMax);
    if (r.index !== undefined) return finish(plan, r.cand);
    throw unreachable(plan, target, maxTaps, r.best, where);
  }
  const cache = new Map<number, Candidate>();
  const i = searchShortest(plan, target, indexFor(plan, estimateLength(plan, target)), iMax, cache);
  if (i !== undefined) return finish(plan, cache.get(i)!);
  const best = cache.get(iMax) ?? designAt(plan, lengthOf(plan, iMax));
  throw unreachable(plan, target, maxTaps, best, where);
}

function unreachable(
  plan: Plan,
  target: number,
  maxTaps: number,
  best: Candidate,
  where: string,
): OrthotoneError {
  const est = Math.ceil(estimateLength(plan, target));
  const lowLimits = plan.band[0] <= plan.fs / 2 - plan.band[1];
  const which = lowLimits
    ? `lower edge ${plan.band[0]} Hz (${plan.band[0]} Hz above DC)`
    : `upper edge ${plan.band[1]} Hz (${plan.fs / 2 - plan.band[1]} Hz below Nyquist)`;
  return new OrthotoneError(
    'UNREACHABLE_TARGET',
    `targetDb ${target} dB is out of reach ${where} within maxTaps ${maxTaps}: ${best.taps.length} taps give ${fmt(best.score)} dB ` +
      `(about ${est} taps would be needed; the ${which} sets the length). ` +
      'Widen the band (move that edge inward), raise maxTaps, or use an all-pass network.',
    { targetDb: target, reachedDb: best.score, maxTaps, tapsEstimate: est },
  );
}
