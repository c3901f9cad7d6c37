/**
 * Parks–McClellan design of linear-phase FIR filters: weighted Chebyshev (equiripple)
 * approximation by the Remez exchange on a dense frequency grid.
 *
 * Semantics follow `scipy.signal.remez` (band edges in the units of `fs`, default fs = 1 so that
 * Nyquist is 0.5; one desired value and one weight per band; the same dense grid), so results can be
 * checked against scipy and against the program of McClellan, Parks & Rabiner. Note that for
 * `type: 'hilbert'` this gives scipy's (and the original program's) sign, which is the OPPOSITE of
 * the textbook Hilbert response `h(n) = 2/(πn)`; {@link designHilbertFir} negates it.
 *
 * The exchange itself is our own formulation: the error is evaluated on the whole grid each
 * iteration (O(grid·r)) with the barycentric Lagrange formula, every local extremum is a candidate,
 * and the new reference is chosen by alternation and removal of the weakest extrema (a multiple
 * exchange), which converges in a handful of iterations.
 *
 * References:
 * [1] J. H. McClellan, T. W. Parks & L. R. Rabiner, "A computer program for designing optimum FIR
 *     linear phase digital filters", IEEE Trans. Audio Electroacoust. AU-21(6):506–526, 1973.
 * [2] T. W. Parks & J. H. McClellan, "Chebyshev approximation for nonrecursive digital filters with
 *     linear phase", IEEE Trans. Circuit Theory CT-19(2):189–194, 1972.
 * [3] J.-P. Berrut & L. N. Trefethen, "Barycentric Lagrange interpolation", SIAM Review 46(3), 2004.
 * [4] S.-I. Filip, "A robust and scalable implementation of the Parks–McClellan algorithm for
 *     designing FIR filters", ACM Trans. Math. Softw. 43(1), 2016 (multiple exchange, extremum selection).
 */
import { OrthotoneError } from '../core/errors.js';
import { requireInteger, requireOneOf, requirePositive, withDefaults } from '../core/validate.js';

/** Options for {@link remez}; every field optional. */
export interface RemezOptions {
  /** One positive weight per band (default all 1). */
  weight?: number[];
  /** 'bandpass' (symmetric taps), 'differentiator' or 'hilbert' (antisymmetric taps). Default 'bandpass'. */
  type?: 'bandpass' | 'differentiator' | 'hilbert';
  /** Sampling frequency in the units of `bands`. Default 1 (Nyquist 0.5). */
  fs?: number;
  /** Grid points per extremal frequency (scipy: grid_density). Default 16. */
  gridDensity?: number;
  /** Iteration cap. Default 50. */
  maxIterations?: number;
}

/** Result of {@link remez}. */
export interface RemezResult {
  /** Filter taps, length numtaps. */
  taps: Float64Array;
  /** Exchange iterations used. */
  iterations: number;
  /** True when the reference settled (max grid error equals the levelled deviation). */
  converged: boolean;
  /** Levelled weighted deviation |δ|: the weighted error magnitude at the extremal frequencies. */
  deviation: number;
  /**
   * Set when the optimum's deviation lies below double-precision round-off (numtaps far beyond what
   * the bands need): `converged` is then false, as the taps are not the Chebyshev optimum.
   */
  roundOffLimited?: boolean;
  /**
   * Set when the taps do not reproduce the levelled error at the reference: the response between
   * narrow bands grows beyond double precision, so the interpolated optimum is lost when the taps are
   * formed. `converged` is then false.
   */
  tapsOffReference?: boolean;
}

const DEFAULTS: Readonly<Required<Omit<RemezOptions, 'weight'>>> = Object.freeze({
  type: 'bandpass',
  fs: 1,
  gridDensity: 16,
  maxIterations: 50,
});

/** Relative tolerance on (max grid error − |δ|)/|δ| at which the exchange is converged. */
const CONVERGENCE_TOLERANCE = 1e-9;
/** Largest numtaps accepted (beyond it one design takes seconds). */
const MAX_TAPS = 16385;

interface Problem {
  numtaps: number;
  /** Number of cosine basis functions. */
  r: number;
  neg: boolean;
  odd: boolean;
  /** Grid in cycles/sample (0 … 0.5). */
  f: Float64Array;
  /** cos(2πf). */
  x: Float64Array;
  /** Desired and weight after removing the fixed factor Q(f). */
  des: Float64Array;
  wt: Float64Array;
  /** First and last grid index of each band. */
  bandStart: Int32Array;
  bandEnd: Int32Array;
}

