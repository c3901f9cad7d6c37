/**
 * Tone, sideband and two-tone readings at their edges, on short captures: the spacing the frames
 * must resolve, the Nyquist limits, the options that change how a tone is sought and read, and the
 * refusals, whose messages name the value and the fix. Levels per AES17 (a sine of peak A reads
 * 20·log10 A dBFS) with the scaling of Heinzel, Rüdiger & Schilling 2002.
 */
import { describe, expect, it } from 'vitest';
import { createRng } from '../../src/core/rng.js';
import { measureSideband } from '../../src/measure/sideband.js';
import { leastSpacingHz, measureTones, requireToneFrequencies } from '../../src/measure/tones.js';
import { measureTwoTone } from '../../src/measure/two-tone.js';
import { refusal } from '../support/errors.js';

const fs = 48000;
const dbfs = (a: number) => 20 * Math.log10(a);
const real = (len: number, parts: [number, number, number][], noise = 0, seed = 1) => {
  const rng = createRng(seed);
  return Float64Array.from({ length: len }, (_, n) => {
    let v = noise * rng.normal();
    for (const [a, hz, ph] of parts) v += a * Math.sin((2 * Math.PI * hz * n) / fs + ph);
    return v;
  });
};

describe('leastSpacingHz: what the frames must separate', () => {
  it('real captures: the tones, and each tone from its mirrors about 0 Hz and Nyquist', () => {
    expect(leastSpacingHz([1000], fs, false)).toBe(2000);
    expect(leastSpacingHz([1300, 1000], fs, false)).toBe(300);
    expect(leastSpacingHz([23500], fs, false)).toBe(1000);
    expect(leastSpacingHz([0], fs, false)).toBe(Number.POSITIVE_INFINITY);
    expect(leastSpacingHz([0, 5000], fs, false)).toBe(5000);
  });
  it('complex captures: spacings wrap around the sample rate; one tone needs no spacing', () => {
    expect(leastSpacingHz([1000], fs, true)).toBe(Number.POSITIVE_INFINITY);
    expect(leastSpacingHz([-1000, 1000], fs, true)).toBe(2000);
    expect(leastSpacingHz([23000, -23000], fs, true)).toBe(2000);
    expect(leastSpacingHz([-20000, 0, 21000], fs, true)).toBe(7000);
  });
  it('a tone listed twice is refused by name', () => {
    expect(refusal(() => leastSpacingHz([700, 1900, 700], fs, false))).toEqual([
      'INVALID_ARGUMENT',
      'tone 700 Hz is listed twice: list each tone once',
    ]);
  });
});

describe('requireToneFrequencies: Nyquist limits', () => {
  it('real: 0 Hz up to below fs/2; complex: above −fs/2 and below fs/2', () => {
    expect(() => requireToneFrequencies([0, 23999.9], fs, false)).not.toThrow();
    expect(() => requireToneFrequencies([-23999.9, 23999.9], fs, true)).not.toThrow();
    expect(refusal(() => requireToneFrequencies([1000, 24000], fs, false))).toEqual([
      'INVALID_ARGUMENT',
      'tone 24000 Hz is outside 0…24000 Hz (Nyquist for sampleRate 48000) of this real capture: use a frequency from 0 Hz to below 24000 Hz',
    ]);
    expect(refusal(() => requireToneFrequencies([-0.5], fs, false))[1]).toMatch(
      /^tone -0.5 Hz is outside 0…24000 Hz/,
    );
    for (const f of [24000, -24000]) {
      expect(refusal(() => requireToneFrequencies([f], fs, true))).toEqual([
        'INVALID_ARGUMENT',
        `tone ${f} Hz is beyond Nyquist ±24000 Hz of this I/Q capture at sampleRate 48000: use a frequency between -24000 and 24000 Hz (exclusive)`,
      ]);
    }
    expect(refusal(() => requireToneFrequencies([], fs, false))).toEqual([
      'INVALID_ARGUMENT',
      'no tone frequencies given: list at least one, in Hz',
    ]);
    expect(refusal(() => requireToneFrequencies([Number.NaN], fs, true))[1]).toMatch(
      /^tone frequency NaN must be a finite number: give it in Hz/,
    );
  });
});

