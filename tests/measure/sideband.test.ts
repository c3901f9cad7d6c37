import { describe, expect, it } from 'vitest';
import { isOrthotoneError } from '../../src/core/errors.js';
import { createRng } from '../../src/core/rng.js';
import { measureSideband } from '../../src/measure/sideband.js';

const fs = 48000;
const deg = Math.PI / 180;

/** I = A·cos ωt + dI, Q = s·g·A·sin(ωt + φ) + dQ (K. Schmidt, QEX Aug 1994 §2), s = −1 for lower sideband. */
function iq(
  len: number,
  hz: number,
  g: number,
  phi: number,
  dI = 0,
  dQ = 0,
  a = 0.5,
  s = 1,
  noise = 0,
  seed = 1,
) {
  const rng = createRng(seed);
  const i = new Float64Array(len);
  const q = new Float64Array(len);
  for (let n = 0; n < len; n++) {
    const w = (2 * Math.PI * hz * n) / fs;
    i[n] = a * Math.cos(w) + dI + noise * rng.normal();
    q[n] = s * g * a * Math.sin(w + phi) + dQ + noise * rng.normal();
  }
  return { i, q };
}

describe('measureSideband on I/Q against the formula of K. Schmidt (QEX Aug 1994 §2), values computed from it', () => {
  const cases: [string, number, number, number][] = [
    ['1° phase error', 0, 1, 41.183],
    ['2° phase error', 0, 2, 35.162],
    ['0.1 dB gain error', 0.1, 0, 44.797],
    ['0.5 dB gain error', 0.5, 0, 30.82],
    ['0.1 dB and 1°', 0.1, 1, 39.614],
    ['0.1° phase error', 0, 0.1, 61.183],
  ];
  for (const [name, gDb, phDeg, ref] of cases) {
    it(name, () => {
      const { i, q } = iq(65536, 1000.3, 10 ** (gDb / 20), phDeg * deg, 0, 0, 0.5, 1, 1e-6);
      const r = measureSideband(i, q, fs, { toneHz: 1000 });
      expect(Math.abs(r.sidebandSuppressionDb - ref)).toBeLessThan(0.01);
      expect(r.unwanted.aboveFloorDb).toBeGreaterThan(20);
    });
  }
  it('carrier: dI = 0.001A, dQ = 0.0005A reads −59.031 dBc', () => {
    const { i, q } = iq(65536, 1000, 1, 0, 0.0005, 0.00025, 0.5, 1, 1e-6);
    const r = measureSideband(i, q, fs, { toneHz: 1000 });
    expect(r.carrierDbc).toBeCloseTo(-59.031, 2);
    expect(r.carrierSuppressionDb).toBeCloseTo(59.031, 2);
  });
  it('lower sideband: Q negated, the wanted tone at −toneHz', () => {
    const { i, q } = iq(65536, 700, 10 ** (0.1 / 20), 0, 0, 0, 0.5, -1, 1e-6);
    const r = measureSideband(i, q, fs, { toneHz: 700, sideband: 'lower' });
    expect(r.wanted.frequencyHz).toBeCloseTo(-700, 3);
    expect(r.sidebandSuppressionDb).toBeCloseTo(44.797, 2);
    // Read as if upper, the same capture shows the wanted tone as the "unwanted" one.
    const wrong = measureSideband(i, q, fs, { toneHz: 700 });
    expect(wrong.sidebandSuppressionDb).toBeCloseTo(-44.797, 2);
  });
  it('follows a tuning error: all components shifted by 3.7 Hz', () => {
    const len = 65536;
    const { i, q } = iq(len, 1000, 1, 1 * deg, 0.0005, 0, 0.5, 1, 1e-6);
    // Multiply by e^{j2π·3.7t}: a receiver tuned 3.7 Hz low.
    for (let n = 0; n < len; n++) {
      const w = (2 * Math.PI * 3.7 * n) / fs;
      const [a, b] = [i[n]!, q[n]!];
      i[n] = a * Math.cos(w) - b * Math.sin(w);
      q[n] = a * Math.sin(w) + b * Math.cos(w);
    }
    const r = measureSideband(i, q, fs, { toneHz: 1000 });
    expect(r.frequencyErrorHz).toBeCloseTo(3.7, 2);
    expect(r.carrier.frequencyHz).toBeCloseTo(3.7, 2);
    expect(r.sidebandSuppressionDb).toBeCloseTo(41.183, 1);
  });
  it('says how far each reading stands above the floor; a buried sideband is flagged', () => {
    const { i, q } = iq(16384, 1000, 1, 0.01 * deg, 0, 0, 0.5, 1, 1e-3);
    const r = measureSideband(i, q, fs, { toneHz: 1000 });
    expect(r.unwanted.atFloor || r.unwanted.aboveFloorDb < 6).toBe(true);
  });
  it('measurable depth: tone power over the white-noise power in one bin, from first principles', () => {
    // Complex tone of amplitude a reads a² (Heinzel 2002: A = |X|/Σw). White noise of variance σ² in
    // I and in Q puts E|X|² = 2σ²·Σw² in a bin, i.e. 2σ²·NENBW/N in the same units, NENBW = 2.0044
    // bins for the 4-term Blackman–Harris window (Heinzel, Rüdiger & Schilling 2002, table
    // of window figures). So the deepest readable suppression is 10·log10(a²·N/(2σ²·NENBW)) = 84.07 dB here. The
    // floor is a median over about 100 bins of about 30 averaged frames: within ±0.3 dB on 5 seeds,
    // bound ±1 dB (a depth off by a few dB, e.g. a window's NENBW or the I/Q factor 2, fails).
    const a = 0.5;
    const sigma = 1e-3;
    const frameLength = 4096;
    const expected = 10 * Math.log10((a * a * frameLength) / (2 * sigma * sigma * 2.0044));
    expect(expected).toBeCloseTo(84.07, 2);
    for (const seed of [1, 2, 3]) {
      const { i, q } = iq(65536, 1000, 1, 0, 0, 0, a, 1, sigma, seed);
      const r = measureSideband(i, q, fs, { toneHz: 1000, frameLength });
      expect(Math.abs(r.sidebandMeasurableDb - expected)).toBeLessThan(1);
      expect(Math.abs(r.carrierMeasurableDb - expected)).toBeLessThan(1);
      // The same floor per hertz: 2σ²/fs, whatever the window.
      expect(Math.abs(r.unwanted.floorDbfsPerHz - 10 * Math.log10((2 * sigma * sigma) / fs))).toBeLessThan(1);
    }
  });
});