/** The fixed factor of the amplitude response: A(f) = Q(f)·P(cos 2πf), per filter type [1]. */
function qFactor(neg: boolean, odd: boolean, f: number): number {
  if (!neg) return odd ? 1 : Math.cos(Math.PI * f);
  return odd ? Math.sin(2 * Math.PI * f) : Math.sin(Math.PI * f);
}

function badArg(msg: string, v?: unknown): never {
  throw new OrthotoneError('INVALID_ARGUMENT', msg, v);
}

/** A finite number (`Number.isFinite` is false for every non-number, so no `typeof` test is needed). */
function isFiniteNumber(v: unknown): v is number {
  return Number.isFinite(v);
}

function validate(
  numtaps: number,
  bands: number[],
  desired: number[],
  options: RemezOptions | undefined,
): { o: Required<Omit<RemezOptions, 'weight'>>; weight: number[]; edges: Float64Array } {
  const o = withDefaults(DEFAULTS, options, ['weight']) as Required<Omit<RemezOptions, 'weight'>> &
    RemezOptions;
  requireInteger('numtaps', numtaps, 2, MAX_TAPS);
  requireOneOf('type', o.type, ['bandpass', 'differentiator', 'hilbert'] as const);
  const fs = requirePositive('fs', o.fs);
  requireInteger('gridDensity', o.gridDensity, 1, 1024);
  requireInteger('maxIterations', o.maxIterations, 1, 10000);
  if (!Array.isArray(bands) || bands.length < 2 || bands.length % 2 !== 0) {
    badArg(
      `bands ${JSON.stringify(bands)} must be a flat list of band edges [lo1, hi1, lo2, hi2, …] with an even number of entries`,
      bands,
    );
  }
  const nb = bands.length / 2;
  if (!Array.isArray(desired) || desired.length !== nb) {
    badArg(
      `desired ${JSON.stringify(desired)} must have one value per band (${nb} for bands ${JSON.stringify(bands)})`,
      desired,
    );
  }
  const weight = o.weight ?? new Array<number>(nb).fill(1);
  if (!Array.isArray(weight) || weight.length !== nb) {
    badArg(`weight ${JSON.stringify(weight)} must have one value per band (${nb})`, weight);
  }
  const edges = new Float64Array(bands.length);
  for (let i = 0; i < bands.length; i++) {
    const e = bands[i];
    if (!isFiniteNumber(e) || e < 0 || e > fs / 2) {
      badArg(
        `band edge bands[${i}] = ${String(e)} must be a finite frequency from 0 to fs/2 = ${fs / 2}: keep every edge within Nyquist`,
        e,
      );
    }
    // Stryker disable next-line ConditionalExpression,EqualityOperator: at i = 0, bands[-1] is undefined and `e <= undefined` is false, so `i > 0` only states the intent
    if (i > 0 && e <= bands[i - 1]!) {
      badArg(
        `band edges must increase strictly: bands[${i}] = ${e} is not above bands[${i - 1}] = ${bands[i - 1]}; list them as [lo1, hi1, lo2, hi2, …] with gaps between bands`,
        bands,
      );
    }
    edges[i] = e / fs;
  }
  for (let b = 0; b < nb; b++) {
    const d = desired[b];
    if (!isFiniteNumber(d)) badArg(`desired[${b}] ${String(d)} must be a finite number`, d);
    const w = weight[b];
    if (!isFiniteNumber(w) || w <= 0) {
      badArg(`weight[${b}] ${String(w)} must be a finite number greater than 0`, w);
    }
  }
  return { o, weight, edges };
}

