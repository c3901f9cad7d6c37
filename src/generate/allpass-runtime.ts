/**
 * Runtime for an all-pass pair network (DESIGN.md §3, kind 'allpass'): each branch is
 * `z^-delay · Π H_k(z)` with first-order sections `(a + z⁻¹)/(1 + a·z⁻¹)` and second-order
 * sections in z⁻², `(a + z⁻²)/(1 + a·z⁻²)`.
 *
 * Each section is one multiply per sample in the form `y[n] = a·(x[n] − y[n−m]) + x[n−m]`
 * (m = 1 or 2), the classic one-multiplier all-pass (S. K. Mitra, Digital Signal Processing, 4th
 * ed., §9.7 on all-pass realisations; the same form as used for polyphase IIR half-band and 90°
 * filters). This is exact and independent of block partitioning: every section is causal and its
 * state is carried between chunks.
 *
 * Why it is structured this way (measured on V8, Node 20; bench/generator.bench.mjs):
 * - One recursion alone is bound by its own latency (subtract, multiply, add on y[n−1]), so a
 *   chunk is run in passes that each take several sections of both branches at once: up to three
 *   first-order sections per branch (six independent recursions) or two of either order (four).
 *   The recursions of one pass overlap in the CPU; a designed voice network of 3 + 3 sections is
 *   one pass. The states of a pass live in locals for the whole chunk: keeping them in an array
 *   (a generic loop over sections) stores and reloads each state every sample and is 2–3× slower.
 * - Every loop over a chunk costs about a nanosecond per sample in V8 on its own (no
 *   vectorisation, a bounds check per access), so the pass count is kept small: the first pass
 *   reads the input (or the delay history) and adds the anti-denormal offset, the last pass
 *   removes it and writes the caller's arrays; there are no separate copy loops. Branch delays
 *   need no history copy either: the first pass runs in two parts, the first `max delay` samples
 *   from a small buffer that joins the previous chunk's tail to this chunk's head, the rest
 *   straight from the input, `delay` samples back.
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

/**
 * Where one pass reads and writes, for `n` samples j = 0…n−1. A pass reads `inI[offI + j] + add`
 * (and the same for Q) and writes `y − sub` to `outI[oo + j]`: the first pass reads the input with
 * `add` = the anti-denormal offset, the last writes the caller's arrays with `sub` = the offset,
 * the passes between run in place on the work arrays with both 0 (`v + 0` and `v − 0` are exact).
 * One object per runtime, filled before each pass (its fields are read once per pass).
 */
interface PassIo {
  inI: Float64Array;
  inQ: Float64Array;
  offI: number;
  offQ: number;
  add: number;
  outI: Float64Array;
  outQ: Float64Array;
  oo: number;
  sub: number;
  n: number;
}

/** A branch with no section at this pass: its samples move from input to output unchanged. */
function passThrough(
  inp: Float64Array,
  off: number,
  add: number,
  out: Float64Array,
  oo: number,
  sub: number,
  n: number,
): void {
  for (let j = 0; j < n; j++) out[oo + j] = inp[off + j]! + add - sub;
}

/**
 * One section of one branch over a chunk: `y = a·(x − y[n−m]) + x[n−m]`, reading
 * `inp[off + j] + add`, writing `y − sub` to `out[oo + j]`.
 */
