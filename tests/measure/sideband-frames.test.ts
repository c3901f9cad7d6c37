/**
 * measureSideband across frame lengths, tone frequencies, sample rates and sample types.
 *
 * Regression for a misreading seen with 8192- and 16384-sample frames (the default frame for
 * captures of 16384 samples or more): a pure 3° phase error on a 1500 Hz tone read the unwanted
 * tone at −1502.6 Hz and 2.6 dB too much suppression. Cause: with power-of-two frames a tone of a
 * whole number of cycles per frame puts its window leakage exactly on the zeros between FFT bins,
 * so a noise-free spectrum's floor read as rounding noise; an absent carrier then "stood clear" of
 * it, its frequency was refined onto the leakage sidelobes of the tones between bins, and the
 * unwanted tone was read at the mirror about that false carrier.
 *
 * Every suppression is checked against the closed form of K. Schmidt ( "Phase-Shift
 * Network Analysis and Optimization", QEX Aug 1994 §2; values [C]), every carrier against the
 * carrier formula 20·log10(|dI + j·dQ|/A) (from the model of K. Schmidt, QEX Aug 1994), and every reading's frequency against where the tone is.
 */
import { describe, expect, it } from 'vitest';
import { measureSideband } from '../../src/measure/sideband.js';
import { planFrames } from '../../src/measure/spectrum.js';

const deg = Math.PI / 180;

/**
 * K. Schmidt, QEX Aug 1994 §2: I = cos ωt, Q = g·sin(ωt + φ) gives
 * IRR = (1 + 2g·cosφ + g²) / (1 − 2g·cosφ + g²), in dB.
 */
const irrDb = (g: number, phi: number): number =>
  10 * Math.log10((1 + 2 * g * Math.cos(phi) + g * g) / (1 - 2 * g * Math.cos(phi) + g * g));

/** Imbalances with their values computed from K. Schmidt's formula (QEX Aug 1994 §2) (dB). */
const IMBALANCES: { name: string; gainDb: number; phaseDeg: number; refDb: number }[] = [
  { name: '1°', gainDb: 0, phaseDeg: 1, refDb: 41.183 }, // Schmidt's formula, 1°
  { name: '2°', gainDb: 0, phaseDeg: 2, refDb: 35.162 }, // Schmidt's formula, 2°
  { name: '−3°', gainDb: 0, phaseDeg: -3, refDb: 31.639 }, // formula −20·log10|tan(φ/2)| (K. Schmidt, QEX Aug 1994 §2)
  { name: '0.1 dB', gainDb: 0.1, phaseDeg: 0, refDb: 44.797 }, // Schmidt's formula, 0.1 dB
  { name: '0.5 dB', gainDb: 0.5, phaseDeg: 0, refDb: 30.82 }, // Schmidt's formula, 0.5 dB
  { name: '0.1 dB & 1°', gainDb: 0.1, phaseDeg: 1, refDb: 39.614 }, // Schmidt's formula, combined
];

/** Computed from the signal model: carrier dI = 0.001A, dQ = 0.0005A reads −59.031 dBc. */
const CARRIER_DBC = -59.031;

interface Case {
  fs: number;
  toneHz: number;
  length: number;
  frameLength: number | undefined;
  f32: boolean;
}

/**
 * I = A·cos(ωt + θ) + dI, Q = g·A·sin(ωt + θ + φ) + dQ (the model of K. Schmidt, QEX Aug 1994 §2, A = 0.5, a start
 * phase θ that varies between cases so no case depends on where the tone starts).
 */
function capture(c: Case, gainDb: number, phaseDeg: number, dc: boolean, theta: number) {
  const a = 0.5;
  const g = 10 ** (gainDb / 20);
  const dI = dc ? 0.001 * a : 0;
  const dQ = dc ? 0.0005 * a : 0;
  const make = (n: number) => (c.f32 ? new Float32Array(n) : new Float64Array(n));
  const i = make(c.length);
  const q = make(c.length);
  const w = (2 * Math.PI * c.toneHz) / c.fs;
  for (let n = 0; n < c.length; n++) {
    i[n] = a * Math.cos(w * n + theta) + dI;
    q[n] = g * a * Math.sin(w * n + theta + phaseDeg * deg) + dQ;
  }
  return { i, q };
}