/** Builds the dense grid exactly as the McClellan–Parks–Rabiner program (and scipy) does [1]. */
function buildProblem(
  numtaps: number,
  edges: Float64Array,
  desired: number[],
  weight: number[],
  type: 'bandpass' | 'differentiator' | 'hilbert',
  density: number,
): Problem {
  const neg = type !== 'bandpass';
  const odd = numtaps % 2 === 1;
  const r = Math.floor(numtaps / 2) + (odd && !neg ? 1 : 0);
  const delf = 0.5 / (density * r);
  const nb = edges.length / 2;
  const fl: number[] = [];
  const bl: number[] = [];
  const bandStart = new Int32Array(nb);
  const bandEnd = new Int32Array(nb);
  for (let b = 0; b < nb; b++) {
    let f = edges[2 * b]!;
    // Antisymmetric responses vanish at f = 0: start the first band one grid step in.
    if (b === 0 && neg && f < delf) f = delf;
    const fup = edges[2 * b + 1]!;
    bandStart[b] = fl.length;
    for (;;) {
      fl.push(f);
      bl.push(b);
      const next = f + delf; // accumulated like the original program, so the grids agree exactly
      if (next > fup) break;
      f = next;
    }
    fl[fl.length - 1] = fup;
    bandEnd[b] = fl.length - 1;
  }
  // Types II and III vanish at Nyquist: drop a last point within one step of it.
  if (neg === odd && fl[fl.length - 1]! > 0.5 - delf) {
    fl.pop(); // bl keeps its last entry: only its first fl.length entries are read
    const last = nb - 1;
    bandEnd[last] = bandEnd[last]! - 1;
    if (bandEnd[last]! < bandStart[last]!) {
      badArg(
        'the last band holds no usable grid point: this filter type is zero at Nyquist; widen the last band or change numtaps parity',
      );
    }
  }
  const g = fl.length;
  if (g < r + 1) {
    badArg(
      `the bands are too narrow for numtaps ${numtaps}: the dense grid has ${g} points but needs at least ${r + 1}; widen the bands or raise gridDensity`,
      numtaps,
    );
  }
  const f = Float64Array.from(fl);
  const x = new Float64Array(g);
  const des = new Float64Array(g);
  const wt = new Float64Array(g);
  for (let i = 0; i < g; i++) {
    const fi = f[i]!;
    const b = bl[i]!;
    x[i] = Math.cos(2 * Math.PI * fi);
    let d = desired[b]!;
    let w = weight[b]!;
    if (type === 'differentiator') {
      d *= fi;
      if (desired[b]! >= 1e-4) w /= fi;
    }
    const q = qFactor(neg, odd, fi);
    des[i] = d / q;
    wt[i] = w * q;
  }
  return { numtaps, r, neg, odd, f, x, des, wt, bandStart, bandEnd };
}

const SCALE_UP = 2 ** 500;
const SCALE_DOWN = 2 ** -500;

/**
 * Barycentric weights `w_k = 1/Π_{j≠k} 2(x_k − x_j)` for n points [3], with the running product
 * rescaled by 2^±500 so that it neither overflows nor underflows for thousands of points; the common
 * scale cancels in every formula that uses the weights.
 */
function baryWeights(xr: Float64Array, n: number, out: Float64Array, expo: Int32Array): void {
  let emin = Number.POSITIVE_INFINITY;
  for (let k = 0; k < n; k++) {
    const xk = xr[k]!;
    let p = 1;
    let e = 0;
    for (let j = 0; j < n; j++) {
      if (j === k) continue;
      p *= 2 * (xk - xr[j]!);
      const a = p < 0 ? -p : p;
      if (a > SCALE_UP) {
        p *= SCALE_DOWN;
        e++;
      } else if (a < SCALE_DOWN) {
        p *= SCALE_UP;
        e--;
      }
    }
    out[k] = 1 / p;
    expo[k] = e;
    if (e < emin) emin = e;
  }
  for (let k = 0; k < n; k++) out[k] = out[k]! * SCALE_DOWN ** (expo[k]! - emin);
}

/** Interpolant through (xr, y) with barycentric weights w, evaluated at x. */
function baryEval(x: number, xr: Float64Array, y: Float64Array, w: Float64Array, n: number): number {
  let num = 0;
  let den = 0;
  for (let k = 0; k < n; k++) {
    const d = x - xr[k]!;
    if (d === 0) return y[k]!;
    const c = w[k]! / d;
    num += c * y[k]!;
    den += c;
  }
  return num / den;
}

/**
 * Initial reference: n grid points spread like Chebyshev–Lobatto points over the x-range the bands
 * occupy (uniform in θ = arccos t, t the x-range mapped to [−1, 1]), with transition gaps left out.
 * When the bands fill 0 … 0.5 this is the original program's uniform spacing [1]; for a band that
 * covers only part of the axis (a Hilbert transformer) it puts the points where the optimal
 * extremals crowd, near the band edges, and saves several exchange iterations.
 */