function runSection(
  b: BranchState,
  s: number,
  inp: Float64Array,
  off: number,
  add: number,
  out: Float64Array,
  oo: number,
  sub: number,
  n: number,
): void {
  const a = b.coef[s]!;
  const st = b.st;
  const o = 4 * s;
  let x1 = st[o]!;
  let x2 = st[o + 1]!;
  let y1 = st[o + 2]!;
  let y2 = st[o + 3]!;
  if (b.order[s] === 1) {
    for (let j = 0; j < n; j++) {
      const xn = inp[off + j]! + add;
      const yn = a * (xn - y1) + x1;
      x1 = xn;
      y1 = yn;
      out[oo + j] = yn - sub;
    }
  } else {
    for (let j = 0; j < n; j++) {
      const xn = inp[off + j]! + add;
      const yn = a * (xn - y2) + x2;
      x2 = x1;
      x1 = xn;
      y2 = y1;
      y1 = yn;
      out[oo + j] = yn - sub;
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
function runQuad1(bi: BranchState, bq: BranchState, s: number, io: PassIo): void {
  const { inI, inQ, offI, offQ, add, outI, outQ, oo, sub, n } = io;
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
    const xi = inI[offI + j]! + add;
    const xq = inQ[offQ + j]! + add;
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
    outI[oo + j] = ui - sub;
    outQ[oo + j] = uq - sub;
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

/**
 * Sections s, s+1 and s+2 of both branches in one pass (all six first order): six independent
 * recursions per sample with all twelve states in locals. The loop-carried dependency of each
 * recursion is only its own y[n−1] (subtract, multiply, add); the six chains overlap, so a pass
 * costs about one chain's latency per sample for six sections. Keeping the states in locals (not
 * in an array) matters as much: a store and reload of each state per sample doubles the time.
 * Each recursion computes exactly what {@link runSection} computes.
 */
function runHex1(bi: BranchState, bq: BranchState, s: number, io: PassIo): void {
  const { inI, inQ, offI, offQ, add, outI, outQ, oo, sub, n } = io;
  const si = bi.st;
  const sq = bq.st;
  const o = 4 * s;
  const a0 = bi.coef[s]!;
  const a1 = bi.coef[s + 1]!;
  const a2 = bi.coef[s + 2]!;
  const b0 = bq.coef[s]!;
  const b1 = bq.coef[s + 1]!;
  const b2 = bq.coef[s + 2]!;
  let ix0 = si[o]!;
  let iy0 = si[o + 2]!;
  let ix1 = si[o + 4]!;
  let iy1 = si[o + 6]!;
  let ix2 = si[o + 8]!;
  let iy2 = si[o + 10]!;
  let qx0 = sq[o]!;
  let qy0 = sq[o + 2]!;
  let qx1 = sq[o + 4]!;
  let qy1 = sq[o + 6]!;
  let qx2 = sq[o + 8]!;
  let qy2 = sq[o + 10]!;
  for (let j = 0; j < n; j++) {
    const xi = inI[offI + j]! + add;
    const xq = inQ[offQ + j]! + add;
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
    const vi = a2 * (ui - iy2) + ix2;
    const vq = b2 * (uq - qy2) + qx2;
    ix2 = ui;
    iy2 = vi;
    qx2 = uq;
    qy2 = vq;
    outI[oo + j] = vi - sub;
    outQ[oo + j] = vq - sub;
  }
  si[o] = ix0;
  si[o + 2] = iy0;
  si[o + 4] = ix1;
  si[o + 6] = iy1;
  si[o + 8] = ix2;
  si[o + 10] = iy2;
  sq[o] = qx0;
  sq[o + 2] = qy0;
  sq[o + 4] = qx1;
  sq[o + 6] = qy1;
  sq[o + 8] = qx2;
  sq[o + 10] = qy2;
}

/** As {@link runQuad1} for four second-order (z⁻²) sections. */
function runQuad2(bi: BranchState, bq: BranchState, s: number, io: PassIo): void {
  const { inI, inQ, offI, offQ, add, outI, outQ, oo, sub, n } = io;
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
    const xi = inI[offI + j]! + add;
    const xq = inQ[offQ + j]! + add;
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
    outI[oo + j] = ui - sub;
    outQ[oo + j] = uq - sub;
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

/**
 * First-order section s of both branches in one pass (two independent recursions per loop).
 * Each recursion computes exactly what {@link runSection} computes.
 */
function runPair1(bi: BranchState, bq: BranchState, s: number, io: PassIo): void {
  const { inI, inQ, offI, offQ, add, outI, outQ, oo, sub, n } = io;
  const si = bi.st;
  const sq = bq.st;
  const o = 4 * s;
  const a0 = bi.coef[s]!;
  const b0 = bq.coef[s]!;
  let ix0 = si[o]!;
  let iy0 = si[o + 2]!;
  let qx0 = sq[o]!;
  let qy0 = sq[o + 2]!;
  for (let j = 0; j < n; j++) {
    const xi = inI[offI + j]! + add;
    const xq = inQ[offQ + j]! + add;
    const ti = a0 * (xi - iy0) + ix0;
    const tq = b0 * (xq - qy0) + qx0;
    ix0 = xi;
    iy0 = ti;
    qx0 = xq;
    qy0 = tq;
    outI[oo + j] = ti - sub;
    outQ[oo + j] = tq - sub;
  }
  si[o] = ix0;
  si[o + 2] = iy0;
  sq[o] = qx0;
  sq[o + 2] = qy0;
}

/**
 * First-order sections s and s+1 of branch `two` and section s of branch `one` in one pass (three
 * recursions per loop): the tail of a network whose branches differ by one section. Each recursion
 * computes exactly what {@link runSection} computes.
 */
function runTri1(
  two: BranchState,
  one: BranchState,
  s: number,
  inT: Float64Array,
  offT: number,
  outT: Float64Array,
  inO: Float64Array,
  offO: number,
  outO: Float64Array,
  io: PassIo,
): void {
  const { add, oo, sub, n } = io;
  const st = two.st;
  const so = one.st;
  const o = 4 * s;
  const a0 = two.coef[s]!;
  const a1 = two.coef[s + 1]!;
  const b0 = one.coef[s]!;
  let x0 = st[o]!;
  let y0 = st[o + 2]!;
  let x1 = st[o + 4]!;
  let y1 = st[o + 6]!;
  let u0 = so[o]!;
  let v0 = so[o + 2]!;
  for (let j = 0; j < n; j++) {
    const xt = inT[offT + j]! + add;
    const xo = inO[offO + j]! + add;
    const t = a0 * (xt - y0) + x0;
    const w = b0 * (xo - v0) + u0;
    x0 = xt;
    y0 = t;
    u0 = xo;
    v0 = w;
    const r = a1 * (t - y1) + x1;
    x1 = t;
    y1 = r;
    outT[oo + j] = r - sub;
    outO[oo + j] = w - sub;
  }
  st[o] = x0;
  st[o + 2] = y0;
  st[o + 4] = x1;
  st[o + 6] = y1;
  so[o] = u0;
  so[o + 2] = v0;
}

/** Plan step kinds: which pass kernel runs at section index s. */
const HEX1 = 0;
const QUAD1 = 1;
const QUAD2 = 2;
const SINGLES = 3;
const THROUGH = 4;
const PAIR1 = 5;
/** Sections s, s+1 of I and s of Q (first order). */
const TRI1_I = 6;
/** Sections s, s+1 of Q and s of I (first order). */
const TRI1_Q = 7;

/** True when sections s…s+count−1 of both branches exist and all have order `order`. */
function uniform(bi: BranchState, bq: BranchState, s: number, count: number, order: number): boolean {
  if (s + count > bi.order.length || s + count > bq.order.length) return false;
  for (let k = s; k < s + count; k++) if (bi.order[k] !== order || bq.order[k] !== order) return false;
  return true;
}

/**
 * True when branch `two` ends with first-order sections s, s+1 and branch `one` with a first-order
 * section s (the tail of branches that differ by one section).
 */
function tail(two: BranchState, one: BranchState, s: number): boolean {
  return (
    two.order.length === s + 2 &&
    one.order.length === s + 1 &&
    two.order[s] === 1 &&
    two.order[s + 1] === 1 &&
    one.order[s] === 1
  );
}

/**
 * Execution plan, made once: greedily the widest pass that fits at each section index (six
 * first-order sections, then four of either order, then the three-section tail of branches that
 * differ by one, then a pair, else each branch's section on its own).
 */
function makePlan(bi: BranchState, bq: BranchState): { kind: Uint8Array; index: Int32Array } {
  const kinds: number[] = [];
  const idx: number[] = [];
  const ni = bi.order.length;
  const nq = bq.order.length;
  if (ni === 0 && nq === 0) return { kind: Uint8Array.of(THROUGH), index: Int32Array.of(0) };
  let s = 0;
  while (s < Math.max(ni, nq)) {
    idx.push(s);
    if (uniform(bi, bq, s, 3, 1)) {
      kinds.push(HEX1);
      s += 3;
    } else if (uniform(bi, bq, s, 2, 1)) {
      kinds.push(QUAD1);
      s += 2;
    } else if (uniform(bi, bq, s, 2, 2)) {
      kinds.push(QUAD2);
      s += 2;
    } else if (tail(bi, bq, s)) {
      kinds.push(TRI1_I);
      s += 2;
    } else if (tail(bq, bi, s)) {
      kinds.push(TRI1_Q);
      s += 2;
    } else if (uniform(bi, bq, s, 1, 1)) {
      kinds.push(PAIR1);
      s += 1;
    } else {
      kinds.push(SINGLES);
      s += 1;
    }
  }
  return { kind: Uint8Array.from(kinds), index: Int32Array.from(idx) };
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
  const dI = branches.i.delay;
  const dQ = branches.q.delay;
  const keep = Math.max(dI, dQ);
  const plan = makePlan(newBranch(branches.i), newBranch(branches.q));
  const steps = plan.kind.length;
  const ni = branches.i.sections.length;
  const nq = branches.q.sections.length;
  // Work arrays between passes (shared by clones: they hold nothing between calls).
  const wi = new Float64Array(RUNTIME_CHUNK);
  const wq = new Float64Array(RUNTIME_CHUNK);
  const io: PassIo = {
    inI: wi,
    inQ: wq,
    offI: 0,
    offQ: 0,
    add: 0,
    outI: wi,
    outQ: wq,
    oo: 0,
    sub: 0,
    n: 0,
  };

  /** Runs plan step k over `n` samples (the I/O in `io`, set by the caller but for add/sub). */
  const step = (bi: BranchState, bq: BranchState, k: number): void => {
    io.add = k === 0 ? ANTI_DENORMAL_OFFSET : 0;
    io.sub = k === steps - 1 ? ANTI_DENORMAL_OFFSET : 0;
    const s = plan.index[k]!;
    const kind = plan.kind[k];
    if (kind === HEX1) runHex1(bi, bq, s, io);
    else if (kind === QUAD1) runQuad1(bi, bq, s, io);
    else if (kind === QUAD2) runQuad2(bi, bq, s, io);
    else if (kind === PAIR1) runPair1(bi, bq, s, io);
    else if (kind === TRI1_I) runTri1(bi, bq, s, io.inI, io.offI, io.outI, io.inQ, io.offQ, io.outQ, io);
    else if (kind === TRI1_Q) runTri1(bq, bi, s, io.inQ, io.offQ, io.outQ, io.inI, io.offI, io.outI, io);
    else {
      const { inI, inQ, offI, offQ, add, outI, outQ, oo, sub, n } = io;
      if (s < ni) runSection(bi, s, inI, offI, add, outI, oo, sub, n);
      else passThrough(inI, offI, add, outI, oo, sub, n);
      if (s < nq) runSection(bq, s, inQ, offQ, add, outQ, oo, sub, n);
      else passThrough(inQ, offQ, add, outQ, oo, sub, n);
    }
  };

  // `head` (branch delays only): the last `keep` input samples, then room for `keep` more.
  const make = (bi: BranchState, bq: BranchState, head: Float64Array): NetworkRuntime => ({
    kind: 'allpass',
    multipliesPerSample,
    process(x, n, outI, outQ) {
      const last = steps === 1;
      io.outI = last ? outI : wi;
      io.outQ = last ? outQ : wq;
      if (keep === 0) {
        // The first pass reads the input itself.
        io.inI = x;
        io.inQ = x;
        io.offI = 0;
        io.offQ = 0;
        io.oo = 0;
        io.n = n;
        step(bi, bq, 0);
      } else {
        // Branch delays without copying the chunk into a history: the first pass runs in two
        // parts. Samples 0…m−1 (m = min(n, keep)) may reach into the previous chunk: they read
        // `head`, the last `keep` samples followed by this chunk's first m. Samples m…n−1 read
        // the input itself, `d` samples back. Splitting a pass is exact: its states carry over.
        const m = Math.min(n, keep);
        for (let j = 0; j < m; j++) head[keep + j] = x[j]!;
        io.inI = head;
        io.inQ = head;
        io.offI = keep - dI;
        io.offQ = keep - dQ;
        io.oo = 0;
        io.n = m;
        step(bi, bq, 0);
        if (n > m) {
          io.inI = x;
          io.inQ = x;
          io.offI = m - dI;
          io.offQ = m - dQ;
          io.oo = m;
          io.n = n - m;
          step(bi, bq, 0);
        }
        // Keep the last `keep` samples for the next chunk.
        if (n >= keep) for (let j = 0; j < keep; j++) head[j] = x[n - keep + j]!;
        else head.copyWithin(0, n, n + keep);
      }
      // The other passes, in place on the work arrays; the last writes the caller's arrays.
      io.inI = wi;
      io.inQ = wq;
      io.offI = 0;
      io.offQ = 0;
      io.oo = 0;
      io.n = n;
      for (let k = 1; k < steps; k++) {
        if (k === steps - 1) {
          io.outI = outI;
          io.outQ = outQ;
        }
        step(bi, bq, k);
      }
    },
    reset() {
      bi.st.fill(0);
      bq.st.fill(0);
      head.fill(0);
    },
    clone() {
      return make(copyBranch(bi), copyBranch(bq), head.slice());
    },
  });
  return make(newBranch(branches.i), newBranch(branches.q), new Float64Array(2 * keep));
}
