import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  designHilbertFir,
  evaluateHilbertFir,
  hilbertRippleFromSuppression,
  hilbertSuppressionFromRipple,
  kaiserHilbertTaps,
} from '../../src/design/hilbert-fir.js';
import type { FirNetwork } from '../../src/design/network.js';
import { expectOrthotoneError } from '../support/errors.js';
import { ownSweep } from '../support/network-response.js';
import { loadRemezFixture } from '../support/remez-fixture.js';

// [C] scipy 1.10.1 scipy.signal.remez, made by tests/fixtures/scipy/gen_remez_hilbert.py (command in
// tests/fixtures/scipy/README.md). scipy's Hilbert sign is the opposite of the textbook one.
const fixture = loadRemezFixture();

/** A FirNetwork-shaped document for the tests' own evaluator (tests/support/network-response.ts). */
function asNetwork(taps: number[], sampleRate: number, band: [number, number]): FirNetwork {
  return {
    format: 'orthotone-network',
    version: 1,
    kind: 'fir',
    sampleRate,
    band,
    taps,
    predicted: { worstSuppressionDb: 0, maxPhaseErrorDeg: 0, maxGainErrorDb: 0 },
    cost: { multipliesPerSample: 0, latencySamples: 0 },
    design: {},
  };
}

/**
 * Kaiser window by its definition w(n) = I0(β·√(1 − (2n/(N−1) − 1)²)) / I0(β), with I0 from its power
 * series Σ ((x/2)^k / k!)² (Abramowitz & Stegun 9.6.12), summed until the terms vanish.
 */
function ownKaiser(n: number, beta: number): number[] {
  const i0 = (x: number): number => {
    let sum = 1;
    let term = 1;
    for (let k = 1; k < 500 && term > 1e-17 * sum; k++) {
      term *= (x / (2 * k)) ** 2;
      sum += term;
    }
    return sum;
  };
  return Array.from({ length: n }, (_, k) => {
    const r = (2 * k) / (n - 1) - 1;
    return i0(beta * Math.sqrt(Math.max(0, 1 - r * r))) / i0(beta);
  });
}

/**
 * Worst suppression and phase error over `points` linearly spaced frequencies, edges included, by the
 * tests' own evaluator (tests/support/network-response.ts: no code shared with src/design).
 */
function independent(taps: number[], fs: number, band: [number, number], points = 1500) {
  const r = ownSweep(asNetwork(taps, fs, band), points - 1, 'linear');
  return { worst: r.worstSuppressionDb, phase: r.maxPhaseErrorDeg };
}