function initialReference(p: Problem, n: number): Int32Array {
  const { x, bandStart, bandEnd } = p;
  const g = x.length;
  let xmin = Number.POSITIVE_INFINITY;
  let xmax = Number.NEGATIVE_INFINITY;
  for (let i = 0; i < g; i++) {
    if (x[i]! < xmin) xmin = x[i]!;
    if (x[i]! > xmax) xmax = x[i]!;
  }
  // span > 0: the grid holds at least r + 1 ≥ 2 distinct frequencies in 0 … 0.5, where cos is one-to-one.
  const span = xmax - xmin;
  const theta = new Float64Array(g);
  for (let i = 0; i < g; i++) {
    const t = (2 * x[i]! - xmax - xmin) / span;
    theta[i] = Math.acos(Math.min(1, Math.max(-1, t)));
  }
  const nb = bandStart.length;
  let total = 0;
  for (let b = 0; b < nb; b++) total += theta[bandEnd[b]!]! - theta[bandStart[b]!]!;
  const ref = new Int32Array(n);
  let b = 0;
  let offset = 0; // θ-measure of the bands before band b
  for (let j = 0; j < n; j++) {
    const target = (j * total) / (n - 1); // n = r + 1 ≥ 2
    while (b < nb - 1 && target > offset + theta[bandEnd[b]!]! - theta[bandStart[b]!]!) {
      offset += theta[bandEnd[b]!]! - theta[bandStart[b]!]!;
      b++;
    }
    const want = theta[bandStart[b]!]! + (target - offset);
    // Nearest grid point of band b (θ increases with the grid index).
    let lo = bandStart[b]!;
    let hi = bandEnd[b]!;
    while (hi - lo > 1) {
      const mid = (lo + hi) >> 1;
      if (theta[mid]! <= want) lo = mid;
      else hi = mid;
    }
    ref[j] = Math.abs(theta[hi]! - want) < Math.abs(want - theta[lo]!) ? hi : lo;
  }
  // Strictly increasing indices within 0 … g−1 (g ≥ n is guaranteed).
  for (let j = 1; j < n; j++) if (ref[j]! <= ref[j - 1]!) ref[j] = ref[j - 1]! + 1;
  if (ref[n - 1]! > g - 1) ref[n - 1] = g - 1;
  for (let j = n - 2; j >= 0; j--) if (ref[j]! >= ref[j + 1]!) ref[j] = ref[j + 1]! - 1;
  return ref;
}

/**
 * Parks–McClellan design with scipy-compatible semantics, returning the result even when the
 * exchange did not converge (`converged: false`). Most callers want {@link remez}, which throws then.
 * @throws {OrthotoneError} INVALID_ARGUMENT for a bad specification (names the value and the fix).
 */
