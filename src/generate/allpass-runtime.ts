/**
 * Runtime for an all-pass pair network (DESIGN.md §3, kind 'allpass'): each branch is
 * `z^-delay · Π H_k(z)` with first-order sections `(a + z⁻¹)/(1 + a·z⁻¹)` and second-order
 * sections in z⁻², `(a + z⁻²)/(1 + a·z⁻²)`.
 *
 * Each section is one multiply per sample in the form `y[n] = a·(x[n] − y[n−m]) + x[n−m]`
 * (m = 1 or 2), the classic one-multiplier all-pass (S. K. Mitra, Digital Signal Processing, 4th
 * ed., §9.7 on all-pass realisations; the same form as used for polyphase IIR half-band and 90°
 * filters). A chunk is run section by section (each section's recursion in a tight loop with its
 * state in locals), which is exact and independent of block partitioning because every section is
 * causal and its state is carried between chunks.
 *
 * Denormals: a recursion fed silence decays geometrically into subnormal numbers, which slow some
 * CPUs by orders of magnitude. Each branch therefore adds a constant 1e-20 (−400 dBFS) at its input
 * and removes it at its output. Every section passes DC with gain exactly 1 (H(1) = (a+1)/(1+a)), so
 * the states settle at 1e-20 instead of decaying, and the constant cancels at the output to within
 * rounding (common practice, no source).
 */
import { OrthotoneError } from '../core/errors.js';
import type { AllpassBranch } from '../design/network.js';
import { type NetworkRuntime, RUNTIME_CHUNK } from './network-runtime.js';

/** The anti-denormal constant added at each branch input and removed at its output. */
export const ANTI_DENORMAL_OFFSET = 1e-20;

const HISTORY_SPARE = 16 * RUNTIME_CHUNK;

/** One branch's coefficients (immutable) and state (copied by clone). */
interface BranchState {
  /** Section orders, 1 or 2. */
  orders: Uint8Array;
  /** Section coefficients. */
  coef: Float64Array;
  /** Per section: x[n−1], x[n−2], y[n−1], y[n−2]. */
  state: Float64Array;
  /** Integer delay, samples. */
  delay: number;
  /** Delay line history (linear, over-allocated) and write position. */
  hist: Float64Array;
  wp: number;
  /** Working chunk. */
  work: Float64Array;
}

function checkBranch(name: string, b: AllpassBranch): void {
  if (!Number.isInteger(b.delay) || b.delay < 0) {
    throw new OrthotoneError(
      'INVALID_DOCUMENT',
      `branch ${name} delay ${String(b.delay)} must be a whole number of samples ≥ 0`,
      b.delay,
    );
  }
  b.sections.forEach((s, k) => {
    if ((s.order !== 1 && s.order !== 2) || !Number.isFinite(s.a) || Math.abs(s.a) >= 1) {
      throw new OrthotoneError(
        'INVALID_DOCUMENT',
        `branch ${name} section ${k} (order ${String(s.order)}, a ${String(s.a)}) must have order 1 or 2 and |a| < 1`,
        s,
      );
    }
  });
}

function newBranch(b: AllpassBranch): BranchState {
  return {
    orders: Uint8Array.from(b.sections.map((s) => s.order)),
    coef: Float64Array.from(b.sections.map((s) => s.a)),
    state: new Float64Array(4 * b.sections.length),
    delay: b.delay,
    hist: new Float64Array(b.delay > 0 ? b.delay + HISTORY_SPARE : 0),
    wp: b.delay,
    work: new Float64Array(RUNTIME_CHUNK),
  };
}

function copyBranch(s: BranchState): BranchState {
  return {
    orders: s.orders,
    coef: s.coef,
    state: s.state.slice(),
    delay: s.delay,
    hist: s.hist.slice(),
    wp: s.wp,
    work: new Float64Array(RUNTIME_CHUNK),
  };
}

/** Runs one branch over `n` samples of `x` into `out`. */
function runBranch(b: BranchState, x: Float64Array, n: number, out: Float64Array): void {
  const w = b.work;
  for (let j = 0; j < n; j++) w[j] = x[j]! + ANTI_DENORMAL_OFFSET;
  const st = b.state;
  const ns = b.orders.length;
  for (let s = 0; s < ns; s++) {
    const a = b.coef[s]!;
    const o = 4 * s;
    if (b.orders[s] === 1) {
      let x1 = st[o]!;
      let y1 = st[o + 2]!;
      for (let j = 0; j < n; j++) {
        const xn = w[j]!;
        const yn = a * (xn - y1) + x1;
        x1 = xn;
        y1 = yn;
        w[j] = yn;
      }
      st[o] = x1;
      st[o + 2] = y1;
    } else {
      let x1 = st[o]!;
      let x2 = st[o + 1]!;
      let y1 = st[o + 2]!;
      let y2 = st[o + 3]!;
      for (let j = 0; j < n; j++) {
        const xn = w[j]!;
        const yn = a * (xn - y2) + x2;
        x2 = x1;
        x1 = xn;
        y2 = y1;
        y1 = yn;
        w[j] = yn;
      }
      st[o] = x1;
      st[o + 1] = x2;
      st[o + 2] = y1;
      st[o + 3] = y2;
    }
  }
  const d = b.delay;
  if (d === 0) {
    for (let j = 0; j < n; j++) out[j] = w[j]! - ANTI_DENORMAL_OFFSET;
    return;
  }
  const h = b.hist;
  let wp = b.wp;
  if (wp + n > h.length) {
    h.copyWithin(0, wp - d, wp);
    wp = d;
  }
  for (let j = 0; j < n; j++) {
    h[wp + j] = w[j]!;
    out[j] = h[wp + j - d]! - ANTI_DENORMAL_OFFSET;
  }
  b.wp = wp + n;
}

function resetBranch(b: BranchState): void {
  b.state.fill(0);
  b.hist.fill(0);
  b.wp = b.delay;
}

/**
 * Creates the runtime for an all-pass pair network.
 * @param branches the two branches `{ i, q }` of a network document (DESIGN.md §3).
 * @returns a {@link NetworkRuntime}; one multiply per section per sample.
 * @throws {OrthotoneError} INVALID_DOCUMENT when a section's order is not 1 or 2, |a| ≥ 1 or a
 *   coefficient is not finite, or a delay is not a whole number ≥ 0.
 */
export function createAllpassRuntime(branches: { i: AllpassBranch; q: AllpassBranch }): NetworkRuntime {
  checkBranch('i', branches.i);
  checkBranch('q', branches.q);
  const multipliesPerSample = branches.i.sections.length + branches.q.sections.length;
  const make = (bi: BranchState, bq: BranchState): NetworkRuntime => ({
    kind: 'allpass',
    multipliesPerSample,
    process(x, n, outI, outQ) {
      runBranch(bi, x, n, outI);
      runBranch(bq, x, n, outQ);
    },
    reset() {
      resetBranch(bi);
      resetBranch(bq);
    },
    clone() {
      return make(copyBranch(bi), copyBranch(bq));
    },
  });
  return make(newBranch(branches.i), newBranch(branches.q));
}
