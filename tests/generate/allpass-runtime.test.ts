import { describe, expect, it } from 'vitest';
import { createRng } from '../../src/core/rng.js';
import type { AllpassBranch } from '../../src/design/network.js';
import { createAllpassRuntime } from '../../src/generate/allpass-runtime.js';
import { RUNTIME_CHUNK } from '../../src/generate/network-runtime.js';

/** Count of samples whose 64-bit patterns differ. */
function bitDiffs(a: Float64Array, b: Float64Array): number {
  const ua = new BigUint64Array(a.buffer, a.byteOffset, a.length);
  const ub = new BigUint64Array(b.buffer, b.byteOffset, b.length);
  let d = Math.abs(a.length - b.length);
  for (let k = 0; k < Math.min(a.length, b.length); k++) if (ua[k] !== ub[k]) d++;
  return d;
}

/**
 * Reference: each branch straight from its transfer function (src/design/network.ts), one difference
 * equation per section, `y[n] = a·x[n] + x[n−m] − a·y[n−m]` for `H(z) = (a + z⁻ᵐ)/(1 + a·z⁻ᵐ)`,
 * run sample by sample over the whole signal, then the branch delay. Written here, independent of
 * the runtime's one-multiply form, its passes and its anti-denormal offset.
 */
function referenceBranch(b: AllpassBranch, x: Float64Array): Float64Array {
  let v = Float64Array.from(x);
  for (const s of b.sections) {
    const m = s.order;
    const y = new Float64Array(v.length);
    for (let n = 0; n < v.length; n++) {
      const xm = n >= m ? v[n - m]! : 0;
      const ym = n >= m ? y[n - m]! : 0;
      y[n] = s.a * v[n]! + xm - s.a * ym;
    }
    v = y;
  }
  const out = new Float64Array(v.length);
  for (let n = b.delay; n < v.length; n++) out[n] = v[n - b.delay]!;
  return out;
}

/** Runs the runtime over `x` in chunks of `chunk` samples (≤ RUNTIME_CHUNK). */
function runChunks(rt: ReturnType<typeof createAllpassRuntime>, x: Float64Array, chunk: number) {
  const i = new Float64Array(x.length);
  const q = new Float64Array(x.length);
  const bi = new Float64Array(RUNTIME_CHUNK);
  const bq = new Float64Array(RUNTIME_CHUNK);
  for (let o = 0; o < x.length; o += chunk) {
    const n = Math.min(chunk, x.length - o);
    rt.process(x.subarray(o, o + n), n, bi, bq);
    i.set(bi.subarray(0, n), o);
    q.set(bq.subarray(0, n), o);
  }
  return { i, q };
}

const first = (a: number) => ({ order: 1 as const, a });
const second = (a: number) => ({ order: 2 as const, a });

// Shapes chosen so every pass kind of the runtime's plan runs: six first-order sections at once,
// four first-order, four z⁻², a single section per branch, a branch with no section left at a pass,
// delays on either branch, and no sections at all. Coefficients: arbitrary stable values.
const shapes: [string, { i: AllpassBranch; q: AllpassBranch }][] = [
  [
    '3 + 3 first order (one six-section pass)',
    {
      i: { delay: 0, sections: [first(-0.95), first(-0.83), first(-0.22)] },
      q: { delay: 0, sections: [first(-0.98), first(-0.91), first(-0.68)] },
    },
  ],
  [
    '5 + 4 first order, delay on i (six, then four, then a lone section)',
    {
      i: { delay: 2, sections: [first(0.9), first(-0.5), first(0.3), first(0.7), first(-0.1)] },
      q: { delay: 0, sections: [first(0.6), first(-0.2), first(0.85), first(0.4)] },
    },
  ],
  [
    '4 + 4 z⁻², delay on q',
    {
      i: { delay: 0, sections: [second(-0.16), second(-0.73), second(-0.94), second(-0.99)] },
      q: { delay: 1, sections: [second(-0.48), second(-0.88), second(-0.98), second(-0.997)] },
    },
  ],
  [
    'mixed orders, 3 + 2',
    {
      i: { delay: 1, sections: [first(0.5), second(-0.3), first(0.8)] },
      q: { delay: 3, sections: [second(0.2), first(-0.7)] },
    },
  ],
  ['no sections (pure delays)', { i: { delay: 0, sections: [] }, q: { delay: 2, sections: [] } }],
];

describe('all-pass runtime against the transfer function, every pass kind', () => {
  const len = 2000;
  const rng = createRng(7);
  const x = new Float64Array(len);
  for (let k = 0; k < len; k++) x[k] = 0.6 * Math.sin(0.05 * k) + 0.3 * (rng.uniform() - 0.5);
  for (const [name, branches] of shapes) {
    it(`${name}: matches the difference equations within 1e-12`, () => {
      const { i, q } = runChunks(createAllpassRuntime(branches), x, RUNTIME_CHUNK);
      const ri = referenceBranch(branches.i, x);
      const rq = referenceBranch(branches.q, x);
      let worst = 0;
      for (let n = 0; n < len; n++) {
        worst = Math.max(worst, Math.abs(i[n]! - ri[n]!), Math.abs(q[n]! - rq[n]!));
      }
      expect(worst).toBeLessThan(1e-12);
      // and it is not trivially zero
      expect(Math.max(...i.map(Math.abs))).toBeGreaterThan(0.1);
    });
    it(`${name}: chunks of 1, 7, 128 and a clone made mid-stream are bit-identical`, () => {
      const ref = runChunks(createAllpassRuntime(branches), x, RUNTIME_CHUNK);
      for (const c of [1, 7]) {
        const r = runChunks(createAllpassRuntime(branches), x, c);
        expect(bitDiffs(r.i, ref.i)).toBe(0);
        expect(bitDiffs(r.q, ref.q)).toBe(0);
      }
      const rt = createAllpassRuntime(branches);
      const head = runChunks(rt, x.subarray(0, 1001), 91);
      const tail = runChunks(rt.clone(), x.subarray(1001), 128);
      const joinedI = new Float64Array(len);
      joinedI.set(head.i);
      joinedI.set(tail.i, 1001);
      const joinedQ = new Float64Array(len);
      joinedQ.set(head.q);
      joinedQ.set(tail.q, 1001);
      expect(bitDiffs(joinedI, ref.i)).toBe(0);
      expect(bitDiffs(joinedQ, ref.q)).toBe(0);
    });
  }
});