describe('designHilbertFir: sign and structure', () => {
  it('Q lags I by 90° (README.md conventions: Q lags I by 90°): exact phase, suppression positive, textbook sign', () => {
    // The project's convention (src/design/hilbert-fir.ts): Q is the FIR, I a pure delay of (N−1)/2; ideal h(n) = 2/(πn) for odd n
    // (Reilly, Frazer & Boashash, IEEE Trans. SP 42:3241, 1994), so the tap just after the centre is positive.
    const d = designHilbertFir({ sampleRate: 48000, band: [300, 3000], taps: 127 });
    const c = (d.taps.length - 1) / 2;
    expect(d.delaySamples).toBe(c);
    expect(d.taps[c + 1]!).toBeGreaterThan(0.6);
    expect(d.taps[c + 1]!).toBeLessThan(2 / Math.PI + 0.01);
    const ind = independent(d.taps, 48000, [300, 3000]);
    expect(ind.phase).toBeLessThan(1e-9); // type III: exactly 90° at every frequency
    expect(ind.worst).toBeGreaterThan(20); // with the opposite sign it would be negative
    // The design's own figure is what the taps give: within 0.05 dB of the dense independent check,
    // and never more optimistic than it (the design refines peaks between grid points).
    expect(Math.abs(ind.worst - d.worstSuppressionDb)).toBeLessThan(0.05);
    expect(d.worstSuppressionDb).toBeLessThanOrEqual(ind.worst + 1e-9);
    // Suppression and ripple agree through (2 − δ)/δ for an exact-90° network.
    expect(Math.abs(hilbertSuppressionFromRipple(d.ripple) - d.worstSuppressionDb)).toBeLessThan(0.02);
  });

  it('band symmetric about fs/4: even-offset taps are exactly zero and counted', () => {
    // Reilly, Frazer & Boashash, IEEE Trans. SP 42:3241, 1994: type III, taps at even offsets from the centre vanish when lo + hi = fs/2.
    for (const n of [63, 65]) {
      const d = designHilbertFir({ sampleRate: 48000, band: [300, 23700], taps: n });
      const c = (n - 1) / 2;
      for (let m = 0; m <= c; m += 2) {
        expect(d.taps[c + m]).toBe(0);
        expect(d.taps[c - m]).toBe(0);
      }
      for (let m = 1; m <= c; m += 2) {
        if (n === 65 && m === c) continue;
        expect(d.taps[c + m]).not.toBe(0);
      }
      expect(d.symmetricAboutQuarterRate).toBe(true);
      expect(d.zeroTaps).toBe(d.taps.filter((t) => t === 0).length);
      expect(d.zeroTaps).toBe(n === 63 ? 31 : 33); // 65 = 4·16 + 1 carries two zero end taps
      for (let i = 0; i < n; i++) expect(d.taps[i]! + d.taps[n - 1 - i]!).toBe(0);
    }
  });

  it("structure 'full' designs over exactly the band (no zero taps) and shows its out-of-band peak", () => {
    const d = designHilbertFir({ sampleRate: 8000, band: [300, 3000], taps: 43, structure: 'full' });
    expect(d.symmetricAboutQuarterRate).toBe(false);
    expect(d.zeroTaps).toBe(1);
    expect(d.designBand).toEqual([300, 3000]);
    const ind = independent(d.taps, 8000, [300, 3000]);
    expect(Math.abs(ind.worst - d.worstSuppressionDb)).toBeLessThan(0.05);
    // Unconstrained above 3 kHz, the Q gain rises far above the in-band 0 dB (common practice,
    // no source: the reason half-band is the default).
    expect(d.peakGainDb).toBeGreaterThan(10);
    const h = designHilbertFir({ sampleRate: 8000, band: [300, 3000], taps: 43 });
    expect(h.designBand).toEqual([300, 3700]);
    expect(h.peakGainDb).toBeLessThan(0.5);
  });

  it('Kaiser method: the windowed ideal response 2/(πn)·w(n) with the reported β', () => {
    // J. F. Kaiser, "Nonrecursive digital filter design using the I0-sinh window function", Proc. IEEE
    // ISCAS 1974 (as in Oppenheim & Schafer, Discrete-Time Signal Processing, and scipy's
    // signal.windows.kaiser): h = w·h_ideal, h_ideal(n) = 2/(πn) for odd n, with the
    // window computed here from its definition, not with src/design/kaiser.ts.
    const d = designHilbertFir({ sampleRate: 48000, band: [300, 3000], taps: 255, method: 'kaiser' });
    const w = ownKaiser(255, d.beta!);
    const c = 127;
    for (let m = 1; m <= c; m += 2) {
      expect(d.taps[c + m]).toBeCloseTo((2 / (Math.PI * m)) * w[c + m]!, 14);
      expect(d.taps[c - m]).toBeCloseTo(-(2 / (Math.PI * m)) * w[c - m]!, 14);
    }
    expect(d.zeroTaps).toBe(127); // centre and offsets ±2 … ±126
    expect(d.iterations).toBeUndefined();
    const ind = independent(d.taps, 48000, [300, 3000]);
    expect(Math.abs(ind.worst - d.worstSuppressionDb)).toBeLessThan(0.05);
    // The exported tap generator gives the same windowed ideal response for another length and β.
    const t = kaiserHilbertTaps(63, 5);
    const w63 = ownKaiser(63, 5);
    for (let m = -31; m <= 31; m++) {
      expect(t[31 + m]).toBeCloseTo(m % 2 === 0 ? 0 : (2 / (Math.PI * m)) * w63[31 + m]!, 14);
    }
  });
});

