/**
 * The main checks of tones.test.ts, tones-leakage.test.ts, two-tone.test.ts and sideband.test.ts
 * on short captures (2048 to 8192 samples), so that the measure mutation scope can run them for
 * every mutant (those suites use captures of up to 262144 samples and many frame lengths; they run in
 * `npm test`). Each check is against the same independent expectation as there:
 * - levels: AES17 (a sine of peak A reads 20·log10 A dBFS) with the scaling of Heinzel, Rüdiger &
 *   Schilling 2002 (A = 2|X|/Σw real, |X|/Σw complex; noise per bin 4σ²·NENBW/N real, 2σ²·NENBW/N complex);
 * - window sidelobes: Heinzel, Rüdiger & Schilling 2002 (Blackman–Harris highest sidelobe −92.0 dB);
 * - sideband suppression: K. Schmidt, "Phase-Shift Network Analysis and Optimization", QEX Aug 1994
 *   §2, IRR = (1 + 2g·cosφ + g²)/(1 − 2g·cosφ + g²);
 * - two-tone products: the expansion of (cos A + cos B)³ and ⁵ (standard trigonometry), PEP of two
 *   equal tones 6.02 dB above each (Krauss, Bostian & Raab, Solid State Radio Engineering p. 509).
 */
import { describe, expect, it } from 'vitest';
import { createRng } from '../../src/core/rng.js';
import { measureSideband } from '../../src/measure/sideband.js';
import { analyzeTones, measureTones } from '../../src/measure/tones.js';
import { measureTwoTone } from '../../src/measure/two-tone.js';

const fs = 48000;
const deg = Math.PI / 180;
const dbfs = (a: number) => 20 * Math.log10(a);
const irrDb = (g: number, phi: number): number =>
  10 * Math.log10((1 + 2 * g * Math.cos(phi) + g * g) / (1 - 2 * g * Math.cos(phi) + g * g));

/** Σ a·sin(2πft + ph) plus white noise of standard deviation `noise`. */
function real(len: number, parts: [number, number, number][], noise = 0, seed = 1): Float64Array {
  const rng = createRng(seed);
  const x = new Float64Array(len);
  for (let n = 0; n < len; n++) {
    let v = noise * rng.normal();
    for (const [a, hz, ph] of parts) v += a * Math.sin((2 * Math.PI * hz * n) / fs + ph);
    x[n] = v;
  }
  return x;
}

/** Σ a·e^{j(2πft + ph)} plus white noise of standard deviation `noise` in each channel. */
function complex(len: number, parts: [number, number, number][], noise = 0, seed = 1) {
  const rng = createRng(seed);
  const i = new Float64Array(len);
  const q = new Float64Array(len);
  for (let n = 0; n < len; n++) {
    let re = noise * rng.normal();
    let im = noise * rng.normal();
    for (const [a, hz, ph] of parts) {
      re += a * Math.cos((2 * Math.PI * hz * n) / fs + ph);
      im += a * Math.sin((2 * Math.PI * hz * n) / fs + ph);
    }
    i[n] = re;
    q[n] = im;
  }
  return { i, q };
}

