/**
 * Further reading checks found missing by the mutation runs of src/measure. Levels per AES17 (a sine
 * of peak A reads 20·log10 A dBFS) with the scaling of Heinzel, Rüdiger & Schilling 2002.
 */
import { describe, expect, it } from 'vitest';
import { isOrthotoneError } from '../../src/core/errors.js';
import { createRng } from '../../src/core/rng.js';
import { measureSideband } from '../../src/measure/sideband.js';
import { captureLength } from '../../src/measure/signal.js';
import { DEFAULT_SPECTRUM_OPTIONS, floorNear, planFrames } from '../../src/measure/spectrum.js';
import { createToneReader, measureTones } from '../../src/measure/tones.js';
import { measureTwoTone } from '../../src/measure/two-tone.js';

const fs = 48000;
const dbfs = (a: number) => 20 * Math.log10(a);
const real = (len: number, parts: [number, number, number][]) =>
  Float64Array.from({ length: len }, (_, n) => {
    let v = 0;
    for (const [a, hz, ph] of parts) v += a * Math.sin((2 * Math.PI * hz * n) / fs + ph);
    return v;
  });

describe('measureTones: the search span stops short of the next tone', () => {
  it('a generous searchHz is capped at a third of the way to the nearest other tone', () => {
    // A −40 dBc tone at 1000.4 Hz and a strong one 300 Hz above. Asked to search ±400 Hz around
    // 1000 Hz, the reader must still read the weak tone, not climb onto the strong one.
    const x = real(4096, [
      [0.005, 1000.4, 0.3],
      [0.5, 1300, 1.1],
    ]);
    const [weak, strong] = measureTones(x, fs, [1000, 1300], { searchHz: 400 });
    expect(weak!.frequencyHz).toBeCloseTo(1000.4, 1);
    expect(weak!.levelDbfs).toBeCloseTo(dbfs(0.005), 1);
    expect(strong!.levelDbfs).toBeCloseTo(dbfs(0.5), 2);
    // A request's own searchHz is capped the same way.
    const [own] = measureTones(x, fs, [{ hz: 1000, searchHz: 400 }, 1300]);
    expect(own!.frequencyHz).toBeCloseTo(1000.4, 1);
  });
});

describe('measureSideband: a mirror that falls outside the capture', () => {
  it('receiver audio with a carrier: a wanted tone found 150 Hz off puts the mirror below 0 Hz', () => {
    // Upper-sideband receiver 1500 Hz below the carrier, a 1400 Hz tone: carrier (−30 dBc) at 1500 Hz,
    // wanted asked at 2900 Hz but arriving at 3050 Hz. Mirror about the carrier: 3000 − 3050 = −50 Hz,
    // outside the audio, so the unwanted tone is read where it belongs, at 100 Hz.
    const x = Float64Array.from(
      { length: 8192 },
      (_, n) =>
        0.5 * Math.sin((2 * Math.PI * 3050 * n) / fs) + 0.0158 * Math.sin((2 * Math.PI * 1500 * n) / fs + 1),
    );
    const r = measureSideband(x, null, fs, { toneHz: 1400, offsetHz: 1500, searchHz: 200 });
    expect(r.carrier.refined).toBe(true);
    expect(r.carrier.frequencyHz).toBeCloseTo(1500, 1);
    expect(r.wanted.frequencyHz).toBeCloseTo(3050, 1);
    expect(r.unwanted.frequencyHz).toBe(100);
    expect(r.carrierSuppressionDb).toBeCloseTo(20 * Math.log10(0.5 / 0.0158), 1);
  });
  it('I/Q near −Nyquist: the mirror beyond −fs/2 is not read; the nominal place is', () => {
    // Carrier at −17000 Hz (suppressed), a 6000 Hz tone on the upper sideband: wanted asked at
    // −11000 Hz, unwanted at −23000 Hz. The tone arrives 1500 Hz high (found with searchHz 1800):
    // its mirror, −34000 + 9500 = −24500 Hz, is beyond −24000 Hz.
    const len = 4096;
    const f = -9500;
    const i = Float64Array.from({ length: len }, (_, n) => 0.5 * Math.cos((2 * Math.PI * f * n) / fs));
    const q = Float64Array.from({ length: len }, (_, n) => 0.5 * Math.sin((2 * Math.PI * f * n) / fs));
    const r = measureSideband(i, q, fs, { toneHz: 6000, carrierHz: -17000, searchHz: 1800 });
    expect(r.wanted.frequencyHz).toBeCloseTo(f, 1);
    expect(r.frequencyErrorHz).toBeCloseTo(1500, 1);
    expect(r.unwanted.frequencyHz).toBe(-23000);
    expect(r.sidebandSuppressionDb).toBeGreaterThan(92); // below the Blackman–Harris sidelobes (Heinzel 2002)
  });
});