describe('measureTones: options', () => {
  it('refineAboveFloorDb and searchHz out of range are refused with the range', () => {
    const x = real(4096, [[0.5, 1000, 0]]);
    expect(refusal(() => measureTones(x, fs, [1000], { refineAboveFloorDb: -1 }))[1]).toBe(
      'refineAboveFloorDb -1 dB is out of range: use a value from 0 to 200 dB',
    );
    expect(refusal(() => measureTones(x, fs, [1000], { refineAboveFloorDb: 201 }))[0]).toBe(
      'INVALID_ARGUMENT',
    );
    expect(refusal(() => measureTones(x, fs, [1000], { searchHz: -1 }))[1]).toBe(
      'searchHz -1 Hz is out of range: use a value from 0 to 24000 Hz',
    );
    expect(refusal(() => measureTones(x, fs, [1000], { searchHz: 24001 }))[0]).toBe('INVALID_ARGUMENT');
    expect(refusal(() => measureTones(x, 500, [100]))[1]).toMatch(/^sampleRate 500 Hz is out of range/);
    // Undefined options fall back to the defaults.
    const [r] = measureTones(x, fs, [1000], {
      searchHz: undefined,
      window: undefined,
      subtractFloor: undefined,
    });
    expect(r!.levelDbfs).toBeCloseTo(dbfs(0.5), 3);
  });
  it('a tone off its nominal frequency is found within searchHz and not beyond it', () => {
    // 4096 samples, Blackman–Harris: bins of 11.7 Hz, default search one main-lobe half-width (4 bins, 46.9 Hz).
    const x = real(4096, [[0.5, 1100.4, 0.3]]);
    const [near] = measureTones(x, fs, [1000], { searchHz: 150 });
    expect(near!.refined).toBe(true);
    expect(near!.frequencyHz).toBeCloseTo(1100.4, 1);
    expect(near!.levelDbfs).toBeCloseTo(dbfs(0.5), 2);
    const [own] = measureTones(x, fs, [{ hz: 1000, searchHz: 150 }]);
    expect(own!.frequencyHz).toBeCloseTo(1100.4, 1);
    // Default span: 100 Hz away is outside it, so 1000 Hz is read where it was asked, on the tone's skirt.
    const [far] = measureTones(x, fs, [1000]);
    expect(far!.frequencyHz).toBe(1000);
    expect(far!.refined).toBe(false);
    expect(far!.levelDbfs).toBeLessThan(dbfs(0.5) - 60);
    // A request's own searchHz overrides the option.
    const [narrow] = measureTones(x, fs, [{ hz: 1000, searchHz: 20 }], { searchHz: 150 });
    expect(narrow!.frequencyHz).toBe(1000);
  });
  it("refine 'never' reads at the asked frequency; the reading there follows the window's response", () => {
    // A Hann window 0.4 bin off the tone: |W(0.4)|/|W(0)| = sinc(0.4)/(1 − 0.4²) (Harris 1978, Hann
    // transform), so the level read there is that much below the tone.
    const len = 8192;
    const bin = fs / len;
    const x = real(3 * len, [[0.5, 3000 + 0.4 * bin, 0.2]]);
    const [r] = measureTones(x, fs, [{ hz: 3000, refine: 'never' }], {
      window: 'hann',
      frameLength: len,
      overlap: 0,
    });
    expect(r!.refined).toBe(false);
    expect(r!.frequencyHz).toBe(3000);
    const hann = Math.sin(Math.PI * 0.4) / (Math.PI * 0.4) / (1 - 0.4 * 0.4);
    expect(r!.levelDbfs).toBeCloseTo(dbfs(0.5 * hann), 2);
    const [auto] = measureTones(x, fs, [3000], { window: 'hann', frameLength: len, overlap: 0 });
    expect(auto!.refined).toBe(true);
    expect(auto!.levelDbfs).toBeCloseTo(dbfs(0.5), 3);
  });
  it('the floor is subtracted from a tone in noise, and a tone at the floor is flagged', () => {
    // White noise σ per sample, 512-sample Blackman–Harris frames: per bin 4σ²·NENBW/N in sine-peak²
    // units (Heinzel 2002), NENBW 2.0044.
    const sigma = 1e-3;
    const len = 8192;
    const frameLength = 512;
    const floorP = (4 * sigma * sigma * 2.0044) / frameLength;
    const strongA = Math.sqrt(floorP * 1e4); // 40 dB above the floor per bin
    const x = real(len, [[strongA, 3000, 0.1]], sigma, 7);
    const [with_] = measureTones(x, fs, [3000], { frameLength });
    const [without] = measureTones(x, fs, [3000], { frameLength, subtractFloor: false });
    expect(Math.abs(with_!.floorDbfs - 10 * Math.log10(floorP))).toBeLessThan(0.5);
    expect(with_!.levelDbfs).toBeCloseTo(dbfs(strongA), 1);
    // Without subtraction the tone reads tone + one bin of noise: 10·log10(1 + 1e-4) higher.
    expect(without!.levelDbfs - with_!.levelDbfs).toBeGreaterThan(0);
    expect(without!.levelDbfs - with_!.levelDbfs).toBeLessThan(0.01);
    expect(with_!.atFloor).toBe(false);
    expect(with_!.aboveFloorDb).toBeCloseTo(with_!.levelDbfs - with_!.floorDbfs, 10);
    expect(with_!.aboveFloorDb).toBeGreaterThan(38);
    // Nothing at 5000 Hz: the reading is at the floor, flagged, and read as half of what is there.
    const [empty] = measureTones(x, fs, [3000, 5000], { frameLength }).slice(1);
    expect(empty!.atFloor).toBe(true);
    expect(empty!.refined).toBe(false);
    expect(empty!.aboveFloorDb).toBeLessThan(3);
    const [emptyRaw] = measureTones(x, fs, [3000, 5000], { frameLength, subtractFloor: false }).slice(1);
    expect(emptyRaw!.atFloor).toBe(true);
    expect(emptyRaw!.levelDbfs - empty!.levelDbfs).toBeCloseTo(10 * Math.log10(2), 6);
    // Uncertainty: larger for the tone at the floor than for the strong one, and at most 99 dB.
    expect(with_!.uncertaintyDb).toBeLessThan(0.05);
    expect(empty!.uncertaintyDb).toBeGreaterThan(with_!.uncertaintyDb);
    expect(empty!.uncertaintyDb).toBeLessThanOrEqual(99);
  });
});

