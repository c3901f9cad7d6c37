/**
 * Analysis of a 90° network from its coefficients alone: per-frequency phase error, gain error,
 * opposite-sideband suppression and group delay; worst-case figures over the band found by a dense
 * grid refined around its extrema; and the cost of running the network.
 *
 * Everything here reads only the document's coefficients (never the design procedure that made
 * them), so it is the independent evaluation that `predicted` figures come from.
 */
import { OrthotoneError } from '../core/errors.js';
import { requireInteger, requireOneOf } from '../core/validate.js';
import {
  type AllpassBranch,
  type AllpassNetwork,
  type BranchResponse,
  type FirNetwork,
  type Network,
  type NetworkCost,
  type PredictedFigures,
  phaseErrorDegFromResponse,
  suppressionFromResponse,
  validateNetwork,
} from './network.js';
import { allpassBranchResponseInto, firResponseInto, goldenSectionMax } from './response.js';

/** The coefficient part of a network document: enough to evaluate it. */
export type NetworkCoefficients =
  | Pick<FirNetwork, 'kind' | 'sampleRate' | 'band' | 'taps'>
  | Pick<AllpassNetwork, 'kind' | 'sampleRate' | 'band' | 'branches'>;

/** Worst-case figures over the band, with where they occur. */
export interface BandFigures extends PredictedFigures {
  /** Frequency of the worst suppression, Hz. */
  worstSuppressionAtHz: number;
  /** Frequency of the largest |phase error|, Hz. */
  maxPhaseErrorAtHz: number;
  /** Frequency of the largest |gain error|, Hz. */
  maxGainErrorAtHz: number;
}

/** Per-frequency analysis of a network (DESIGN.md §5 `analyzeNetwork`). */
export interface NetworkAnalysis {
  /** Analysis frequencies, Hz (ascending). */
  frequencyHz: Float64Array;
  /** Phase of I minus phase of Q minus 90°, degrees, at each frequency. */
  phaseErrorDeg: Float64Array;
  /** Gain of Q relative to I, dB, at each frequency (magnitudes floored at 1e-15, so finite). */
  gainErrorDb: Float64Array;
  /** Opposite-sideband suppression, dB, at each frequency (capped at 300 dB, the double-precision floor). */
  suppressionDb: Float64Array;
  /** Group delay of the I branch, samples. */
  groupDelayI: Float64Array;
  /** Group delay of the Q branch, samples. */
  groupDelayQ: Float64Array;
  /** The band the worst-case figures are taken over, Hz. */
  band: [number, number];
  /** Worst suppression over the band (refined between grid points), dB, and where. */
  worst: { suppressionDb: number; atHz: number };
  /** Largest |phase error| over the band, degrees. */
  maxPhaseErrorDeg: number;
  /** Largest |gain error| over the band, dB. */
  maxGainErrorDb: number;
  /** Group delay of I minus group delay of Q over the band, samples. */
  groupDelayDifference: { max: number; min: number };
  /** Multiplies per sample and latency. */
  cost: NetworkCost;
  /** The same worst-case figures in the document's `predicted` form, with their frequencies. */
  predicted: BandFigures;
}

/** Options for {@link analyzeNetwork}. */
export interface AnalyzeOptions {
  /** Number of analysis frequencies (2 to 1 000 000). Default 512. */
  points: number;
  /** Lowest analysis frequency, Hz. Default: log scale band low edge / 10; linear scale 0. */
  fromHz: number;
  /** Highest analysis frequency, Hz. Default fs/2. */
  toHz: number;
  /** Frequency spacing. Default 'log'. */
  scale: 'log' | 'linear';
}

const MAG_FLOOR = 1e-15;
const SUPPRESSION_CAP_DB = 300;

/** A prepared evaluator: writes I and Q responses at ω (rad/sample) into `out` [iRe, iIm, qRe, qIm]. */
type Evaluator = (w: number, out: Float64Array) => void;