describe('measureTwoTone: products that land on a tone or beyond Nyquist', () => {
  it('1000 and 3000 Hz: the 3rd-order low product folds onto 1000 Hz and the 5th onto 3000 Hz; both are left out', () => {
    // 2·1000 − 3000 = −1000 → 1000 Hz (f1); 3·1000 − 2·3000 = −3000 → 3000 Hz (f2) in a real capture.
    const x = real(4096, [
      [0.3, 1000, 0],
      [0.3, 3000, 0.5],
    ]);
    const r = measureTwoTone(x, fs, [1000, 3000]);
    expect(r.products.map((p) => [p.order, p.side, Math.round(p.frequencyHz)])).toEqual([
      [3, 'high', 5000],
      [5, 'high', 7000],
    ]);
  });
  it('10000 and 11000 Hz in a real capture: 3rd and 5th order products on both sides', () => {
    // 2·10000 − 11000 = 9000, 2·11000 − 10000 = 12000, 3·10000 − 2·11000 = 8000, 3·11000 − 2·10000 = 13000.
    const x = real(4096, [
      [0.3, 10000, 0],
      [0.3, 11000, 0.5],
    ]);
    const r = measureTwoTone(x, fs, [10000, 11000]);
    expect(r.products.map((p) => Math.round(p.frequencyHz))).toEqual([9000, 12000, 8000, 13000]);
  });
  it('I/Q: products beyond +fs/2 are left out', () => {
    // Tones 20000 and 23000 Hz: 3rd order at 17000 and 26000 Hz, 5th at 14000 and 29000 Hz.
    const len = 4096;
    const i = new Float64Array(len);
    const q = new Float64Array(len);
    for (let n = 0; n < len; n++) {
      for (const hz of [20000, 23000]) {
        i[n]! += 0.3 * Math.cos((2 * Math.PI * hz * n) / fs);
        q[n]! += 0.3 * Math.sin((2 * Math.PI * hz * n) / fs);
      }
    }
    const r = measureTwoTone({ i, q }, fs, [20000, 23000]);
    expect(r.products.map((p) => Math.round(p.frequencyHz))).toEqual([17000, 14000]);
  });
});

/** The OrthotoneError `fn` throws, as [code, message, value]. */
const thrown = (fn: () => unknown): [string, string, unknown] => {
  try {
    fn();
  } catch (e) {
    if (isOrthotoneError(e)) return [e.code, e.message, e.value];
    throw e;
  }
  throw new Error('did not throw');
};

describe('refusals carry their code and the offending value', () => {
  const x = new Float64Array(8192);
  it('measureSideband: the tone, the missing offset, a component outside the audio', () => {
    expect(thrown(() => measureSideband(x, x, fs, undefined as never))).toEqual([
      'INVALID_ARGUMENT',
      'toneHz undefined must be a finite number: use a positive value',
      undefined,
    ]);
    expect(thrown(() => measureSideband(x, x, fs, { toneHz: 0 }))).toEqual([
      'INVALID_ARGUMENT',
      'toneHz 0 Hz must be greater than 0',
      0,
    ]);
    expect(thrown(() => measureSideband(x, null, fs, { toneHz: 700 }))[0]).toBe('INVALID_ARGUMENT');
    const [code, , value] = thrown(() => measureSideband(x, null, fs, { toneHz: 700, offsetHz: 500 }));
    expect([code, value]).toEqual(['INVALID_ARGUMENT', 500]);
    expect(thrown(() => measureSideband(x, x, fs, { toneHz: 700, offsetHz: 1500 }))[2]).toBe(1500);
  });
  it('captureLength: the two lengths of a mismatched I/Q pair', () => {
    expect(thrown(() => captureLength({ i: [1, 2], q: [1] }))[2]).toEqual([2, 1]);
  });
});

describe('measureSideband: the unwanted tone is sought only as far as a frequency error can move it', () => {
  it('a stronger spur 100 Hz beyond the unwanted tone is not taken for it', () => {
    // I/Q, tone on its nominal 1000 Hz (no frequency error), no carrier: the unwanted tone (−40 dBc)
    // at −1000 Hz and an unrelated spur (−30 dBc) at −1100 Hz. The suppression read is 40 dB.
    const len = 4096;
    const parts: [number, number][] = [
      [0.5, 1000],
      [0.005, -1000],
      [0.0158, -1100],
    ];
    const i = new Float64Array(len);
    const q = new Float64Array(len);
    for (let n = 0; n < len; n++) {
      for (const [a, hz] of parts) {
        i[n]! += a * Math.cos((2 * Math.PI * hz * n) / fs + 0.3);
        q[n]! += a * Math.sin((2 * Math.PI * hz * n) / fs + 0.3);
      }
    }
    const r = measureSideband(i, q, fs, { toneHz: 1000 });
    expect(r.unwanted.frequencyHz).toBeCloseTo(-1000, 1);
    expect(r.sidebandSuppressionDb).toBeCloseTo(40, 1);
  });
});