describe('tone levels and frequencies (AES17; Heinzel, Rüdiger & Schilling 2002)', () => {
  it('a full-scale sine reads 0 dBFS, real and complex; a perfect analytic tone has no image', () => {
    const [r] = measureTones(real(4096, [[1, 1000, 0]]), fs, [1000]);
    expect(r!.levelDbfs).toBeCloseTo(0, 3);
    expect(r!.amplitude).toBeCloseTo(1, 4);
    expect(r!.nominalHz).toBe(1000);
    const [c, img] = measureTones(complex(4096, [[1, 1000, 0.3]]), fs, [1000, -1000]);
    expect(c!.levelDbfs).toBeCloseTo(0, 3);
    expect(img!.levelDbfs).toBeLessThan(-120);
  });
  for (const window of ['hann', 'blackman-harris', 'flattop'] as const) {
    it(`${window}: a tone anywhere between bins is read within 0.02 dB and 1 % of a bin`, () => {
      const len = 2048;
      const bin = fs / len;
      for (const d of [0, 0.3, 0.5, 0.85]) {
        const hz = 1500 + d * bin;
        const [r] = measureTones(real(len, [[0.5, hz, 0.7 * d]]), fs, [1500], { window });
        expect(Math.abs(r!.levelDbfs - dbfs(0.5)), `${window}, ${d} bin`).toBeLessThan(0.02);
        expect(Math.abs(r!.frequencyHz - hz), `${window}, ${d} bin`).toBeLessThan(0.01 * bin);
        expect(r!.refined).toBe(true);
      }
    });
  }
  it('a complex tone between bins at a negative frequency, and a tone just above DC in real audio', () => {
    const bin = fs / 4096;
    const [c] = measureTones(complex(4096, [[0.25, -3000 - 0.37 * bin, 1]]), fs, [-3000]);
    expect(Math.abs(c!.frequencyHz + 3000 + 0.37 * bin)).toBeLessThan(0.01 * bin);
    expect(c!.levelDbfs).toBeCloseTo(dbfs(0.25), 2);
    // 10.3 bins above DC: its mirror at −f is 20.6 bins away, resolved by the Blackman–Harris window.
    const [low] = measureTones(real(4096, [[0.5, 10.3 * bin, 0.4]]), fs, [10 * bin]);
    expect(Math.abs(low!.frequencyHz - 10.3 * bin)).toBeLessThan(0.01 * bin);
    expect(low!.levelDbfs).toBeCloseTo(dbfs(0.5), 2);
  });
});

describe('weak and absent tones beside a strong one (leakage between bins)', () => {
  // 1500 Hz: a whole number of cycles in 2048-sample frames, so the FFT bins sit on the zeros of its
  // leakage and a noise-free floor reads as rounding noise (leakage.ts explains).
  const len = 4096;
  const frameLength = 2048;
  const off = 0.37 * (fs / frameLength);
  it('real: −40, −60 and −80 dBc tones off their nominal frequencies are read where they are', () => {
    const parts: [number, number, number][] = [
      [0.5, 1500, 0.1],
      [0.5e-2, 2000 + off, 1.1],
      [0.5e-3, 1000 + off, 2.1],
      [0.5e-4, 3000 + off, 0.6],
    ];
    const { readings, spectrum } = analyzeTones(real(len, parts), fs, [1500, 2000, 1000, 3000], {
      frameLength,
    });
    parts.forEach(([a, hz], k) => {
      const r = readings[k]!;
      expect(r.refined, `${r.nominalHz} Hz`).toBe(true);
      expect(Math.abs(r.levelDbfs - dbfs(a)), `${r.nominalHz} Hz level`).toBeLessThan(0.1);
      expect(Math.abs(r.frequencyHz - hz), `${r.nominalHz} Hz`).toBeLessThan(0.05 * spectrum.resolutionHz);
    });
  });
  it('real and I/Q: an absent tone is read at its nominal frequency, below the sidelobes', () => {
    const [strong, absent, far] = measureTones(real(len, [[0.5, 1500, 0.3]]), fs, [1500, 1700, 5000], {
      frameLength,
    });
    expect(strong!.levelDbfs).toBeCloseTo(dbfs(0.5), 2);
    for (const r of [absent!, far!]) {
      expect(r.refined).toBe(false);
      expect(r.frequencyHz).toBe(r.nominalHz);
      // Blackman–Harris highest sidelobe −92.0 dB (Heinzel, Rüdiger & Schilling 2002).
      expect(r.levelDbfs).toBeLessThan(strong!.levelDbfs - 92);
    }
    const [w, img, dc] = measureTones(complex(len, [[0.5, 1500, 0.3]]), fs, [1500, -1500, 0], {
      frameLength,
    });
    expect(w!.levelDbfs).toBeCloseTo(dbfs(0.5), 2);
    for (const r of [img!, dc!]) {
      expect(r.refined).toBe(false);
      expect(r.frequencyHz).toBe(r.nominalHz);
      expect(r.levelDbfs).toBeLessThan(w!.levelDbfs - 92);
    }
  });
  it('I/Q: a −40 dBc image near the mirror and a −60 dBc carrier, both off nominal, are found', () => {
    const parts: [number, number, number][] = [
      [0.5, 1500, 0.2],
      [0.5e-2, -1500 + 0.8, 1.3],
      [0.5e-3, 0.4, 0.5],
    ];
    const { readings, spectrum } = analyzeTones(complex(len, parts), fs, [1500, -1500, 0], { frameLength });
    parts.forEach(([a, hz], k) => {
      const r = readings[k]!;
      expect(r.refined, `${r.nominalHz} Hz`).toBe(true);
      expect(Math.abs(r.levelDbfs - dbfs(a)), `${r.nominalHz} Hz level`).toBeLessThan(0.1);
      expect(Math.abs(r.frequencyHz - hz), `${r.nominalHz} Hz`).toBeLessThan(0.02 * spectrum.resolutionHz);
    });
  });
});