describe('measureSideband on receiver audio with a stated offset', () => {
  it('upper-sideband receiver tuned 1500 Hz below the carrier: wanted at 2200, unwanted 800, carrier 1500', () => {
    const len = 65536;
    const x = new Float64Array(len);
    for (let n = 0; n < len; n++) {
      const t = n / fs;
      x[n] =
        0.5 * Math.sin(2 * Math.PI * 2200 * t) +
        0.5 * 10 ** (-43 / 20) * Math.sin(2 * Math.PI * 800 * t + 1) +
        0.5 * 10 ** (-37 / 20) * Math.sin(2 * Math.PI * 1500 * t + 2);
    }
    const r = measureSideband(x, null, fs, { toneHz: 700, offsetHz: 1500 });
    expect(r.sidebandSuppressionDb).toBeCloseTo(43, 2);
    expect(r.carrierSuppressionDb).toBeCloseTo(37, 2);
    // The same audio from a lower-sideband receiver: the wanted tone is at offset − 700.
    const l = measureSideband(x, null, fs, { toneHz: 700, offsetHz: 1500, receiverSideband: 'lower' });
    expect(l.sidebandSuppressionDb).toBeCloseTo(-43, 2);
  });
  it('bad offsets and missing tone are INVALID_ARGUMENT with the fix', () => {
    const x = new Float64Array(16384);
    const code = (fn: () => unknown): string => {
      try {
        fn();
      } catch (e) {
        if (isOrthotoneError(e)) return `${e.code}: ${e.message}`;
      }
      return 'no error';
    };
    expect(code(() => measureSideband(x, null, fs, { toneHz: 700 }))).toMatch(
      /INVALID_ARGUMENT: receiver audio needs offsetHz/,
    );
    expect(code(() => measureSideband(x, null, fs, { toneHz: 700, offsetHz: 500 }))).toMatch(
      /INVALID_ARGUMENT: the unwanted tone falls at -200 Hz .* offset between 700 and 23300 Hz/,
    );
    expect(code(() => measureSideband(x, x, fs, { toneHz: -5 }))).toMatch(/INVALID_ARGUMENT: toneHz -5/);
  });
});