function makeEvaluator(net: NetworkCoefficients): Evaluator {
  if (net.kind === 'fir') {
    // The common factor e^{−jωD} (D = (N−1)/2) is removed from both branches, which changes no
    // ratio between them: I = 1, Q = Σ h_k e^{−jω(k−D)}.
    const taps = net.taps;
    return (w, out) => {
      out[0] = 1;
      out[1] = 0;
      firResponseInto(taps, w, out, 2);
    };
  }
  const { i, q } = net.branches;
  return (w, out) => {
    allpassBranchResponseInto(i, w, out, 0);
    allpassBranchResponseInto(q, w, out, 2);
  };
}

function responseOf(buf: Float64Array): BranchResponse {
  return { i: { re: buf[0]!, im: buf[1]! }, q: { re: buf[2]!, im: buf[3]! } };
}

function suppressionOf(buf: Float64Array): number {
  return Math.min(SUPPRESSION_CAP_DB, suppressionFromResponse(responseOf(buf)));
}

function gainOf(buf: Float64Array): number {
  const gi = Math.max(MAG_FLOOR, Math.hypot(buf[0]!, buf[1]!));
  const gq = Math.max(MAG_FLOOR, Math.hypot(buf[2]!, buf[3]!));
  return 20 * Math.log10(gq / gi);
}

/**
 * Finds the maximum of `fn` over a sorted grid, refining each of the largest grid maxima by
 * golden-section search between its neighbours. Returns the value and where it occurs; with
 * `stopAbove`, returns the unrefined grid maximum (`refined: false`) as soon as it exceeds that.
 * `fn`'s argument and `at` are in the grid's own units (Hz for the designers' grids).
 * Method: golden-section search (J. Kiefer, "Sequential minimax search for a maximum",
 * Proc. Amer. Math. Soc. 4:502, 1953).
 * @throws never itself; an exception from `fn` is passed on.
 * @internal shared with the all-pass designer.
 */
export function maximizeOnGrid(
  fn: (x: number) => number,
  grid: Float64Array,
  opts: { refine?: number; iterations?: number; stopAbove?: number } = {},
): { value: number; at: number; refined: boolean } {
  const refine = opts.refine ?? 24;
  const iterations = opts.iterations ?? 40;
  const n = grid.length;
  const v = new Float64Array(n);
  for (let k = 0; k < n; k++) v[k] = fn(grid[k]!);
  const peaks: number[] = [];
  for (let k = 0; k < n; k++) {
    const left = k === 0 ? Number.NEGATIVE_INFINITY : v[k - 1]!;
    const right = k === n - 1 ? Number.NEGATIVE_INFINITY : v[k + 1]!;
    if (v[k]! >= left && v[k]! >= right) peaks.push(k);
  }
  peaks.sort((x, y) => v[y]! - v[x]!);
  let best = { value: Number.NEGATIVE_INFINITY, at: grid[0]!, refined: true };
  for (let k = 0; k < n; k++) if (v[k]! > best.value) best = { value: v[k]!, at: grid[k]!, refined: true };
  // A grid value above `stopAbove` already settles a yes/no question: skip the refinement.
  if (opts.stopAbove !== undefined && best.value > opts.stopAbove) return { ...best, refined: false };
  for (const k of peaks.slice(0, refine)) {
    const g = goldenSectionMax(fn, grid[Math.max(0, k - 1)]!, grid[Math.min(n - 1, k + 1)]!, iterations);
    if (g.value > best.value) best = { value: g.value, at: g.at, refined: true };
  }
  return best;
}

/**
 * A dense frequency grid over `band` (Hz), sorted, including both edges: `size` points uniform in
 * `warp(f)` merged with `size` points clustered toward the edges (cosine spacing), where the
 * extrema of equiripple designs crowd. `size` ≥ 2 is the caller's duty (not checked).
 * Common practice, no source (dense grids denser near the band edges, as in Remez programs).
 * @returns 2·`size` frequencies in Hz, ascending.
 * @throws never itself; an exception from `warp`/`unwarp` is passed on.
 * @internal
 */
