import { describe, expect, it } from 'vitest';
import { createRng } from '../../src/core/rng.js';
import {
  allpassBranchResponseInto,
  firResponse,
  firResponseInto,
  goldenSectionMax,
} from '../../src/design/response.js';

/** The tests' own DTFT sum relative to the centre, term by term with fresh cos/sin (no recurrence). */
function directSum(taps: ArrayLike<number>, w: number): [number, number] {
  const d = (taps.length - 1) / 2;
  let re = 0;
  let im = 0;
  for (let k = 0; k < taps.length; k++) {
    re += taps[k]! * Math.cos(w * (k - d));
    im -= taps[k]! * Math.sin(w * (k - d));
  }
  return [re, im];
}

describe('the one response evaluator (src/design/response.ts)', () => {
  it('matches closed forms of short FIRs, odd and even length', () => {
    // Textbook closed forms (Oppenheim & Schafer, Discrete-Time Signal Processing §2.7):
    // [1, 0, −1] about its centre: e^{jω} − e^{−jω} = 2j·sin ω; [1, 1]: 2·cos(ω/2);
    // [1, 2, 1]: 2 + 2·cos ω.
    for (const w of [0.1, 0.7, 1.3, 2.9]) {
      const a = firResponse([1, 0, -1], w);
      expect(a.re).toBeCloseTo(0, 14);
      expect(a.im).toBeCloseTo(2 * Math.sin(w), 14);
      const b = firResponse([1, 1], w);
      expect(b.re).toBeCloseTo(2 * Math.cos(w / 2), 14);
      expect(b.im).toBeCloseTo(0, 14);
      const c = firResponse([1, 2, 1], w);
      expect(c.re).toBeCloseTo(2 + 2 * Math.cos(w), 14);
      expect(c.im).toBeCloseTo(0, 14);
    }
  });

  it('agrees with a direct DTFT sum for long random filters (the rotating phasor stays accurate)', () => {
    const rng = createRng(13);
    for (const n of [255, 1000, 4095]) {
      const taps = Array.from({ length: n }, () => rng.uniform() - 0.5);
      const out = new Float64Array(4);
      for (const w of [0.013, 0.5, 1.5707, 3.1]) {
        firResponseInto(taps, w, out, 2);
        const [re, im] = directSum(taps, w);
        const scale = Math.sqrt(n);
        expect(Math.abs(out[2]! - re) / scale).toBeLessThan(1e-12);
        expect(Math.abs(out[3]! - im) / scale).toBeLessThan(1e-12);
      }
    }
  });

  it('gives a first-order all-pass section unit gain and its closed-form phase', () => {
    // H = (a + e^{−jω})/(1 + a·e^{−jω}): |H| = 1, arg H = −ω + 2·atan(a·sin ω / (1 + a·cos ω))
    // (Regalia, Mitra & Vaidyanathan, Proc. IEEE 76(1), 1988, first-order all-pass).
    const out = new Float64Array(2);
    for (const a of [-0.9, -0.3, 0.4, 0.95]) {
      for (const w of [0.05, 1, 2.5]) {
        allpassBranchResponseInto({ delay: 2, sections: [{ order: 1, a }] }, w, out);
        expect(Math.hypot(out[0]!, out[1]!)).toBeCloseTo(1, 13);
        const want = -2 * w - w + 2 * Math.atan((a * Math.sin(w)) / (1 + a * Math.cos(w)));
        const got = Math.atan2(out[1]!, out[0]!);
        const diff = Math.atan2(Math.sin(got - want), Math.cos(got - want));
        expect(Math.abs(diff)).toBeLessThan(1e-12);
      }
    }
  });

  it('golden-section search finds the peak of a smooth function inside its bracket', () => {
    // f(x) = −(x − 0.3712)² + 5 has its maximum 5 at 0.3712 (Kiefer 1953: bracket shrinks by 1/φ).
    const g = goldenSectionMax((x) => 5 - (x - 0.3712) ** 2, 0, 1);
    expect(g.at).toBeCloseTo(0.3712, 7);
    expect(g.value).toBeCloseTo(5, 12);
    // With few steps the bracket is still wide: 5 steps leave it 1/φ⁵ ≈ 0.09 wide.
    const coarse = goldenSectionMax((x) => 5 - (x - 0.3712) ** 2, 0, 1, 5, 0);
    expect(Math.abs(coarse.at - 0.3712)).toBeLessThan(0.09);
    expect(Math.abs(coarse.at - 0.3712)).toBeGreaterThan(1e-4);
  });
});