describe('planFrames: Welch averages when frames overlap more than once', () => {
  it('two rectangular frames at 75 % overlap: only the one pair of frames counts', () => {
    // Rectangular frames overlapping by N − d correlate as ρ(d) = 1 − d/N (exact for the discrete
    // window). K = 2 frames a quarter frame apart: K_eff = K / (1 + 2·(1 − 1/K)·ρ(N/4)²) (Welch 1967)
    // = 2 / (1 + 0.75²) = 1.28; lags of two and three hops have no pair of frames to correlate.
    const n = 1024;
    const p = planFrames(n + n / 4, 48000, false, {
      ...DEFAULT_SPECTRUM_OPTIONS,
      window: 'rectangular',
      frameLength: n,
      overlap: 0.75,
    });
    expect([p.frames, p.hop]).toEqual([2, 256]);
    expect(p.equivalentAverages).toBeCloseTo(2 / (1 + 0.75 ** 2), 12);
  });
});

describe('floorNear: the exclusion edge', () => {
  it('a bin exactly excludeHz from an excluded frequency is left out', () => {
    // A hand-made real spectrum, bins 10 Hz apart (0…400 Hz), K = 1 (median = ln 2 · mean): bins 10…30
    // hold k + 1, every other bin 1000 + k. Around 200 Hz ± 100 Hz with 200 Hz excluded ± 30 Hz, bins
    // 17…23 go (170 and 230 Hz are exactly 30 Hz away), leaving 14 < 16 bins, so the whole spectrum is
    // used: bins 1…39 less 17…23, 14 small values and 18 large ones, median (1002 + 1003)/2.
    const values = Array.from({ length: 41 }, (_, k) => (k >= 10 && k <= 30 ? k + 1 : 1000 + k));
    const s = {
      ...planFrames(4096, 48000, false, {
        ...DEFAULT_SPECTRUM_OPTIONS,
        window: 'rectangular',
        frameLength: 4096,
      }),
      fftSize: 80,
      binHz: 10,
      equivalentAverages: 1,
      power: Float64Array.from(values),
    };
    expect(floorNear(s, 200, 100, [200], 30)).toBeCloseTo(1002.5 / Math.LN2, 9);
    // ± 29 Hz keeps 170 and 230 Hz: 16 bins in the span, median (18 + 24)/2.
    expect(floorNear(s, 200, 100, [200], 29)).toBeCloseTo(21 / Math.LN2, 9);
  });
});

describe('measureTones: options given as undefined take their defaults', () => {
  it('refineAboveFloorDb and subtractFloor undefined read as the defaults (15 dB, subtract)', () => {
    // A tone 10 dB above the noise per bin: with the floor subtracted it reads lower than without.
    const sigma = 1e-3;
    const rng = createRng(9);
    const x = Float64Array.from(
      { length: 4096 },
      (_, n) => 0.01 * Math.sin((2 * Math.PI * 3000 * n) / fs) + sigma * rng.normal(),
    );
    const [dflt] = measureTones(x, fs, [3000], { frameLength: 256 });
    const [undef] = measureTones(x, fs, [3000], {
      frameLength: 256,
      refineAboveFloorDb: undefined,
      subtractFloor: undefined,
    });
    expect(undef).toEqual(dflt);
    const [raw] = measureTones(x, fs, [3000], { frameLength: 256, subtractFloor: false });
    expect(raw!.levelDbfs).toBeGreaterThan(dflt!.levelDbfs);
    // 10 dB above the floor is not at the floor, with or without subtraction.
    expect(raw!.atFloor).toBe(false);
    expect(dflt!.atFloor).toBe(false);
  });
});

describe('createToneReader: checked when created', () => {
  const x = new Float64Array(4096);
  it('every feature is checked against Nyquist before any reading', () => {
    expect(thrown(() => createToneReader(x, fs, [1000, 30000]))[1]).toMatch(
      /^tone 30000 Hz is outside 0…24000 Hz/,
    );
  });
  it('the sample rate is checked before the tones are compared with its Nyquist', () => {
    expect(thrown(() => createToneReader(x, 100, [1000]))[1]).toBe(
      'sampleRate 100 Hz is out of range: use a value from 1000 to 1000000 Hz',
    );
  });
});