describe('measureSideband: options and refusals', () => {
  const iq = (len: number, hz: number, phaseDeg: number, carrierHz = 0) => {
    const i = new Float64Array(len);
    const q = new Float64Array(len);
    for (let n = 0; n < len; n++) {
      const t = n / fs;
      // Schmidt's model (QEX Aug 1994 §2) shifted to a carrier at carrierHz.
      const a = 0.5 * Math.cos(2 * Math.PI * hz * t);
      const b = 0.5 * Math.sin(2 * Math.PI * hz * t + (phaseDeg * Math.PI) / 180);
      const c = 2 * Math.PI * carrierHz * t;
      i[n] = a * Math.cos(c) - b * Math.sin(c);
      q[n] = a * Math.sin(c) + b * Math.cos(c);
    }
    return { i, q };
  };
  it('an I/Q capture with the carrier off 0 Hz reads the components around carrierHz', () => {
    const { i, q } = iq(16384, 1000, 1, 5000);
    const r = measureSideband(i, q, fs, { toneHz: 1000, carrierHz: 5000 });
    expect(r.wanted.frequencyHz).toBeCloseTo(6000, 2);
    expect(r.unwanted.frequencyHz).toBeCloseTo(4000, 2);
    expect(r.sidebandSuppressionDb).toBeCloseTo(41.183, 1); // Schmidt's formula, 1°
    expect(r.toneHz).toBe(1000);
    expect(r.sideband).toBe('upper');
    expect(r.floorDbc).toBeCloseTo(r.wanted.floorDbfs - r.wanted.levelDbfs, 10);
  });
  it('refusals name the option and the fix', () => {
    const x = new Float64Array(16384);
    expect(refusal(() => measureSideband(x, x, fs, { toneHz: 700, offsetHz: 1500 }))).toEqual([
      'INVALID_ARGUMENT',
      'offsetHz applies to receiver audio: for an I/Q capture give carrierHz (default 0), or pass q = null for audio',
    ]);
    expect(refusal(() => measureSideband(x, undefined, fs, { toneHz: 700 }))[1]).toBe(
      'receiver audio needs offsetHz, the audio frequency where the carrier lands (e.g. 1500 for a 700 Hz tone): or pass q for an I/Q capture',
    );
    expect(refusal(() => measureSideband(x, x, fs, { toneHz: 700, carrierHz: Number.NaN }))[1]).toBe(
      'carrierHz NaN must be a finite number: give it in Hz',
    );
    expect(
      refusal(() => measureSideband(x, null, fs, { toneHz: 700, offsetHz: Number.POSITIVE_INFINITY }))[1],
    ).toMatch(/^offsetHz Infinity must be a finite number: give it in Hz/);
    expect(refusal(() => measureSideband(x, x, fs, { toneHz: 700, sideband: 'both' as never }))[1]).toBe(
      "sideband \"both\" is not recognised: use one of 'upper', 'lower'",
    );
    expect(
      refusal(() =>
        measureSideband(x, null, fs, { toneHz: 700, offsetHz: 1500, receiverSideband: 'usb' as never }),
      )[1],
    ).toBe("receiverSideband \"usb\" is not recognised: use one of 'upper', 'lower'");
    // Each component must land inside 0…Nyquist in the audio; the message names which one.
    expect(refusal(() => measureSideband(x, null, fs, { toneHz: 700, offsetHz: 23500 }))[1]).toBe(
      'the wanted tone falls at 24200 Hz in the audio, outside 0…24000 Hz: with a 700 Hz tone use an offset between 700 and 23300 Hz (offsetHz 23500 given)',
    );
    expect(
      refusal(() =>
        measureSideband(x, null, fs, { toneHz: 700, offsetHz: 700, receiverSideband: 'lower' }),
      )[1],
    ).toMatch(/^the wanted tone falls at 0 Hz in the audio/);
    expect(
      refusal(() => measureSideband(x, null, fs, { toneHz: 700, offsetHz: 0, sideband: 'lower' }))[1],
    ).toMatch(/^the wanted tone falls at -700 Hz/);
    expect(
      refusal(() => measureSideband(x, null, fs, { toneHz: 700, offsetHz: -100, sideband: 'lower' }))[1],
    ).toMatch(/^the wanted tone falls at -800 Hz/);
    expect(refusal(() => measureSideband(x, null, fs, { toneHz: 100, offsetHz: 24000 }))[1]).toMatch(
      /^the wanted tone falls at 24100 Hz/,
    );
    expect(
      refusal(() => measureSideband(x, null, fs, { toneHz: 100, offsetHz: 23950, sideband: 'lower' }))[1],
    ).toMatch(/^the unwanted tone falls at 24050 Hz/);
    // The carrier lies between the two tones, so it is inside whenever they are.
  });
  it('receiver audio: a component exactly at 0 Hz or at Nyquist is refused', () => {
    const x = new Float64Array(16384);
    expect(refusal(() => measureSideband(x, null, fs, { toneHz: 1000, offsetHz: 1000 }))[1]).toMatch(
      /^the unwanted tone falls at 0 Hz/,
    );
    expect(refusal(() => measureSideband(x, null, fs, { toneHz: 1000, offsetHz: 23000 }))[1]).toMatch(
      /^the wanted tone falls at 24000 Hz/,
    );
  });
});