describe('noise floor (Welch 1967 power averaging; Heinzel 2002 densities)', () => {
  it('per hertz: real white noise 4σ²/fs, complex 2σ²/fs, in sine-peak² units', () => {
    const sigma = 1e-3;
    const opts = { frameLength: 256 };
    const [r] = measureTones(real(4096, [], sigma, 5), fs, [3000], opts);
    expect(Math.abs(r!.floorDbfsPerHz - 10 * Math.log10((4 * sigma * sigma) / fs))).toBeLessThan(0.5);
    expect(r!.atFloor).toBe(true);
    const [c] = measureTones(complex(4096, [], sigma, 6), fs, [3000], opts);
    expect(Math.abs(c!.floorDbfsPerHz - 10 * Math.log10((2 * sigma * sigma) / fs))).toBeLessThan(0.5);
  });
});

describe('two-tone products against their closed forms', () => {
  const twoTone = (len: number, a: number, f1: number, f2: number, k3: number, k5: number) =>
    Float64Array.from({ length: len }, (_, n) => {
      const x = a * (Math.cos((2 * Math.PI * f1 * n) / fs) + Math.cos((2 * Math.PI * f2 * n) / fs + 0.4));
      return x + k3 * x ** 3 + k5 * x ** 5;
    });
  it('equal tones are each 6.02 dB below PEP', () => {
    const r = measureTwoTone(twoTone(2048, 0.25, 700, 1900, 0, 0), fs, [700, 1900]);
    expect(r.pepDbfs - r.toneDbfs).toBeCloseTo(20 * Math.log10(2), 3);
    expect(r.pepDbfs).toBeCloseTo(dbfs(0.5), 3);
    expect(r.toneImbalanceDb).toBeCloseTo(0, 3);
  });
  it('3rd order of y = x + k·x³: (3/4)k·a³ beside tones of a + (9/4)k·a³', () => {
    const a = 0.25;
    const k = -0.3;
    const r = measureTwoTone(twoTone(4096, a, 700, 1900, k, 0), fs, [1900, 700]);
    const expected = 20 * Math.log10(Math.abs((0.75 * k * a ** 3) / (a + 2.25 * k * a ** 3)));
    const third = r.products.filter((p) => p.order === 3);
    expect(third.map((p) => Math.round(p.frequencyHz))).toEqual([500, 3100]);
    for (const p of third) {
      expect(p.dbcTone).toBeCloseTo(expected, 2);
      expect(p.dbPep).toBeCloseTo(expected - 20 * Math.log10(2), 2);
      expect(p.reading.frequencyHz).toBe(p.frequencyHz);
    }
    expect(r.imd3Dbc).toBeCloseTo(expected, 2);
    expect(r.imd3DbPep).toBeCloseTo(expected - 20 * Math.log10(2), 2);
    expect(r.imd5Dbc).toBeLessThan(-120);
    expect(r.imd5DbPep).toBeLessThan(-120);
  });
  it('5th order of y = x + k·x⁵: 0.625·k·a⁵ beside tones of a + 6.25·k·a⁵; unequal products take the worst', () => {
    const a = 0.2;
    const k = 2;
    const r = measureTwoTone(twoTone(2048, a, 1000, 1300, 0, k), fs, [1000, 1300]);
    const expected = 20 * Math.log10((0.625 * k * a ** 5) / (a + 6.25 * k * a ** 5));
    expect(r.imd5Dbc).toBeCloseTo(expected, 2);
    expect(r.products.filter((p) => p.order === 5).map((p) => Math.round(p.frequencyHz))).toEqual([
      400, 1900,
    ]);
    // Products of a cubic and a quintic together: worst = highest of the two sides.
    const both = measureTwoTone(twoTone(2048, 0.2, 1000, 1300, -0.2, 1), fs, [1000, 1300]);
    const third = both.products.filter((p) => p.order === 3);
    expect(both.imd3Dbc).toBe(Math.max(third[0]!.dbcTone, third[1]!.dbcTone));
  });
  it('I/Q: an envelope cubic z·(1 + k|z|²) puts products on both sides', () => {
    const len = 2048;
    const a = 0.25;
    const k = -0.2;
    const { i, q } = complex(len, [
      [a, 300, 0],
      [a, 1100, 0],
    ]);
    for (let n = 0; n < len; n++) {
      const m = 1 + k * (i[n]! * i[n]! + q[n]! * q[n]!);
      i[n]! *= m;
      q[n]! *= m;
    }
    const r = measureTwoTone({ i, q }, fs, [300, 1100]);
    expect(r.products.filter((p) => p.order === 3).map((p) => Math.round(p.frequencyHz))).toEqual([
      -500, 1900,
    ]);
    // |z|² = 2a²(1 + cos Δ): each product k·a³, each tone a(1 + 3k·a²).
    expect(r.imd3Dbc).toBeCloseTo(20 * Math.log10(Math.abs(k * a ** 3) / (a * (1 + 3 * k * a * a))), 2);
  });
});