export function bandGrid(
  band: readonly [number, number],
  size: number,
  warp: (f: number) => number,
  unwarp: (x: number) => number,
): Float64Array {
  const x1 = warp(band[0]);
  const x2 = warp(band[1]);
  const g = new Float64Array(2 * size);
  for (let k = 0; k < size; k++) {
    const t = k / (size - 1);
    g[k] = unwarp(x1 + (x2 - x1) * t);
    g[size + k] = unwarp(x1 + ((x2 - x1) * (1 - Math.cos(Math.PI * t))) / 2);
  }
  g[0] = band[0];
  g[size - 1] = band[1];
  g[size] = band[0];
  g[2 * size - 1] = band[1];
  g.sort();
  return g;
}

/** Grid matched to the network kind: log-tan (bilinear) warping for all-pass, linear for FIR. */
function gridFor(net: NetworkCoefficients): Float64Array {
  const fs = net.sampleRate;
  const [lo, hi] = net.band;
  if (net.kind === 'fir') {
    const ripples = (net.taps.length * (hi - lo)) / fs;
    const size = Math.min(20000, Math.ceil(8 * ripples) + 128);
    return bandGrid(
      net.band,
      size,
      (f) => f,
      (x) => x,
    );
  }
  const sections = net.branches.i.sections.length + net.branches.q.sections.length;
  const size = 16 * (sections + 2) + 64;
  return bandGrid(
    net.band,
    size,
    (f) => Math.log(Math.tan((Math.PI * f) / fs)),
    (x) => (Math.atan(Math.exp(x)) * fs) / Math.PI,
  );
}

function checkBandForFigures(net: NetworkCoefficients): void {
  const [lo, hi] = net.band;
  const nyq = net.sampleRate / 2;
  if (!(lo > 0 && hi > lo && hi <= nyq)) {
    throw new OrthotoneError(
      'INVALID_BAND',
      `band [${lo}, ${hi}] Hz must satisfy 0 < lo < hi ≤ ${nyq} Hz (Nyquist for sampleRate ${net.sampleRate})`,
      net.band,
    );
  }
}

function worstSuppressionOnGrid(net: NetworkCoefficients, grid: Float64Array): { value: number; at: number } {
  const ev = makeEvaluator(net);
  const buf = new Float64Array(4);
  const k = (2 * Math.PI) / net.sampleRate;
  return maximizeOnGrid((f) => {
    ev(k * f, buf);
    return -suppressionOf(buf);
  }, grid);
}

/**
 * The worst opposite-sideband suppression over the band, dB: exactly the `worstSuppressionDb` of
 * {@link bandFigures} (same grid, same refinement), without the phase and gain searches. The FIR
 * length search judges candidates by it, so the document's `predicted` figure is the one searched on.
 * @param net the coefficient part of a network document.
 * @returns worst suppression in dB (positive).
 * @throws {OrthotoneError} INVALID_BAND when the band is not inside (0, fs/2].
 * Reference: K. Schmidt, QEX Aug 1994 §2, as in `suppressionFromResponse`.
 * @internal
 */
export function worstSuppressionDb(net: NetworkCoefficients): number {
  checkBandForFigures(net);
  return -worstSuppressionOnGrid(net, gridFor(net)).value;
}

/**
 * Worst-case figures over the band with the frequencies where they occur: a dense grid (log-tan
 * spaced for all-pass pairs, linear for FIR, both clustered toward the band edges) refined by
 * golden-section search around the largest grid extrema. Reads only the coefficients.
 * @param net the coefficient part of a network document.
 * @returns worst suppression (dB), largest |phase error| (degrees), largest |gain error| (dB), and where.
 * @throws {OrthotoneError} INVALID_BAND when the document's band is not inside (0, fs/2].
 * Reference: the suppression is K. Schmidt, QEX Aug 1994 §2, as in `suppressionFromResponse`.
 */