describe('evaluateHilbertFir', () => {
  it("agrees with the tests' own evaluator, also for taps that are not antisymmetric", () => {
    const taps = Array.from(kaiserHilbertTaps(63, 5));
    taps[10] = taps[10]! + 1e-3; // breaks antisymmetry: the response gains a symmetric part S
    const band: [number, number] = [1000, 20000];
    const ev = evaluateHilbertFir(taps, 48000, band);
    const ind = independent(taps, 48000, band, 20000);
    expect(Math.abs(ev.worstSuppressionDb - ind.worst)).toBeLessThan(0.01);
    expect(ev.worstSuppressionDb).toBeLessThanOrEqual(ind.worst + 1e-9);
  });
});

describe('designHilbertFir: against scipy', () => {
  const sym = fixture.cases.filter((c) => c.type === 'hilbert' && c.numtaps % 2 === 1);
  it('half-band designs reach scipy’s ripple (within 2%) with the opposite sign', () => {
    // [C] scipy remez, symmetric bands: scipy's grid optimum is not exactly half-band (see the
    // fixture README), so compare ripple and the main taps, not every tap.
    for (const c of sym.filter((x) => Math.abs(x.bands[0]! + x.bands[1]! - x.fs / 2) < 1e-9 * x.fs)) {
      const scale = c.fs < 1000 ? 1000 : 1;
      const fs = c.fs * scale;
      const band: [number, number] = [c.bands[0]! * scale, c.bands[1]! * scale];
      const d = designHilbertFir({ sampleRate: fs, band, taps: c.numtaps });
      expect(Math.abs(d.ripple - c.rippleDense!) / c.rippleDense!, c.name).toBeLessThan(0.02);
      const mid = (c.numtaps - 1) / 2;
      expect(Math.abs(d.taps[mid + 1]! + c.taps[mid + 1]!), c.name).toBeLessThan(1e-3);
    }
  });
  it("structure 'full' on asymmetric bands equals scipy's taps negated, to 1e-9", () => {
    for (const c of sym.filter((x) => Math.abs(x.bands[0]! + x.bands[1]! - x.fs / 2) >= 1e-9 * x.fs)) {
      expect(c.converged).toBe(true);
      const d = designHilbertFir({
        sampleRate: 1000,
        band: [c.bands[0]! * 1000, c.bands[1]! * 1000],
        taps: c.numtaps,
        structure: 'full',
      });
      let err = 0;
      for (let i = 0; i < c.numtaps; i++) err = Math.max(err, Math.abs(d.taps[i]! + c.taps[i]!));
      expect(err, c.name).toBeLessThan(1e-9);
      // and its evaluated ripple is scipy's dense-grid ripple
      expect(Math.abs(d.ripple - c.rippleDense!) / c.rippleDense!, c.name).toBeLessThan(1e-4);
    }
  });
});