function check(c: Case, m: number, dc: boolean, theta: number) {
  const label = `fs ${c.fs}, ${c.toneHz} Hz, ${c.length} samples, frame ${c.frameLength ?? 'default'}, ${c.f32 ? 'f32' : 'f64'}`;
  const res = planFrames(c.length, c.fs, true, {
    window: 'blackman-harris',
    frameLength: c.frameLength,
    resolutionHz: undefined,
    maxFrameLength: 16384,
    overlap: undefined,
  }).resolutionHz;
  const imb = IMBALANCES[m]!;
  const { i, q } = capture(c, imb.gainDb, imb.phaseDeg, dc, theta);
  const r = measureSideband(i, q, c.fs, { toneHz: c.toneHz, frameLength: c.frameLength });
  const g = 10 ** (imb.gainDb / 20);
  const want = irrDb(g, imb.phaseDeg * deg);
  // The wanted tone's amplitude is A·|1 + g·e^{jφ}|/2 (expanding the §1 model into e^{±jωt}), so
  // the carrier relative to it is the §1 figure less 20·log10(|1 + g·e^{jφ}|/2).
  const carrierDbc =
    CARRIER_DBC -
    20 * Math.log10(Math.hypot(1 + g * Math.cos(imb.phaseDeg * deg), g * Math.sin(imb.phaseDeg * deg)) / 2);
  // The model matches the values computed from Schmidt's formula before the reading is checked.
  expect(want, label).toBeCloseTo(imb.refDb, 2);
  const got = {
    suppressionDb: +r.sidebandSuppressionDb.toFixed(3),
    wantedHz: +r.wanted.frequencyHz.toFixed(3),
    unwantedHz: +r.unwanted.frequencyHz.toFixed(3),
    carrierHz: +r.carrier.frequencyHz.toFixed(3),
    carrierDbc: dc ? +r.carrierDbc.toFixed(3) : 'none',
  };
  const tol = 0.02 * res; // the frequency of every reading within 2% of a frame bin
  const near = (x: number, y: number) => Math.abs(x - y) <= tol;
  const ok =
    Math.abs(r.sidebandSuppressionDb - want) < 0.1 &&
    near(r.wanted.frequencyHz, c.toneHz) &&
    near(r.unwanted.frequencyHz, -c.toneHz) &&
    near(r.carrier.frequencyHz, 0) &&
    (!dc || Math.abs(r.carrierDbc - carrierDbc) < 0.1) &&
    (dc || r.carrierDbc < -100);
  return {
    ok,
    label: `${label}, ${imb.name}${dc ? ' + DC' : ''}`,
    got,
    want: { suppressionDb: +want.toFixed(3), carrierDbc: dc ? +carrierDbc.toFixed(3) : 'none' },
  };
}

/**
 * Each case reads three of the six imbalances, with and without the carrier, rotating so that the
 * f64 and f32 captures of one frame length between them read all six, and each imbalance is read
 * with and without a carrier across the frame lengths (half the readings of the full product).
 */
function sweep(cases: Case[]) {
  const bad: unknown[] = [];
  cases.forEach((c, ci) => {
    const turn = ci + Math.floor(ci / 2);
    for (let j = 0; j < 3; j++) {
      const r = check(c, (turn + 2 * j) % IMBALANCES.length, (turn + j) % 2 === 0, 0.61 * (3 * ci + j));
      if (!r.ok) bad.push(r);
    }
  });
  return bad;
}

const FRAMES_48K: [number, number | undefined][] = [
  [16384, 2048],
  [16384, 4096],
  [65536, 4096],
  [16384, 8192],
  [65536, 8192],
  [24000, 12000],
  [65536, 16384],
  [65536, 32768],
  // Defaults (the capture length capped at 16384): what most callers get.
  [16384, undefined],
  [24000, undefined],
  [48000, undefined],
  [65536, undefined],
  [96000, undefined],
];

describe('measureSideband: suppression and frequencies across frame lengths (K. Schmidt, QEX Aug 1994 §2)', () => {
  for (const toneHz of [700, 1500, 1800, 1900, 3000]) {
    it(`48 kHz, ${toneHz} Hz: every frame length reads the formula within 0.1 dB, each tone where it is`, () => {
      const cases: Case[] = [];
      for (const [length, frameLength] of FRAMES_48K) {
        for (const f32 of [false, true]) cases.push({ fs: 48000, toneHz, length, frameLength, f32 });
      }
      expect(sweep(cases)).toEqual([]);
    });
  }
  for (const toneHz of [700, 1500, 1800]) {
    it(`8 kHz, ${toneHz} Hz: every frame length reads the formula within 0.1 dB, each tone where it is`, () => {
      const cases: Case[] = [];
      for (const [length, frameLength] of [
        [8192, 1024],
        [8192, 2048],
        [16384, 4096],
        [16384, 8192],
        [24000, 12000],
        [32768, 16384],
        [8000, undefined],
        [16384, undefined],
        [48000, undefined],
      ] as [number, number | undefined][]) {
        for (const f32 of [false, true]) cases.push({ fs: 8000, toneHz, length, frameLength, f32 });
      }
      expect(sweep(cases)).toEqual([]);
    });
  }
});