export function bandFigures(net: NetworkCoefficients): BandFigures {
  checkBandForFigures(net);
  const ev = makeEvaluator(net);
  const buf = new Float64Array(4);
  const k = (2 * Math.PI) / net.sampleRate;
  const grid = gridFor(net);
  const supp = worstSuppressionOnGrid(net, grid);
  const phase = maximizeOnGrid((f) => {
    ev(k * f, buf);
    return Math.abs(phaseErrorDegFromResponse(responseOf(buf)));
  }, grid);
  const gain = maximizeOnGrid((f) => {
    ev(k * f, buf);
    return Math.abs(gainOf(buf));
  }, grid);
  return {
    worstSuppressionDb: -supp.value,
    maxPhaseErrorDeg: phase.value,
    maxGainErrorDb: gain.value,
    worstSuppressionAtHz: supp.at,
    maxPhaseErrorAtHz: phase.at,
    maxGainErrorAtHz: gain.at,
  };
}

/**
 * The `predicted` figures of a network document: an independent evaluation of its coefficients
 * over its band (see {@link bandFigures}).
 * @param net the coefficient part of a network document.
 * @returns `{ worstSuppressionDb, maxPhaseErrorDeg, maxGainErrorDb }`.
 * @throws {OrthotoneError} INVALID_BAND when the band is not inside (0, fs/2].
 * Reference: K. Schmidt, "Phase-Shift Network Analysis and Optimization", QEX Aug 1994, §2.
 */
export function predictFigures(net: NetworkCoefficients): PredictedFigures {
  const f = bandFigures(net);
  return {
    worstSuppressionDb: f.worstSuppressionDb,
    maxPhaseErrorDeg: f.maxPhaseErrorDeg,
    maxGainErrorDb: f.maxGainErrorDb,
  };
}

/**
 * Group delay of one all-pass branch, samples: the delay plus, per section,
 * `m·(1 − a²)/(1 + 2a·cos(mω) + a²)` for a section of order m.
 * @param branch the branch.
 * @param w angular frequency, rad/sample.
 * Reference: the group delay of a first-order all-pass, e.g. Regalia, Mitra & Vaidyanathan,
 * "The digital all-pass filter: a versatile signal processing building block", Proc. IEEE 76(1), 1988.
 * @returns group delay in samples.
 * @throws never
 */
export function allpassBranchGroupDelay(branch: AllpassBranch, w: number): number {
  let t = branch.delay;
  for (const s of branch.sections) {
    const a = s.a;
    t += (s.order * (1 - a * a)) / (1 + 2 * a * Math.cos(s.order * w) + a * a);
  }
  return t;
}

/**
 * Group delay of an FIR, samples: `Re(Σ k·h_k e^{−jωk} / Σ h_k e^{−jωk})`. At a zero of the
 * response (DC and Nyquist for a type III Hilbert FIR) the delay of an antisymmetric FIR, (N−1)/2,
 * is returned, which is its group delay everywhere else too.
 * @param taps FIR taps.
 * @param w angular frequency, rad/sample.
 * @returns group delay in samples.
 * Method: the same ratio scipy.signal.group_delay evaluates (derivative of the phase written as a
 * ratio of two DFT sums).
 * @throws never
 */
export function firGroupDelay(taps: readonly number[], w: number): number {
  let hr = 0;
  let hi = 0;
  let kr = 0;
  let ki = 0;
  let scale = 0;
  for (let k = 0; k < taps.length; k++) {
    const h = taps[k]!;
    if (h === 0) continue;
    const c = Math.cos(w * k);
    const s = -Math.sin(w * k);
    hr += h * c;
    hi += h * s;
    kr += k * h * c;
    ki += k * h * s;
    scale += Math.abs(h);
  }
  const d = hr * hr + hi * hi;
  if (!(d > 1e-20 * scale * scale)) return (taps.length - 1) / 2;
  return (kr * hr + ki * hi) / d;
}