describe('designHilbertFir: target search', () => {
  it('finds the shortest half-band length: N meets the target, N − 4 does not', () => {
    for (const [fs, band, target] of [
      [48000, [300, 3000], 60],
      [8000, [200, 3400], 45],
      [44100, [100, 5000], 70],
    ] as [number, [number, number], number][]) {
      const d = designHilbertFir({ sampleRate: fs, band, targetDb: target });
      expect(d.worstSuppressionDb).toBeGreaterThanOrEqual(target);
      expect((d.taps.length + 1) % 4).toBe(0);
      const ind = independent(d.taps, fs, band, 800);
      expect(ind.worst).toBeGreaterThanOrEqual(target);
      const shorter = designHilbertFir({ sampleRate: fs, band, taps: d.taps.length - 4 });
      expect(shorter.worstSuppressionDb).toBeLessThan(target);
    }
  });
  it('ripple δ with exact 90° gives 20·log10((2−δ)/δ) at the worst frequency', () => {
    // (2+δ)/δ, often quoted, which is the suppression at the ripple peaks above 1; the
    // worst case is the dips below 1, (2−δ)/δ (Schmidt's formula, QEX Aug 1994 §2, with φ = 0, g = 1 − δ).
    expect(hilbertSuppressionFromRipple(0.011212)).toBeCloseTo(44.978, 3);
    expect(20 * Math.log10((2 + 0.011212) / 0.011212)).toBeCloseTo(45.08, 2);
    expect(hilbertRippleFromSuppression(hilbertSuppressionFromRipple(0.003))).toBeCloseTo(0.003, 15);
  });
  it('with taps and targetDb checks the target and names the taps needed', () => {
    const e = expectOrthotoneError(
      () => designHilbertFir({ sampleRate: 48000, band: [300, 3000], taps: 63, targetDb: 60 }),
      'UNREACHABLE_TARGET',
      /taps 63 give [\d.]+ dB worst suppression over \[300, 3000\] Hz .*targetDb 60 dB: use taps \d+ or more/,
    );
    const needed = (e.value as { tapsNeeded: number }).tapsNeeded;
    expect(
      designHilbertFir({ sampleRate: 48000, band: [300, 3000], taps: needed }).worstSuppressionDb,
    ).toBeGreaterThanOrEqual(60);
    expect(
      designHilbertFir({ sampleRate: 48000, band: [300, 3000], taps: needed - 4 }).worstSuppressionDb,
    ).toBeLessThan(60);
    const ok = designHilbertFir({ sampleRate: 48000, band: [300, 3000], taps: needed + 8, targetDb: 60 });
    expect(ok.taps.length).toBe(needed + 8);
  });
  it('beyond maxTaps: UNREACHABLE_TARGET naming the target, what maxTaps gives and the fixes', () => {
    expectOrthotoneError(
      () => designHilbertFir({ sampleRate: 48000, band: [300, 3000], targetDb: 80, maxTaps: 255 }),
      'UNREACHABLE_TARGET',
      /targetDb 80 dB is out of reach .* within maxTaps 255: 255 taps give [\d.]+ dB .*lower edge 300 Hz.*raise maxTaps.*all-pass/,
    );
    expectOrthotoneError(
      () =>
        designHilbertFir({
          sampleRate: 48000,
          band: [300, 3000],
          targetDb: 80,
          maxTaps: 255,
          method: 'kaiser',
        }),
      'UNREACHABLE_TARGET',
      /targetDb 80 dB/,
    );
  });
  it('refuses to call a round-off-limited Remez design converged', () => {
    expectOrthotoneError(
      () => designHilbertFir({ sampleRate: 48000, band: [300, 3000], taps: 2047 }),
      'NO_CONVERGENCE',
      /taps 2047 are far more than the band needs.*targetDb/,
    );
  });
});