export function remezExchange(
  numtaps: number,
  bands: number[],
  desired: number[],
  options?: RemezOptions,
): RemezResult {
  const { o, weight, edges } = validate(numtaps, bands, desired, options);
  const p = buildProblem(numtaps, edges, desired, weight, o.type, o.gridDensity);
  const { r, x, des, wt, bandStart, bandEnd } = p;
  const g = x.length;
  const n = r + 1;

  // Scale of the weighted error, for the round-off floor of the convergence test.
  let errScale = 0;
  for (let i = 0; i < g; i++) errScale = Math.max(errScale, Math.abs(wt[i]! * des[i]!));
  const floor = 1e-13 * errScale;

  let ref: Int32Array = initialReference(p, n);

  const xr = new Float64Array(n);
  const y = new Float64Array(n);
  const bw = new Float64Array(n);
  const expo = new Int32Array(n);
  const wy = new Float64Array(n);
  const err = new Float64Array(g);
  const refPos = new Int32Array(g).fill(-1);
  const cand = new Int32Array(g);
  let next: Int32Array = new Int32Array(n);

  const bandOf = new Int32Array(g);
  for (let b = 0; b < bandStart.length; b++) bandOf.fill(b, bandStart[b]!, bandEnd[b]! + 1);
  /** Weighted error at grid point i from the current interpolant (r + 1 terms). */
  const errorAt = (i: number): number => {
    const xi = x[i]!;
    let sn = 0;
    let sd = 0;
    for (let k = 0; k < n; k++) {
      const d = xi - xr[k]!;
      if (d === 0) return wt[i]! * (des[i]! - y[k]!);
      const c = 1 / d;
      sn += wy[k]! * c;
      sd += bw[k]! * c;
    }
    return wt[i]! * (des[i]! - sn / sd);
  };

  let delta = 0;
  let iterations = 0;
  let converged = false;
  let fullScan = true;
  for (let it = 1; it <= o.maxIterations; it++) {
    iterations = it;
    for (let k = 0; k < n; k++) xr[k] = x[ref[k]!]!;
    baryWeights(xr, n, bw, expo);
    // Levelled deviation: the r-th divided difference of P vanishes on the n reference points [2].
    let num = 0;
    let den = 0;
    for (let k = 0; k < n; k++) {
      const i = ref[k]!;
      num += bw[k]! * des[i]!;
      den += ((k & 1) === 0 ? bw[k]! : -bw[k]!) / wt[i]!;
    }
    delta = num / den;
    for (let k = 0; k < n; k++) {
      const i = ref[k]!;
      y[k] = des[i]! - ((k & 1) === 0 ? delta : -delta) / wt[i]!;
      wy[k] = bw[k]! * y[k]!;
    }
    const absDelta = Math.abs(delta);

    const tol = CONVERGENCE_TOLERANCE * absDelta + floor;

    // Stryker disable next-line BlockStatement: speed only: without the local exchange every iteration is a full-grid exchange, the same optimum
    if (!fullScan) {
      // Local exchange: move each reference point uphill in |E| within its band, staying between
      // its neighbours (alternation is kept because each point keeps its sign). About 3·r
      // evaluations instead of the whole grid.
      let moved = false;
      // Stryker disable next-line UnaryOperator: speed only: moves stay between the neighbours' positions, so the reference stays sorted and the full-grid check certifies the same optimum
      let prev = -1;
      // Stryker disable next-line ConditionalExpression,EqualityOperator,BlockStatement: speed only: moves stay between the neighbours' positions, so the reference stays sorted and the full-grid check certifies the same optimum
      for (let k = 0; k < n; k++) {
        const i0 = ref[k]!;
        const band = bandOf[i0]!;
        const sgn = ((k & 1) === 0) === delta >= 0 ? 1 : -1;
        // Stryker disable next-line MethodExpression,ArithmeticOperator: speed only: moves stay between the neighbours' positions, so the reference stays sorted and the full-grid check certifies the same optimum (a scan stops at the previous point, whose error has the opposite sign)
        const lo = Math.max(bandStart[band]!, prev + 1);
        // Stryker disable next-line ConditionalExpression,EqualityOperator,ArithmeticOperator,MethodExpression: speed only: moves stay between the neighbours' positions, so the reference stays sorted and the full-grid check certifies the same optimum (a scan stops at the next point, whose error has the opposite sign)
        const hi = k === n - 1 ? bandEnd[band]! : Math.min(bandEnd[band]!, ref[k + 1]! - 1);
        let best = i0;
        let bestVal = absDelta;
        // Stryker disable next-line ArithmeticOperator,ConditionalExpression,UpdateOperator,BlockStatement: speed only: moves stay between the neighbours' positions, so the reference stays sorted and the full-grid check certifies the same optimum
        for (let j = i0 + 1; j <= hi; j++) {
          const v = sgn * errorAt(j);
          if (v <= bestVal) break;
          best = j;
          bestVal = v;
        }
        // Stryker disable next-line ConditionalExpression,EqualityOperator,BlockStatement: speed only: moves stay between the neighbours' positions, so the reference stays sorted and the full-grid check certifies the same optimum
        if (best === i0) {
          // Stryker disable next-line ArithmeticOperator,ConditionalExpression,UpdateOperator,BlockStatement: speed only: moves stay between the neighbours' positions, so the reference stays sorted and the full-grid check certifies the same optimum
          for (let j = i0 - 1; j >= lo; j--) {
            const v = sgn * errorAt(j);
            if (v <= bestVal) break;
            best = j;
            bestVal = v;
          }
        }
        // Stryker disable next-line BooleanLiteral: speed only: moves stay between the neighbours' positions, so the reference stays sorted and the full-grid check certifies the same optimum
        if (best !== i0) moved = true;
        next[k] = best;
        prev = best;
      }
      // Stryker disable next-line BlockStatement: speed only: moves stay between the neighbours' positions, so the reference stays sorted and the full-grid check certifies the same optimum
      if (moved) {
        const tmp = ref;
        ref = next;
        next = tmp;
        continue;
      }
      // The reference no longer moves locally: verify on the whole grid (below).
    }

    // Weighted error on the whole grid: E = W'·(D' − P). O(grid·r), the hot loop.
    for (let k = 0; k < n; k++) refPos[ref[k]!] = k;
    let maxErr = 0;
    for (let i = 0; i < g; i++) {
      const k0 = refPos[i]!;
      let pv: number;
      if (k0 >= 0) {
        pv = y[k0]!;
      } else {
        const xi = x[i]!;
        let sn = 0;
        let sd = 0;
        for (let k = 0; k < n; k++) {
          const c = 1 / (xi - xr[k]!);
          sn += wy[k]! * c;
          sd += bw[k]! * c;
        }
        pv = sn / sd;
      }
      const e = wt[i]! * (des[i]! - pv);
      err[i] = e;
      const a = e < 0 ? -e : e;
      if (a > maxErr) maxErr = a;
    }
    for (let k = 0; k < n; k++) refPos[ref[k]!] = -1;

    if (maxErr - absDelta <= tol) {
      converged = true;
      break;
    }
    // Large excess: the reference is far from the optimum; keep exchanging on the whole grid.
    // Stryker disable next-line ConditionalExpression,EqualityOperator,ArithmeticOperator: speed only: picks a local or a full-grid exchange for the next step; both keep a sorted reference and the full-grid check certifies the optimum
    fullScan = maxErr > 2 * absDelta;

    // Candidate extrema: local maxima of |E| (within each band) at least as large as |δ|.
    const thr = absDelta * (1 - 1e-9) - floor;
    let nc = 0;
    for (let b = 0; b < bandStart.length; b++) {
      const s0 = bandStart[b]!;
      const t = bandEnd[b]!;
      for (let i = s0; i <= t; i++) {
        const e = err[i]!;
        if ((e < 0 ? -e : e) < thr) continue;
        if (e >= 0) {
          if (i > s0 && err[i - 1]! > e) continue;
          if (i < t && err[i + 1]! >= e) continue;
        } else {
          if (i > s0 && err[i - 1]! < e) continue;
          if (i < t && err[i + 1]! <= e) continue;
        }
        // Alternation: of consecutive same-sign extrema keep the larger.
        if (nc > 0) {
          const last = err[cand[nc - 1]!]!;
          if (last >= 0 === e >= 0) {
            if (Math.abs(e) > Math.abs(last)) cand[nc - 1] = i;
            continue;
          }
        }
        cand[nc++] = i;
      }
    }
    if (nc < n) break; // cannot happen in exact arithmetic; round-off has taken over: stop
    // Too many: drop the weakest, keeping alternation (one at an end, or an interior one together
    // with the smaller of its two now-adjacent same-sign neighbours) [4].
    const list = Array.from(cand.subarray(0, nc));
    while (list.length > n) {
      const excess = list.length - n;
      const aFirst = Math.abs(err[list[0]!]!);
      const aLast = Math.abs(err[list[list.length - 1]!]!);
      if (excess === 1) {
        if (aFirst < aLast) list.shift();
        else list.pop();
        continue;
      }
      let m = 0;
      let am = Number.POSITIVE_INFINITY;
      // Stryker disable next-line ConditionalExpression,EqualityOperator,BlockStatement: speed only: picks which surplus extremum to drop; splice keeps the list sorted, so the next reference is sorted and the full-grid check certifies the same optimum
      for (let j = 0; j < list.length; j++) {
        const a = Math.abs(err[list[j]!]!);
        // Stryker disable next-line ConditionalExpression,EqualityOperator,BlockStatement: speed only: picks which surplus extremum to drop; splice keeps the list sorted, so the next reference is sorted and the full-grid check certifies the same optimum
        if (a < am) {
          am = a;
          m = j;
        }
      }
      // Stryker disable next-line ConditionalExpression,LogicalOperator,EqualityOperator,ArithmeticOperator: speed only: picks which surplus extremum to drop; splice keeps the list sorted, so the next reference is sorted and the full-grid check certifies the same optimum
      if (m === 0 || m === list.length - 1) {
        list.splice(m, 1);
      } else {
        // Stryker disable next-line ArithmeticOperator: speed only: picks which surplus extremum to drop; splice keeps the list sorted, so the next reference is sorted and the full-grid check certifies the same optimum
        const left = Math.abs(err[list[m - 1]!]!);
        // Stryker disable next-line ArithmeticOperator: speed only: picks which surplus extremum to drop; splice keeps the list sorted, so the next reference is sorted and the full-grid check certifies the same optimum
        const right = Math.abs(err[list[m + 1]!]!);
        // Stryker disable next-line ConditionalExpression,EqualityOperator,ArithmeticOperator: speed only: picks which surplus extremum to drop; splice keeps the list sorted, so the next reference is sorted and the full-grid check certifies the same optimum
        list.splice(left < right ? m - 1 : m, 2);
      }
    }
    // The new reference always differs from the old: the point of largest |E| (> |δ| + tol here) is a
    // local extremum, wins every same-sign merge and is never the weaker one dropped above.
    for (let k = 0; k < n; k++) next[k] = list[k]!;
    const tmp = ref;
    ref = next;
    next = tmp;
  }

  // If δ itself is at round-off level the "optimum" is noise, whatever stopped the exchange (levelled
  // error, a reference that no longer moves, too few extrema, the iteration cap): the bands need far
  // fewer taps than asked for, and the taps are not the Chebyshev optimum.
  const roundOff = Math.abs(delta) < 100 * floor;
  if (roundOff) converged = false;

  const taps = impulseResponse(p, xr, y, bw, n);
  for (let i = 0; i < taps.length; i++) {
    if (!Number.isFinite(taps[i]!)) {
      throw new OrthotoneError(
        'NO_CONVERGENCE',
        `remez produced non-finite taps for numtaps ${numtaps}: the problem is numerically out of reach; use fewer taps, wider transition bands or weights closer to 1`,
        numtaps,
      );
    }
  }
  // The taps must reproduce ±δ at the reference (they interpolate it exactly in exact arithmetic).
  // When the bands cover a small part of the axis, P between them grows past double precision and
  // the taps lose the optimum while the exchange itself levelled: check a spread of reference points
  // (only after a levelled exit, when `ref` is the reference the taps interpolate).
  const offReference = converged && !tapsMatchReference(p, taps, ref, n, Math.abs(delta), floor);
  if (offReference) converged = false;
  const result: RemezResult = { taps, iterations, converged, deviation: Math.abs(delta) };
  if (roundOff) result.roundOffLimited = true;
  if (offReference) result.tapsOffReference = true;
  return result;
}