function isAntisymmetric(taps: readonly number[]): boolean {
  const n = taps.length;
  for (let k = 0; k < n; k++) if (taps[k] !== -taps[n - 1 - k]!) return false;
  return true;
}

/**
 * Running cost of a network.
 * - FIR: multiplies per sample = the non-zero taps, halved when the taps are exactly antisymmetric
 *   (one multiply per pair, `h_k·(x[n−k] − x[n−N+1+k])`), so the zero taps of a band symmetric about
 *   fs/4 also count nothing; latency (N−1)/2.
 * - All-pass: one multiply per section whose coefficient is not 0 (both orders: the one-multiplier
 *   lattice form); latency = mean over the band of the two branches' mean group delay.
 * @param net the coefficient part of a network document.
 * @returns `{ multipliesPerSample, latencySamples }` (samples).
 * @throws {OrthotoneError} INVALID_BAND when the band is not inside (0, fs/2].
 * Reference: one-multiplier all-pass sections, Mitra & Hirano, IEEE Trans. CAS 21(5), 1974;
 * Hilbert FIR symmetry, Reilly, Frazer & Boashash, IEEE Trans. SP 42:3241, 1994.
 */
export function networkCost(net: NetworkCoefficients): NetworkCost {
  checkBandForFigures(net);
  if (net.kind === 'fir') {
    const taps = net.taps;
    const nonzero = taps.reduce((n, t) => n + (t !== 0 ? 1 : 0), 0);
    const multipliesPerSample = isAntisymmetric(taps) ? Math.ceil(nonzero / 2) : nonzero;
    return { multipliesPerSample, latencySamples: (taps.length - 1) / 2 };
  }
  const { i, q } = net.branches;
  const multipliesPerSample = [...i.sections, ...q.sections].filter((s) => s.a !== 0).length;
  return { multipliesPerSample, latencySamples: meanBandDelay(net) };
}

function meanBandDelay(net: Pick<AllpassNetwork, 'sampleRate' | 'band' | 'branches'>): number {
  const pts = 257;
  const [lo, hi] = net.band;
  let sum = 0;
  for (let k = 0; k < pts; k++) {
    const f = lo + ((hi - lo) * k) / (pts - 1);
    const w = (2 * Math.PI * f) / net.sampleRate;
    const t = 0.5 * (allpassBranchGroupDelay(net.branches.i, w) + allpassBranchGroupDelay(net.branches.q, w));
    sum += k === 0 || k === pts - 1 ? 0.5 * t : t;
  }
  return sum / (pts - 1);
}

const ANALYZE_DEFAULTS: Readonly<Omit<AnalyzeOptions, 'fromHz' | 'toHz'>> = Object.freeze({
  points: 512,
  scale: 'log',
});

/**
 * Analyses a network document from its coefficients: phase error, gain error, suppression and
 * group delays at `points` frequencies (default: log-spaced from a tenth of the band's low edge to
 * fs/2, so the plot shows the roll-off beyond the band), and worst-case figures over the band
 * (refined between grid points, see {@link bandFigures}).
 * @param net a network document (validated).
 * @param options points (default 512), fromHz/toHz (Hz, within 0…fs/2), scale 'log' | 'linear'.
 * @returns per-frequency arrays and band figures; group delays in samples.
 * @throws {OrthotoneError} INVALID_DOCUMENT for a bad document; INVALID_ARGUMENT for bad options.
 * Reference: suppression per K. Schmidt, QEX Aug 1994 §2.
 * @example
 * ```ts
 * import { analyzeNetwork, designNetwork } from 'orthotone';
 *
 * const net = designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'allpass', targetDb: 60 });
 * const a = analyzeNetwork(net, { points: 256 });
 * console.log(`worst ${a.worst.suppressionDb.toFixed(1)} dB at ${a.worst.atHz.toFixed(0)} Hz`);
 * // a.frequencyHz[k], a.suppressionDb[k], a.phaseErrorDeg[k]: one row per analysis frequency
 * ```
 */
