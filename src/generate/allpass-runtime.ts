/**
 * Runtime for an all-pass pair network (DESIGN.md §3, kind 'allpass'): each branch is
 * `z^-delay · Π H_k(z)` with first-order sections `(a + z⁻¹)/(1 + a·z⁻¹)` and second-order
 * sections in z⁻², `(a + z⁻²)/(1 + a·z⁻²)`.
 *
 * Each section is one multiply per sample in the form `y[n] = a·(x[n] − y[n−m]) + x[n−m]`
 * (m = 1 or 2), the classic one-multiplier all-pass (S. K. Mitra, Digital Signal Processing, 4th
 * ed., §9.7 on all-pass realisations; the same form as used for polyphase IIR half-band and 90°
 * filters). A chunk is run section by section, two sections of each branch per pass with their
 * states in locals, so four independent recursions overlap in the CPU (one recursion alone is bound
 * by its own latency). This is exact and independent of block partitioning: every section is causal
 * and its state is carried between chunks. Branch delays are read from one shared input history.
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

/** One branch: coefficients and orders (immutable) and per-section state (copied by clone). */
interface BranchState {
  /** Section coefficients. */
  coef: Float64Array;
  /** Section orders (1 or 2). */
  order: Uint8Array;
  /** Per section: x[n−1], x[n−2], y[n−1], y[n−2]. */
  st: Float64Array;
  /** Integer delay, samples, applied at the branch input (a delay commutes with the sections). */
  delay: number;
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
    coef: Float64Array.from(b.sections.map((s) => s.a)),
    order: Uint8Array.from(b.sections.map((s) => s.order)),
    st: new Float64Array(4 * b.sections.length),
    delay: b.delay,
  };
}

function copyBranch(s: BranchState): BranchState {
  return { ...s, st: s.st.slice() };
}

/** One section over `n` samples of `w`, in place: `y = a·(x − y[n−m]) + x[n−m]`. */
function runSection(b: BranchState, s: number, w: Float64Array, n: number): void {
  const a = b.coef[s]!;
  const st = b.st;
  const o = 4 * s;
  let x1 = st[o]!;
  let x2 = st[o + 1]!;
  let y1 = st[o + 2]!;
  let y2 = st[o + 3]!;
  if (b.order[s] === 1) {
    for (let j = 0; j < n; j++) {
      const xn = w[j]!;
      const yn = a * (xn - y1) + x1;
      x1 = xn;
      y1 = yn;
      w[j] = yn;
    }
  } else {
    for (let j = 0; j < n; j++) {
      const xn = w[j]!;
      const yn = a * (xn - y2) + x2;
      x2 = x1;
      x1 = xn;
      y2 = y1;
      y1 = yn;
      w[j] = yn;
    }
  }
  st[o] = x1;
  st[o + 1] = x2;
  st[o + 2] = y1;
  st[o + 3] = y2;
}

/**
 * Sections s and s+1 of both branches in one pass (all four first order): four independent
 * recursions per loop, which the CPU overlaps, instead of one recursion's latency per loop.
 * Each recursion computes exactly what {@link runSection} computes.
 */
function runQuad1(
  bi: BranchState,
  bq: BranchState,
  s: number,
  wi: Float64Array,
  wq: Float64Array,
  n: number,
): void {
  const si = bi.st;
  const sq = bq.st;
  const o = 4 * s;
  const a0 = bi.coef[s]!;
  const a1 = bi.coef[s + 1]!;
  const b0 = bq.coef[s]!;
  const b1 = bq.coef[s + 1]!;
  let ix0 = si[o]!;
  let iy0 = si[o + 2]!;
  let ix1 = si[o + 4]!;
  let iy1 = si[o + 6]!;
  let qx0 = sq[o]!;
  let qy0 = sq[o + 2]!;
  let qx1 = sq[o + 4]!;
  let qy1 = sq[o + 6]!;
  for (let j = 0; j < n; j++) {
    const xi = wi[j]!;
    const xq = wq[j]!;
    const ti = a0 * (xi - iy0) + ix0;
    const tq = b0 * (xq - qy0) + qx0;
    ix0 = xi;
    iy0 = ti;
    qx0 = xq;
    qy0 = tq;
    const ui = a1 * (ti - iy1) + ix1;
    const uq = b1 * (tq - qy1) + qx1;
    ix1 = ti;
    iy1 = ui;
    qx1 = tq;
    qy1 = uq;
    wi[j] = ui;
    wq[j] = uq;
  }
  si[o] = ix0;
  si[o + 2] = iy0;
  si[o + 4] = ix1;
  si[o + 6] = iy1;
  sq[o] = qx0;
  sq[o + 2] = qy0;
  sq[o + 4] = qx1;
  sq[o + 6] = qy1;
}