/**
 * True when the weighted error of the taps themselves, w·(d − A), stays within 2|δ| + 1000·floor at up
 * to 64 reference points spread over the reference (|δ| there in exact arithmetic). A(f) is the
 * amplitude of a linear-phase FIR: Σ h_k cos(ω(k − M)) (symmetric) or Σ h_k sin(ω(M − k))
 * (antisymmetric), M = (N − 1)/2, summed with an angle-addition recurrence (O(N) per point).
 */
function tapsMatchReference(
  p: Problem,
  taps: Float64Array,
  ref: Int32Array,
  n: number,
  absDelta: number,
  floor: number,
): boolean {
  const nt = taps.length;
  const mid = (nt - 1) / 2;
  const step = Math.max(1, Math.floor(n / 64));
  for (let k = 0; k < n; k += step) {
    const i = ref[k]!;
    const w = 2 * Math.PI * p.f[i]!;
    // Phase θ_j = w·(j − M), advanced by w each tap: (c, s) rotated by (cw, sw).
    const cw = Math.cos(w);
    const sw = Math.sin(w);
    let c = Math.cos(-w * mid);
    let s = Math.sin(-w * mid);
    let a = 0;
    for (let j = 0; j < nt; j++) {
      a += taps[j]! * (p.neg ? -s : c);
      const c2 = c * cw - s * sw;
      s = s * cw + c * sw;
      c = c2;
    }
    const e = p.wt[i]! * (p.des[i]! - a / qFactor(p.neg, p.odd, p.f[i]!));
    if (!(Math.abs(e) <= 2 * absDelta + 1000 * floor)) return false;
  }
  return true;
}