export function analyzeNetwork(net: Network, options: Partial<AnalyzeOptions> = {}): NetworkAnalysis {
  validateNetwork(net);
  const fs = net.sampleRate;
  const nyq = fs / 2;
  const scale = requireOneOf('scale', options.scale ?? ANALYZE_DEFAULTS.scale, ['log', 'linear'] as const);
  const points = requireInteger('points', options.points ?? ANALYZE_DEFAULTS.points, 2, 1_000_000);
  const defFrom = scale === 'log' ? Math.max(net.band[0] / 10, nyq * 1e-6) : 0;
  const fromHz = options.fromHz ?? defFrom;
  const toHz = options.toHz ?? nyq;
  const minFrom = scale === 'log' ? Number.MIN_VALUE : 0;
  if (!(Number.isFinite(fromHz) && fromHz >= minFrom && fromHz < nyq)) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `fromHz ${fromHz} must be ${scale === 'log' ? 'above 0 Hz (log scale)' : 'at least 0 Hz'} and below Nyquist ${nyq} Hz`,
      fromHz,
    );
  }
  if (!(Number.isFinite(toHz) && toHz > fromHz && toHz <= nyq)) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `toHz ${toHz} must be above fromHz ${fromHz} Hz and at most Nyquist ${nyq} Hz`,
      toHz,
    );
  }
  const frequencyHz = new Float64Array(points);
  for (let k = 0; k < points; k++) {
    const t = k / (points - 1);
    frequencyHz[k] = scale === 'log' ? fromHz * (toHz / fromHz) ** t : fromHz + (toHz - fromHz) * t;
  }
  frequencyHz[points - 1] = toHz;
  const phaseErrorDeg = new Float64Array(points);
  const gainErrorDb = new Float64Array(points);
  const suppressionDb = new Float64Array(points);
  const groupDelayI = new Float64Array(points);
  const groupDelayQ = new Float64Array(points);
  const ev = makeEvaluator(net);
  const buf = new Float64Array(4);
  const delayI = (w: number): number =>
    net.kind === 'fir' ? (net.taps.length - 1) / 2 : allpassBranchGroupDelay(net.branches.i, w);
  const delayQ = (w: number): number =>
    net.kind === 'fir' ? firGroupDelay(net.taps, w) : allpassBranchGroupDelay(net.branches.q, w);
  for (let k = 0; k < points; k++) {
    const w = (2 * Math.PI * frequencyHz[k]!) / fs;
    ev(w, buf);
    phaseErrorDeg[k] = phaseErrorDegFromResponse(responseOf(buf));
    gainErrorDb[k] = gainOf(buf);
    suppressionDb[k] = Math.max(-SUPPRESSION_CAP_DB, suppressionOf(buf));
    groupDelayI[k] = delayI(w);
    groupDelayQ[k] = delayQ(w);
  }
  const figures = bandFigures(net);
  let gdMax = Number.NEGATIVE_INFINITY;
  let gdMin = Number.POSITIVE_INFINITY;
  const [lo, hi] = net.band;
  for (let k = 0; k < 257; k++) {
    const w = (2 * Math.PI * (lo + ((hi - lo) * k) / 256)) / fs;
    const d = delayI(w) - delayQ(w);
    gdMax = Math.max(gdMax, d);
    gdMin = Math.min(gdMin, d);
  }
  return {
    frequencyHz,
    phaseErrorDeg,
    gainErrorDb,
    suppressionDb,
    groupDelayI,
    groupDelayQ,
    band: [lo, hi],
    worst: { suppressionDb: figures.worstSuppressionDb, atHz: figures.worstSuppressionAtHz },
    maxPhaseErrorDeg: figures.maxPhaseErrorDeg,
    maxGainErrorDb: figures.maxGainErrorDb,
    groupDelayDifference: { max: gdMax, min: gdMin },
    cost: networkCost(net),
    predicted: figures,
  };
}
