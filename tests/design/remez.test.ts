import { describe, expect, it } from 'vitest';
import { evaluateHilbertFir } from '../../src/design/hilbert-fir.js';
import { remez, remezExchange } from '../../src/design/remez.js';
import { expectOrthotoneError } from '../support/errors.js';
import { loadRemezFixture } from '../support/remez-fixture.js';

// [C] scipy 1.10.1 scipy.signal.remez, made by tests/fixtures/scipy/gen_remez_hilbert.py (command in
// tests/fixtures/scipy/README.md).
const fixture = loadRemezFixture();

/** Amplitude of a type III filter (scipy sign: A = 2·Σ h[c−n]·sin(nω)) at f cycles/sample. */
function hilbertAmplitude(taps: ArrayLike<number>, f: number): number {
  const c = (taps.length - 1) / 2;
  let a = 0;
  for (let n = 1; n <= c; n++) a += 2 * taps[c - n]! * Math.sin(2 * Math.PI * f * n);
  return a;
}

/** Zero-phase amplitude of a symmetric filter at f cycles/sample. */
function symmetricAmplitude(taps: ArrayLike<number>, f: number): number {
  const c = (taps.length - 1) / 2;
  let a = 0;
  for (let k = 0; k < taps.length; k++) a += taps[k]! * Math.cos(2 * Math.PI * f * (k - c));
  return a;
}

describe('remez: published Hilbert designs', () => {
  it('matches scipy remez(11, [0.1, 0.4], [1], hilbert): taps and ripple', () => {
    // [C] Computed with scipy 1.10.1 scipy.signal.remez (case hilbert-11-sym of remez_hilbert.json, made
    // by tests/fixtures/scipy/gen_remez_hilbert.py; command in tests/fixtures/scipy/README.md). scipy's
    // own TestRemez.test_hilbert makes the same call but checks only the structure and |H| − 1 < 0.015:
    // it publishes no tap values. Taps ±0.037965444084, ±0.142675532840, ±0.610295121540, zeros between.
    const sc = fixture.cases.find((c) => c.name === 'hilbert-11-sym')!;
    expect(sc.converged).toBe(true);
    const r = remez(11, [0.1, 0.4], [1], { type: 'hilbert' });
    const want = sc.taps;
    for (let i = 0; i < 6; i++) {
      expect(Math.abs(r.taps[i]! - want[i]!)).toBeLessThan(1e-10);
      expect(r.taps[10 - i]! + r.taps[i]!).toBe(0);
    }
    expect(r.taps[5]).toBe(0);
    expect(r.converged).toBe(true);
    // In-band ripple max |A − 1| over [0.1, 0.4]: scipy's taps on a 200 001-point freqz grid give
    // 0.0112119 (fixture rippleDense, [C]).
    let ripple = 0;
    for (let k = 0; k <= 30000; k++)
      ripple = Math.max(ripple, Math.abs(hilbertAmplitude(r.taps, 0.1 + (0.3 * k) / 30000) - 1));
    expect(ripple).toBeCloseTo(sc.rippleDense!, 6);
    // The levelled deviation on the grid is a lower bound of the continuous ripple.
    expect(r.deviation).toBeLessThanOrEqual(ripple);
    expect(r.deviation).toBeGreaterThan(0.011);
  });

  it('reproduces remez(31, [0.05, 0.45], [1], hilbert) taps and ripple 2.7558e-3', () => {
    // [C] computed with scipy 1.10.1 remez (tests/fixtures/scipy/remez_hilbert.json, case hilbert-31-sym): taps at offsets +1, +3, … +15 in scipy's sign.
    const want = [
      -0.631353640882, -0.196831535624, -0.10303763642, -0.05955157557, -0.034401008019, -0.018835806998,
      -0.009282101549, -0.00419563589,
    ];
    const r = remez(31, [0.05, 0.45], [1], { type: 'hilbert' });
    for (let j = 0; j < 8; j++) {
      expect(Math.abs(r.taps[16 + 2 * j]! - want[j]!)).toBeLessThan(1e-11);
      expect(Math.abs(r.taps[15 + 2 * j]!)).toBeLessThan(1e-14); // even offsets: zero to round-off
    }
    const ev = evaluateHilbertFir(
      Array.from(r.taps, (v) => -v),
      1,
      [0.05, 0.45],
    );
    expect(ev.ripple).toBeCloseTo(2.7558e-3, 6);
  });
});