/**
 * Taps from the interpolated amplitude: H(f) = s·e^{−j2πf(N−1)/2}·A(f) with s = 1 (symmetric) or
 * s = j (antisymmetric, the original program's sign), A = Q·P, sampled at f = m/N and inverted by
 * an N-point DFT (exact, since h has N taps). Symmetry is imposed exactly.
 */
function impulseResponse(
  p: Problem,
  xr: Float64Array,
  y: Float64Array,
  bw: Float64Array,
  n: number,
): Float64Array {
  const nt = p.numtaps;
  const pv = new Float64Array((nt >> 1) + 1);
  for (let m = 0; m <= nt >> 1; m++) pv[m] = baryEval(Math.cos((2 * Math.PI * m) / nt), xr, y, bw, n);
  const amp = new Float64Array(nt);
  for (let m = 0; m < nt; m++) {
    // P depends on cos(2πm/N) only, which is the same for m and N − m.
    amp[m] = qFactor(p.neg, p.odd, m / nt) * pv[Math.min(m, nt - m)]!;
  }
  // Tables of cos/sin(π·i/N), i = 0 … 2N−1: the phase of every term is π·m·u/N, u = 2k − N + 1.
  const two = 2 * nt;
  const ct = new Float64Array(two);
  const st = new Float64Array(two);
  for (let i = 0; i < two; i++) {
    ct[i] = Math.cos((Math.PI * i) / nt);
    st[i] = Math.sin((Math.PI * i) / nt);
  }
  const h = new Float64Array(nt);
  const half = (nt - 1) >> 1; // k = 0 … half, mirrored
  for (let k = 0; k <= half; k++) {
    const u = 2 * k - nt + 1;
    const uu = ((u % two) + two) % two;
    let s = 0;
    let idx = 0;
    if (!p.neg) {
      for (let m = 0; m < nt; m++) {
        s += amp[m]! * ct[idx]!;
        idx += uu;
        if (idx >= two) idx -= two;
      }
    } else {
      for (let m = 0; m < nt; m++) {
        s -= amp[m]! * st[idx]!;
        idx += uu;
        if (idx >= two) idx -= two;
      }
    }
    h[k] = s / nt;
  }
  for (let k = 0; k <= half; k++) h[nt - 1 - k] = p.neg ? -h[k]! : h[k]!;
  if (p.neg && p.odd) h[half] = 0;
  return h;
}