describe('designHilbertFir: properties (fast-check, seeded)', () => {
  const spec = fc
    .record({
      fs: fc.integer({ min: 8000, max: 192000 }),
      loFrac: fc.double({ min: 1 / 300, max: 0.12, noNaN: true }),
      hiFrac: fc.double({ min: 0.26, max: 0.5 - 1 / 300, noNaN: true }),
      target: fc.double({ min: 30, max: 70, noNaN: true }),
    })
    .map(({ fs, loFrac, hiFrac, target }) => ({
      sampleRate: fs,
      band: [Math.round(loFrac * fs), Math.round(hiFrac * fs)] as [number, number],
      targetDb: target,
    }));

  it('remez: random valid specs meet the target by independent evaluation', () => {
    fc.assert(
      fc.property(spec, (s) => {
        const d = designHilbertFir(s);
        const ind = independent(d.taps, s.sampleRate, s.band, 600);
        return d.worstSuppressionDb >= s.targetDb && ind.worst >= s.targetDb && d.taps.every(Number.isFinite);
      }),
      { seed: 20240611, numRuns: 12 },
    );
  });
  it('kaiser: random valid specs meet the target by independent evaluation', () => {
    fc.assert(
      fc.property(spec, (s) => {
        const d = designHilbertFir({ ...s, method: 'kaiser' });
        const ind = independent(d.taps, s.sampleRate, s.band, 600);
        return ind.worst >= s.targetDb && d.beta! > 0;
      }),
      { seed: 7, numRuns: 8 },
    );
  });
  it('invalid specs give typed errors naming the value', () => {
    const fs = fc.integer({ min: 8000, max: 192000 });
    fc.assert(
      fc.property(fs, fc.double({ min: 0, max: 0.49, noNaN: true }), (rate, frac) => {
        const nyq = rate / 2;
        const lo = Math.max(1, Math.round(frac * rate));
        // upper edge at or beyond Nyquist
        const e1 = expectOrthotoneError(
          () => designHilbertFir({ sampleRate: rate, band: [lo, nyq + frac * 100], taps: 31 }),
          'INVALID_BAND',
        );
        expect(e1.message).toContain(String(nyq + frac * 100));
        // reversed band
        if (lo < nyq - 1) {
          const e2 = expectOrthotoneError(
            () => designHilbertFir({ sampleRate: rate, band: [nyq - 1, lo], taps: 31 }),
            'INVALID_BAND',
          );
          expect(e2.message).toContain(String(nyq - 1));
        }
        return true;
      }),
      { seed: 99, numRuns: 25 },
    );
    for (const bad of [0, -48000, Number.NaN]) {
      const e = expectOrthotoneError(
        () => designHilbertFir({ sampleRate: bad, band: [300, 3000], taps: 31 }),
        'INVALID_ARGUMENT',
      );
      expect(e.message).toContain(Number.isNaN(bad) ? 'NaN' : String(bad));
    }
    expectOrthotoneError(
      () => designHilbertFir({ sampleRate: 48000, band: [0, 3000], taps: 31 }),
      'INVALID_BAND',
      /lower edge 0/,
    );
    expectOrthotoneError(
      () => designHilbertFir({ sampleRate: 48000, band: [-5, 3000], taps: 31 }),
      'INVALID_BAND',
      /-5/,
    );
    expectOrthotoneError(
      () => designHilbertFir({ sampleRate: 48000, band: [300, 3000], taps: 64 }),
      'INVALID_ARGUMENT',
      /taps 64 must be odd.*use 63 or 65/,
    );
    expectOrthotoneError(
      () => designHilbertFir({ sampleRate: 48000, band: [300, 3000], taps: 31.5 }),
      'INVALID_ARGUMENT',
      /taps 31.5/,
    );
    expectOrthotoneError(
      () => designHilbertFir({ sampleRate: 48000, band: [300, 3000], taps: 1 }),
      'INVALID_ARGUMENT',
      /taps 1 /,
    );
    expectOrthotoneError(
      () => designHilbertFir({ sampleRate: 48000, band: [300, 3000], targetDb: -3 }),
      'INVALID_ARGUMENT',
      /targetDb -3/,
    );
    expectOrthotoneError(
      () => designHilbertFir({ sampleRate: 48000, band: [300, 3000], targetDb: Number.NaN }),
      'INVALID_ARGUMENT',
      /targetDb NaN/,
    );
    expectOrthotoneError(
      () => designHilbertFir({ sampleRate: 48000, band: [300, 3000] }),
      'INVALID_ARGUMENT',
      /give taps/,
    );
    expectOrthotoneError(
      () => designHilbertFir({ sampleRate: 48000, band: [300, 3000], taps: 31, method: 'fft' as 'remez' }),
      'INVALID_ARGUMENT',
      /method "fft"/,
    );
    expectOrthotoneError(
      () =>
        designHilbertFir({
          sampleRate: 48000,
          band: [300, 3000],
          taps: 31,
          method: 'kaiser',
          structure: 'full',
        }),
      'INVALID_ARGUMENT',
      /structure 'full'/,
    );
    expectOrthotoneError(() => designHilbertFir(null as never), 'INVALID_ARGUMENT', /spec null/);
  });
});