describe('measureSideband: tuning and tone-frequency errors, with and without a carrier (K. Schmidt, QEX Aug 1994 §2)', () => {
  const fs = 48000;
  const frames: [number, number | undefined][] = [
    [16384, 4096],
    [65536, 8192],
    [24000, 12000],
    [65536, 16384],
    [48000, undefined],
  ];
  /**
   * The §1 model around a carrier: I + jQ of `capture` (tone `toneHz`), then multiplied by
   * e^{j2π·tuneHz·t}, as a receiver tuned `tuneHz` low sees it (every component moves by tuneHz).
   */
  function shifted(len: number, toneHz: number, tuneHz: number, phaseDeg: number, dc: boolean) {
    const c: Case = { fs, toneHz, length: len, frameLength: undefined, f32: false };
    const { i, q } = capture(c, 0, phaseDeg, dc, 0.4);
    for (let n = 0; n < len; n++) {
      const w = (2 * Math.PI * tuneHz * n) / fs;
      const [a, b] = [i[n]!, q[n]!];
      i[n] = a * Math.cos(w) - b * Math.sin(w);
      q[n] = a * Math.sin(w) + b * Math.cos(w);
    }
    return { i, q };
  }
  for (const [len, frameLength] of frames) {
    for (const dc of [false, true]) {
      it(`tuning errors of +3.7 and −5.1 Hz, frame ${frameLength ?? 'default'} of ${len}${dc ? ', carrier present' : ', no carrier'}`, () => {
        for (const [toneHz, tuneHz] of [
          [1500, 3.7],
          [1800, -5.1],
        ] as const) {
          const { i, q } = shifted(len, toneHz, tuneHz, 2, dc);
          const r = measureSideband(i, q, fs, { toneHz, frameLength });
          const res = fs / (frameLength ?? Math.min(len, 16384));
          expect(r.sidebandSuppressionDb).toBeCloseTo(35.162, 1); // Schmidt's formula: 2°
          expect(Math.abs(r.wanted.frequencyHz - (toneHz + tuneHz))).toBeLessThan(0.02 * res);
          expect(Math.abs(r.unwanted.frequencyHz - (-toneHz + tuneHz))).toBeLessThan(0.02 * res);
          expect(Math.abs(r.carrier.frequencyHz - tuneHz)).toBeLessThan(0.02 * res);
          expect(r.frequencyErrorHz).toBeCloseTo(tuneHz, 2);
          // K. Schmidt, QEX Aug 1994 §2 carrier figure, less 20·log10(cos 1°) for the 2° wanted amplitude
          // A·|1 + e^{j2°}|/2 = A·cos 1°.
          if (dc) expect(r.carrierDbc).toBeCloseTo(CARRIER_DBC - 20 * Math.log10(Math.cos(deg)), 1);
          else expect(r.carrierDbc).toBeLessThan(-100);
        }
      });
    }
    it(`a tone off its nominal frequency (no tuning error) is mirrored about the carrier, frame ${frameLength ?? 'default'} of ${len}`, () => {
      for (const [asked, actual] of [
        [1000, 1000.3],
        [1500, 1499.2],
      ] as const) {
        const c: Case = { fs, toneHz: actual, length: len, frameLength, f32: true };
        const { i, q } = capture(c, 0.1, 1, false, 1.3);
        const r = measureSideband(i, q, fs, { toneHz: asked, frameLength });
        const res = fs / (frameLength ?? Math.min(len, 16384));
        expect(r.sidebandSuppressionDb).toBeCloseTo(39.614, 1); // Schmidt's formula: 0.1 dB and 1°
        expect(Math.abs(r.wanted.frequencyHz - actual)).toBeLessThan(0.02 * res);
        expect(Math.abs(r.unwanted.frequencyHz + actual)).toBeLessThan(0.02 * res);
        expect(Math.abs(r.carrier.frequencyHz)).toBeLessThan(0.02 * res);
      }
    });
  }
});