/**
 * Parks–McClellan (Remez exchange) design of a linear-phase FIR filter [1, 2], with the semantics of
 * `scipy.signal.remez`: `bands` lists band edges in the units of `fs` (default fs = 1, so edges lie in
 * 0 … 0.5), `desired` gives one value per band (for 'differentiator' the slope, desired·f), `weight`
 * one positive weight per band. Odd or even `numtaps` gives type I/II ('bandpass', symmetric) or
 * type III/IV ('differentiator', 'hilbert'; antisymmetric).
 *
 * Sign: for 'hilbert' the taps have scipy's and the original program's sign, the opposite of the
 * textbook `2/(πn)`; {@link designHilbertFir} returns the textbook sign.
 *
 * @param numtaps filter length, 2 … 16385.
 * @param bands band edges [lo1, hi1, lo2, hi2, …], strictly increasing, within 0 … fs/2.
 * @param desired desired amplitude per band.
 * @param options weight, type, fs, gridDensity (default 16), maxIterations (default 50).
 * @returns taps, iterations, convergence flag and the levelled deviation |δ|.
 * @throws {OrthotoneError} INVALID_ARGUMENT for a bad specification; NO_CONVERGENCE when the exchange
 *   does not settle within maxIterations (with advice).
 * @example
 * const { taps, deviation } = remez(11, [0.1, 0.4], [1], { type: 'hilbert' }); // deviation ≈ 0.011212
 */
export function remez(
  numtaps: number,
  bands: number[],
  desired: number[],
  options?: RemezOptions,
): RemezResult {
  const res = remezExchange(numtaps, bands, desired, options);
  if (res.roundOffLimited) {
    throw new OrthotoneError(
      'NO_CONVERGENCE',
      `remez: the weighted deviation for numtaps ${numtaps} is at round-off level (${res.deviation.toPrecision(3)}): these bands need far fewer taps; use fewer taps or narrower transition bands`,
      res,
    );
  }
  if (res.tapsOffReference) {
    throw new OrthotoneError(
      'NO_CONVERGENCE',
      `remez: the taps for numtaps ${numtaps} do not reproduce the levelled deviation ${res.deviation.toPrecision(3)}: the bands cover too little of 0 … fs/2 and the response between them grows beyond double precision; widen the bands, add bands over the gaps, or use fewer taps`,
      res,
    );
  }
  if (!res.converged) {
    throw new OrthotoneError(
      'NO_CONVERGENCE',
      `remez did not converge in ${res.iterations} iterations for numtaps ${numtaps} (deviation ${res.deviation.toPrecision(4)}): ` +
        'widen the transition bands, use fewer taps, raise maxIterations, or accept the unconverged result with remezExchange',
      res,
    );
  }
  return res;
}
