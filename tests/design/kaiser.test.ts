import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import {
  besselI0,
  kaiserAttenuation,
  kaiserBeta,
  kaiserOrder,
  kaiserWindow,
} from '../../src/design/kaiser.js';
import { expectOrthotoneError } from '../support/errors.js';

// [C] scipy 1.10.1 values, made by tests/fixtures/scipy/gen_kaiser.py (command in the fixture README).
const fx = JSON.parse(readFileSync(new URL('../fixtures/scipy/kaiser.json', import.meta.url), 'utf8')) as {
  i0: [number, number][];
  beta: [number, number][];
  order: [number, number, number, number][];
  windows: [number, number, number[]][];
};

describe('kaiserBeta', () => {
  it('gives 6.20426 for 65 dB', () => {
    // [P] scipy documentation, scipy.signal.kaiser_beta example: kaiser_beta(65) = 6.20426.
    expect(kaiserBeta(65)).toBeCloseTo(6.20426, 10);
  });
  it('uses the 21…50 dB branch 0.5842(A−21)^0.4 + 0.07886(A−21)', () => {
    // [P] Oppenheim & Schafer, DTSP §7.5.3 (formula); value by hand: 40 dB → 3.39532…
    const a = 40;
    expect(kaiserBeta(a)).toBeCloseTo(0.5842 * 19 ** 0.4 + 0.07886 * 19, 12);
    expect(kaiserBeta(a)).toBeGreaterThan(3.39);
    expect(kaiserBeta(a)).toBeLessThan(3.4);
    expect(kaiserBeta(20)).toBe(0);
  });
  it('matches scipy.signal.kaiser_beta on both branches and below 21 dB', () => {
    // [C] scipy kaiser_beta, tests/fixtures/scipy/kaiser.json
    for (const [a, b] of fx.beta) expect(kaiserBeta(a)).toBeCloseTo(b, 12);
  });
});

describe('kaiserOrder', () => {
  it('gives (167, 6.20426) for 65 dB and width 24/500', () => {
    // [P] scipy documentation, scipy.signal.kaiserord example: kaiserord(65, 24/500) = (167, 6.20426).
    const r = kaiserOrder(65, 24 / 500);
    expect(r.numtaps).toBe(167);
    expect(r.beta).toBeCloseTo(6.20426, 10);
  });
  it('matches scipy.signal.kaiserord', () => {
    // [C] scipy kaiserord, tests/fixtures/scipy/kaiser.json
    for (const [a, w, n, b] of fx.order) {
      const r = kaiserOrder(a, w);
      expect(r.numtaps).toBe(n);
      expect(r.beta).toBeCloseTo(b, 12);
    }
  });
  it('is the inverse of kaiserAttenuation', () => {
    // Kaiser 1974: A = 2.285·(N−1)·π·Δ + 7.95; the length for that A is N again.
    expect(kaiserOrder(kaiserAttenuation(101, 0.05) - 1e-9, 0.05).numtaps).toBe(101);
  });
  it('rejects attenuation below 8 dB and widths outside (0, 1], naming the value', () => {
    expect(() => kaiserOrder(5, 0.1)).toThrow(/attenuationDb 5 is below 8 dB/);
    expect(() => kaiserOrder(60, 0)).toThrow(/transitionWidth 0 must be greater than 0/);
    expect(() => kaiserOrder(60, 1.5)).toThrow(/transitionWidth 1.5/);
    expectOrthotoneError(() => kaiserOrder(Number.NaN, 0.1), 'INVALID_ARGUMENT', /NaN/);
  });
});

describe('besselI0 and kaiserWindow', () => {
  it('I0 matches scipy.special.i0 to 1e-14 relative', () => {
    // [C] scipy.special.i0; I0(1) = 1.266065878 also in Abramowitz & Stegun Table 9.8 [P].
    for (const [x, v] of fx.i0) expect(Math.abs(besselI0(x) - v) / v).toBeLessThan(1e-14);
  });
  it('matches scipy.signal.windows.kaiser', () => {
    // [C] scipy.signal.windows.kaiser(M, beta), tests/fixtures/scipy/kaiser.json
    for (const [m, b, w] of fx.windows) {
      const ours = kaiserWindow(m, b);
      expect(ours.length).toBe(m);
      for (let i = 0; i < m; i++) expect(ours[i]).toBeCloseTo(w[i]!, 13);
    }
  });
  it('is symmetric with a peak of 1 and rejects bad arguments', () => {
    const w = kaiserWindow(31, 8);
    for (let i = 0; i < 31; i++) expect(w[i]).toBe(w[30 - i]);
    expect(w[15]).toBe(1);
    expect(kaiserWindow(1, 5)[0]).toBe(1);
    expect(() => kaiserWindow(0, 5)).toThrow(/length 0/);
    expect(() => kaiserWindow(10, -1)).toThrow(/beta -1 must be 0 or greater/);
  });
});