describe('measureTwoTone: products and refusals', () => {
  it('lists the odd products in band, each once, none on a tone (standard intermodulation arithmetic)', () => {
    // f1 = 1000, f2 = 1500: 3rd at 500 and 2000; 5th at 0 (out of band) and 2500; 7th at −500 (folds
    // onto 500, already listed) and 3000; 9th at −1000 (folds onto f1) and 3500.
    const x = real(4096, [
      [0.3, 1000, 0],
      [0.3, 1500, 0.5],
    ]);
    const r = measureTwoTone(x, fs, [1500, 1000], { maxOrder: 9 });
    expect(r.products.map((p) => [p.order, p.side, Math.round(p.frequencyHz)])).toEqual([
      [3, 'low', 500],
      [3, 'high', 2000],
      [5, 'high', 2500],
      [7, 'high', 3000],
      [9, 'high', 3500],
    ]);
    expect(r.tones[0].nominalHz).toBe(1000);
    expect(r.toneImbalanceDb).toBeCloseTo(0, 3);
    // Default order 5: 3rd and 5th only; with 3 the 5th-order figures are not read.
    expect(measureTwoTone(x, fs, [1000, 1500]).products.map((p) => p.order)).toEqual([3, 3, 5]);
    const third = measureTwoTone(x, fs, [1000, 1500], { maxOrder: 3 });
    expect(third.products.length).toBe(2);
    expect(Number.isNaN(third.imd5Dbc)).toBe(true);
    expect(Number.isNaN(third.imd5DbPep)).toBe(true);
  });
  it('products near Nyquist fall out of band and are left out', () => {
    const x = real(4096, [
      [0.3, 15000, 0],
      [0.3, 20000, 0.5],
    ]);
    // 3rd: 10000 and 25000 (beyond 24000 Hz); 5th: 5000 and 30000.
    const r = measureTwoTone(x, fs, [15000, 20000]);
    expect(r.products.map((p) => Math.round(p.frequencyHz))).toEqual([10000, 5000]);
    expect(r.imd3Dbc).toBe(r.products[0]!.dbcTone);
  });
  it('refusals name the tones or the order and the fix', () => {
    const x = new Float64Array(8192);
    expect(refusal(() => measureTwoTone(x, fs, [700, 700]))).toEqual([
      'INVALID_ARGUMENT',
      'two-tone test needs two different tone frequencies, e.g. [700, 1900]; got [700,700]',
    ]);
    expect(refusal(() => measureTwoTone(x, fs, [700] as never))[1]).toMatch(/got \[700\]$/);
    expect(refusal(() => measureTwoTone(x, fs, [700, 1900, 2500] as never))[0]).toBe('INVALID_ARGUMENT');
    expect(refusal(() => measureTwoTone(x, fs, 700 as never))[1]).toMatch(/got 700$/);
    expect(refusal(() => measureTwoTone(x, fs, [700, 1900], { maxOrder: 4 }))).toEqual([
      'INVALID_ARGUMENT',
      'maxOrder 4 must be odd: use 3, 5, 7 or 9',
    ]);
    expect(refusal(() => measureTwoTone(x, fs, [700, 1900], { maxOrder: 11 }))[1]).toBe(
      'maxOrder 11 must be a whole number from 3 to 9',
    );
    expect(refusal(() => measureTwoTone(x, fs, [700, 1900], { maxOrder: 1 }))[0]).toBe('INVALID_ARGUMENT');
  });
});