/** As {@link runQuad1} for four second-order (z⁻²) sections. */
function runQuad2(
  bi: BranchState,
  bq: BranchState,
  s: number,
  wi: Float64Array,
  wq: Float64Array,
  n: number,
): void {
  const si = bi.st;
  const sq = bq.st;
  const o = 4 * s;
  const a0 = bi.coef[s]!;
  const a1 = bi.coef[s + 1]!;
  const b0 = bq.coef[s]!;
  const b1 = bq.coef[s + 1]!;
  let ix01 = si[o]!;
  let ix02 = si[o + 1]!;
  let iy01 = si[o + 2]!;
  let iy02 = si[o + 3]!;
  let ix11 = si[o + 4]!;
  let ix12 = si[o + 5]!;
  let iy11 = si[o + 6]!;
  let iy12 = si[o + 7]!;
  let qx01 = sq[o]!;
  let qx02 = sq[o + 1]!;
  let qy01 = sq[o + 2]!;
  let qy02 = sq[o + 3]!;
  let qx11 = sq[o + 4]!;
  let qx12 = sq[o + 5]!;
  let qy11 = sq[o + 6]!;
  let qy12 = sq[o + 7]!;
  for (let j = 0; j < n; j++) {
    const xi = wi[j]!;
    const xq = wq[j]!;
    const ti = a0 * (xi - iy02) + ix02;
    const tq = b0 * (xq - qy02) + qx02;
    ix02 = ix01;
    ix01 = xi;
    iy02 = iy01;
    iy01 = ti;
    qx02 = qx01;
    qx01 = xq;
    qy02 = qy01;
    qy01 = tq;
    const ui = a1 * (ti - iy12) + ix12;
    const uq = b1 * (tq - qy12) + qx12;
    ix12 = ix11;
    ix11 = ti;
    iy12 = iy11;
    iy11 = ui;
    qx12 = qx11;
    qx11 = tq;
    qy12 = qy11;
    qy11 = uq;
    wi[j] = ui;
    wq[j] = uq;
  }
  si[o] = ix01;
  si[o + 1] = ix02;
  si[o + 2] = iy01;
  si[o + 3] = iy02;
  si[o + 4] = ix11;
  si[o + 5] = ix12;
  si[o + 6] = iy11;
  si[o + 7] = iy12;
  sq[o] = qx01;
  sq[o + 1] = qx02;
  sq[o + 2] = qy01;
  sq[o + 3] = qy02;
  sq[o + 4] = qx11;
  sq[o + 5] = qx12;
  sq[o + 6] = qy11;
  sq[o + 7] = qy12;
}

/** Execution plan: per step, 0 = quad of first-order, 1 = quad of z⁻², 2 = singles at index s. */
function makePlan(bi: BranchState, bq: BranchState): { kind: Uint8Array; index: Int32Array } {
  const kinds: number[] = [];
  const idx: number[] = [];
  const ni = bi.order.length;
  const nq = bq.order.length;
  let s = 0;
  while (s < Math.max(ni, nq)) {
    if (s + 1 < ni && s + 1 < nq) {
      const o = bi.order[s];
      if (bi.order[s + 1] === o && bq.order[s] === o && bq.order[s + 1] === o) {
        kinds.push(o === 1 ? 0 : 1);
        idx.push(s);
        s += 2;
        continue;
      }
    }
    kinds.push(2);
    idx.push(s);
    s += 1;
  }
  return { kind: Uint8Array.from(kinds), index: Int32Array.from(idx) };
}

/** Shared input history (x + offset) for the branch delays: linear, over-allocated, one span. */
interface InputHistory {
  h: Float64Array;
  wp: number;
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
  const keep = Math.max(branches.i.delay, branches.q.delay);
  const plan = makePlan(newBranch(branches.i), newBranch(branches.q));
  const steps = plan.kind.length;
  const wi = new Float64Array(RUNTIME_CHUNK);
  const wq = new Float64Array(RUNTIME_CHUNK);
  const make = (bi: BranchState, bq: BranchState, hist: InputHistory): NetworkRuntime => ({
    kind: 'allpass',
    multipliesPerSample,
    process(x, n, outI, outQ) {
      const h = hist.h;
      let wp = hist.wp;
      if (wp + n > h.length) {
        h.copyWithin(0, wp - keep, wp);
        wp = keep;
      }
      const pi = wp - bi.delay;
      const pq = wp - bq.delay;
      // One pass: append the input, read both branches' (delayed) inputs; a delayed read never
      // reaches past the sample just written.
      for (let j = 0; j < n; j++) {
        h[wp + j] = x[j]! + ANTI_DENORMAL_OFFSET;
        wi[j] = h[pi + j]!;
        wq[j] = h[pq + j]!;
      }
      hist.wp = wp + n;
      const ni = bi.coef.length;
      const nq = bq.coef.length;
      for (let k = 0; k < steps; k++) {
        const s = plan.index[k]!;
        const kind = plan.kind[k];
        if (kind === 0) runQuad1(bi, bq, s, wi, wq, n);
        else if (kind === 1) runQuad2(bi, bq, s, wi, wq, n);
        else {
          if (s < ni) runSection(bi, s, wi, n);
          if (s < nq) runSection(bq, s, wq, n);
        }
      }
      for (let j = 0; j < n; j++) {
        outI[j] = wi[j]! - ANTI_DENORMAL_OFFSET;
        outQ[j] = wq[j]! - ANTI_DENORMAL_OFFSET;
      }
    },
    reset() {
      bi.st.fill(0);
      bq.st.fill(0);
      hist.h.fill(0);
      hist.wp = keep;
    },
    clone() {
      return make(copyBranch(bi), copyBranch(bq), { h: hist.h.slice(), wp: hist.wp });
    },
  });
  return make(newBranch(branches.i), newBranch(branches.q), {
    h: new Float64Array(keep + HISTORY_SPARE),
    wp: keep,
  });
}