describe('remez: McClellan–Parks–Rabiner sample filter', () => {
  it('reproduces the 32-tap bandpass h(1..16) of the 1973 program listing', () => {
    // [P] McClellan, Parks & Rabiner, IEEE Trans. Audio Electroacoust. AU-21(6), 1973, example 1
    // (McClellan, Parks & Rabiner, IEEE Trans. Audio Electroacoust. 21(6):506, 1973): 32 taps, bands 0–0.1, 0.2–0.35, 0.425–0.5, desired 0/1/0, weights 10/1/10.
    // Even length: a type II problem (zero at Nyquist). The listing has ~8 printed digits from a
    // single-precision era program; scipy agrees with it to about 1e-8.
    const want = [
      -0.57534026e-2, 0.99026691e-3, 0.75733471e-2, -0.65141204e-2, 0.13960509e-1, 0.22951644e-2,
      -0.19994041e-1, 0.71369656e-2, -0.39657373e-1, 0.11260066e-1, 0.66233635e-1, -0.10497202e-1,
      0.8513616e-1, -0.12024988, -0.2967858, 0.30410913,
    ];
    const r = remez(32, [0, 0.1, 0.2, 0.35, 0.425, 0.5], [0, 1, 0], { weight: [10, 1, 10] });
    for (let i = 0; i < 16; i++) {
      expect(Math.abs(r.taps[i]! - want[i]!)).toBeLessThan(1e-7);
      expect(r.taps[31 - i]).toBe(r.taps[i]);
    }
  });

  it('reproduces the MATLAB type II low-pass quoted in scipy TestRemez.test_compare', () => {
    // [P] scipy signal/tests/test_fir_filter_design.py TestRemez.test_compare: MATLAB
    // remez(11, [0 .3 .5 1], [1 1 0 0]) = scipy remez(12, [0, 0.3, 0.5, 1], [1, 0], fs=2).
    const k = [
      0.02459027051844, -0.041314581814658, -0.075943803756711, -0.00353091123104, 0.193140296954975,
      0.373400753484939, 0.373400753484939, 0.193140296954975, -0.00353091123104, -0.075943803756711,
      -0.041314581814658, 0.02459027051844,
    ];
    const r = remez(12, [0, 0.3, 0.5, 1], [1, 0], { fs: 2 });
    for (let i = 0; i < 12; i++) expect(Math.abs(r.taps[i]! - k[i]!)).toBeLessThan(1e-9);
  });
});

describe('remez: scipy fixtures', () => {
  it(`matches scipy ${fixture.scipy} on every converged case to 1e-9`, () => {
    expect(fixture.cases.length).toBeGreaterThanOrEqual(15);
    for (const c of fixture.cases) {
      const opts = { type: c.type, fs: c.fs, ...(c.weight ? { weight: c.weight } : {}) };
      const r = remez(c.numtaps, c.bands, c.desired, opts);
      expect(r.taps.length, c.name).toBe(c.numtaps);
      expect(r.converged, c.name).toBe(true);
      if (c.converged) {
        let err = 0;
        for (let i = 0; i < c.numtaps; i++) err = Math.max(err, Math.abs(r.taps[i]! - c.taps[i]!));
        expect(err, c.name).toBeLessThan(1e-9);
      } else if (c.rippleDense !== undefined) {
        // Where scipy stopped short, compare the ripple instead.
        const lo = c.bands[0]! / c.fs;
        const hi = c.bands[1]! / c.fs;
        const ev = evaluateHilbertFir(
          Array.from(r.taps, (v) => -v),
          1,
          [lo, hi],
        );
        expect(ev.ripple, c.name).toBeLessThanOrEqual(c.rippleDense * 1.01);
      }
    }
  });
});

describe('remez: properties of the result', () => {
  it('is equiripple: weighted error peaks equal the deviation in every band', () => {
    // Alternation theorem (Parks & McClellan 1972): the optimum's weighted error reaches ±δ at r+1
    // points and never exceeds it. Checked on a grid 8× denser than the design grid.
    const r = remez(45, [0, 0.1, 0.15, 0.3, 0.35, 0.5], [0, 1, 0], { weight: [1, 2, 1] });
    const bands: [number, number, number, number][] = [
      [0, 0.1, 0, 1],
      [0.15, 0.3, 1, 2],
      [0.35, 0.5, 0, 1],
    ];
    for (const [lo, hi, d, w] of bands) {
      let m = 0;
      for (let k = 0; k <= 4000; k++) {
        const f = lo + ((hi - lo) * k) / 4000;
        m = Math.max(m, w * Math.abs(symmetricAmplitude(r.taps, f) - d));
      }
      expect(m / r.deviation).toBeGreaterThan(0.999);
      // between grid points the error may exceed δ slightly (grid density 16)
      expect(m / r.deviation).toBeLessThan(1.03);
    }
  });
  it('gives exactly (anti)symmetric taps for all four types', () => {
    const cases: [number, 'bandpass' | 'hilbert'][] = [
      [25, 'bandpass'],
      [24, 'bandpass'],
      [25, 'hilbert'],
      [24, 'hilbert'],
    ];
    for (const [n, type] of cases) {
      const bands = type === 'bandpass' ? [0, 0.2, 0.3, 0.5] : [0.05, 0.45];
      const desired = type === 'bandpass' ? [1, 0] : [1];
      const r = remez(n, bands, desired, { type });
      const s = type === 'bandpass' ? 1 : -1;
      for (let i = 0; i < n; i++) expect(r.taps[n - 1 - i]! - s * r.taps[i]!).toBe(0);
    }
  });
  it('takes a handful of iterations on a long Hilbert design', () => {
    const r = remez(255, [300, 23700], [1], { type: 'hilbert', fs: 48000 });
    expect(r.converged).toBe(true);
    expect(r.iterations).toBeLessThanOrEqual(10);
  });
});