describe('sideband and carrier (K. Schmidt, QEX Aug 1994 §2)', () => {
  /** I = A·cos ωt + dI, Q = s·g·A·sin(ωt + φ) + dQ, then shifted by tuneHz. */
  function iq(
    len: number,
    hz: number,
    gDb: number,
    phDeg: number,
    dI = 0,
    dQ = 0,
    s = 1,
    tuneHz = 0,
    noise = 0,
  ) {
    const rng = createRng(3);
    const g = 10 ** (gDb / 20);
    const i = new Float64Array(len);
    const q = new Float64Array(len);
    for (let n = 0; n < len; n++) {
      const w = (2 * Math.PI * hz * n) / fs + 0.4;
      const a = 0.5 * Math.cos(w) + dI + noise * rng.normal();
      const b = s * g * 0.5 * Math.sin(w + phDeg * deg) + dQ + noise * rng.normal();
      const t = (2 * Math.PI * tuneHz * n) / fs;
      i[n] = a * Math.cos(t) - b * Math.sin(t);
      q[n] = a * Math.sin(t) + b * Math.cos(t);
    }
    return { i, q };
  }
  for (const [gDb, phDeg] of [
    [0, 1],
    [0.5, 0],
    [0.1, 1],
  ] as const) {
    it(`${gDb} dB and ${phDeg}°, tone between bins, a little noise`, () => {
      const { i, q } = iq(4096, 1000.3, gDb, phDeg, 0, 0, 1, 0, 1e-6);
      const r = measureSideband(i, q, fs, { toneHz: 1000 });
      const want = irrDb(10 ** (gDb / 20), phDeg * deg);
      expect(Math.abs(r.sidebandSuppressionDb - want)).toBeLessThan(0.02);
      expect(r.unwantedDbc).toBeCloseTo(-r.sidebandSuppressionDb, 10);
      expect(r.wanted.frequencyHz).toBeCloseTo(1000.3, 2);
      expect(r.unwanted.frequencyHz).toBeCloseTo(-1000.3, 2);
      expect(r.frequencyErrorHz).toBeCloseTo(0.3, 2);
      expect(r.unwanted.aboveFloorDb).toBeGreaterThan(20);
    });
  }
  it('carrier dI = 0.001A, dQ = 0.0005A: −59.031 dBc, and the measurable depths', () => {
    const { i, q } = iq(4096, 1000, 0, 0, 0.0005, 0.00025, 1, 0, 1e-6);
    const r = measureSideband(i, q, fs, { toneHz: 1000 });
    expect(r.carrierDbc).toBeCloseTo(-59.031, 2);
    expect(r.carrierSuppressionDb).toBeCloseTo(59.031, 2);
    expect(r.carrier.refined).toBe(true);
    // Depths: the wanted tone above the floors near the unwanted tone and the carrier.
    expect(r.sidebandMeasurableDb).toBeCloseTo(r.wanted.levelDbfs - r.unwanted.floorDbfs, 10);
    expect(r.carrierMeasurableDb).toBeCloseTo(r.wanted.levelDbfs - r.carrier.floorDbfs, 10);
  });
  it('lower sideband: the wanted tone at −toneHz; read as upper, the suppression turns negative', () => {
    const { i, q } = iq(4096, 700, 0.1, 0, 0, 0, -1, 0, 1e-6);
    const r = measureSideband(i, q, fs, { toneHz: 700, sideband: 'lower' });
    expect(r.sideband).toBe('lower');
    expect(r.wanted.frequencyHz).toBeCloseTo(-700, 3);
    expect(r.sidebandSuppressionDb).toBeCloseTo(44.797, 2); // Schmidt's formula, 0.1 dB
    expect(measureSideband(i, q, fs, { toneHz: 700 }).sidebandSuppressionDb).toBeCloseTo(-44.797, 2);
  });
  it('a tuning error moves every component: found with and without a carrier', () => {
    for (const dc of [0.0005, 0]) {
      const { i, q } = iq(8192, 1500, 0, 2, dc, 0, 1, -5.1);
      const r = measureSideband(i, q, fs, { toneHz: 1500 });
      expect(r.sidebandSuppressionDb).toBeCloseTo(35.162, 1); // Schmidt's formula, 2°
      expect(r.frequencyErrorHz).toBeCloseTo(-5.1, 2);
      expect(r.unwanted.frequencyHz).toBeCloseTo(-1500 - 5.1, 1);
      expect(r.carrier.frequencyHz).toBeCloseTo(-5.1, 1);
      if (dc) expect(r.carrierDbc).toBeCloseTo(dbfs(0.001 / Math.cos(deg)), 1);
      else expect(r.carrierDbc).toBeLessThan(-100);
    }
  });
  it('a tone off its nominal frequency, no carrier: the unwanted tone is its mirror about 0 Hz', () => {
    const { i, q } = iq(8192, 1000.3 + 2, 0.1, 1);
    const r = measureSideband(i, q, fs, { toneHz: 1000 });
    expect(r.sidebandSuppressionDb).toBeCloseTo(39.614, 1); // Schmidt's formula, 0.1 dB and 1°
    expect(r.unwanted.frequencyHz).toBeCloseTo(-1002.3, 1);
    expect(r.carrier.frequencyHz).toBeCloseTo(0, 1);
  });
  it('receiver audio: an upper-sideband receiver 1500 Hz below the carrier, then a lower-sideband one', () => {
    const x = real(8192, [
      [0.5, 2200, 0],
      [0.5 * 10 ** (-43 / 20), 800, 1],
      [0.5 * 10 ** (-37 / 20), 1500, 2],
    ]);
    const r = measureSideband(x, null, fs, { toneHz: 700, offsetHz: 1500 });
    expect(r.sidebandSuppressionDb).toBeCloseTo(43, 2);
    expect(r.carrierSuppressionDb).toBeCloseTo(37, 2);
    expect(r.wanted.frequencyHz).toBeCloseTo(2200, 2);
    const l = measureSideband(x, null, fs, { toneHz: 700, offsetHz: 1500, receiverSideband: 'lower' });
    expect(l.sidebandSuppressionDb).toBeCloseTo(-43, 2);
    expect(l.wanted.frequencyHz).toBeCloseTo(800, 2);
  });
});