describe('remez: errors', () => {
  it('rejects bad specifications with INVALID_ARGUMENT naming the value', () => {
    expectOrthotoneError(() => remez(10.5, [0, 0.2, 0.3, 0.5], [1, 0]), 'INVALID_ARGUMENT', /numtaps 10.5/);
    expectOrthotoneError(() => remez(1, [0, 0.2, 0.3, 0.5], [1, 0]), 'INVALID_ARGUMENT', /numtaps 1 /);
    expectOrthotoneError(
      () => remez(21, [0, 0.2, 0.3], [1, 0]),
      'INVALID_ARGUMENT',
      /even number of entries/,
    );
    expectOrthotoneError(
      () => remez(21, [0, 0.2, 0.3, 0.6], [1, 0]),
      'INVALID_ARGUMENT',
      /bands\[3\] = 0.6 .*fs\/2 = 0.5/,
    );
    expectOrthotoneError(
      () => remez(21, [0, 3000, 3500, 5000], [1, 0], { fs: 8000 }),
      'INVALID_ARGUMENT',
      /5000.*4000/,
    );
    expectOrthotoneError(
      () => remez(21, [0, 0.3, 0.2, 0.5], [1, 0]),
      'INVALID_ARGUMENT',
      /bands\[2\] = 0.2 is not above/,
    );
    expectOrthotoneError(
      () => remez(21, [0, 0.2, 0.3, 0.5], [1]),
      'INVALID_ARGUMENT',
      /one value per band \(2/,
    );
    expectOrthotoneError(
      () => remez(21, [0, 0.2, 0.3, 0.5], [1, 0], { weight: [1, -2] }),
      'INVALID_ARGUMENT',
      /weight\[1\] -2 must be .* greater than 0/,
    );
    expectOrthotoneError(
      () => remez(21, [0, 0.2, 0.3, 0.5], [1, Number.NaN]),
      'INVALID_ARGUMENT',
      /desired\[1\] NaN/,
    );
    expectOrthotoneError(
      () => remez(21, [0, 0.2, 0.3, 0.5], [1, 0], { fs: Number.NaN }),
      'INVALID_ARGUMENT',
      /fs NaN/,
    );
    expectOrthotoneError(
      () => remez(21, [0, 0.2, 0.3, 0.5], [1, 0], { gridDensity: 0 }),
      'INVALID_ARGUMENT',
      /gridDensity 0/,
    );
    expectOrthotoneError(
      () => remez(21, [0, 0.2, 0.3, 0.5], [1, 0], { type: 'lowpass' as 'bandpass' }),
      'INVALID_ARGUMENT',
      /type "lowpass"/,
    );
    expectOrthotoneError(
      () => remez(201, [0.1, 0.1001], [1], { type: 'hilbert' }),
      'INVALID_ARGUMENT',
      /too narrow/,
    );
  });
  it('throws NO_CONVERGENCE with advice when the iteration cap is hit, and remezExchange returns the state', () => {
    expectOrthotoneError(
      () => remez(127, [0.01, 0.3], [1], { type: 'hilbert', maxIterations: 1 }),
      'NO_CONVERGENCE',
      /did not converge in 1 iterations.*raise maxIterations/,
    );
    const r = remezExchange(127, [0.01, 0.3], [1], { type: 'hilbert', maxIterations: 1 });
    expect(r.converged).toBe(false);
    expect(r.taps.every(Number.isFinite)).toBe(true);
  });
  it('flags a design whose optimum is below round-off instead of calling it converged', () => {
    // 768 taps for a band 600 Hz from DC and Nyquist at 48 kHz: the optimum deviation is far below
    // double precision, so no exchange can find it.
    const r = remezExchange(768, [600 / 48000, 0.5], [1], { type: 'hilbert' });
    expect(r.converged).toBe(false);
    expect(r.roundOffLimited).toBe(true);
    expectOrthotoneError(
      () => remez(768, [600 / 48000, 0.5], [1], { type: 'hilbert' }),
      'NO_CONVERGENCE',
      /round-off/,
    );
  });
});
