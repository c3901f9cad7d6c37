import { describe, expect, it } from 'vitest';
import { isOrthotoneError, type OrthotoneError } from '../../src/core/errors.js';
import { createRng } from '../../src/core/rng.js';
import { WINDOW_NAMES } from '../../src/core/windows.js';
import { createFft } from '../../src/measure/fft.js';
import { computeSpectrum } from '../../src/measure/spectrum.js';
import { measureTones } from '../../src/measure/tones.js';

const fs = 48000;
const sine = (len: number, parts: [number, number, number?][]): Float64Array => {
  const x = new Float64Array(len);
  for (const [amp, hz, ph = 0] of parts) {
    for (let n = 0; n < len; n++) x[n]! += amp * Math.sin((2 * Math.PI * hz * n) / fs + ph);
  }
  return x;
};
const codeOf = (fn: () => unknown): [string, string] => {
  try {
    fn();
  } catch (e) {
    if (isOrthotoneError(e)) return [e.code, (e as OrthotoneError).message];
    throw e;
  }
  throw new Error('did not throw');
};

describe('fft wrapper', () => {
  it('matches a direct DFT (X[k] = Σ x[n]·e^{−j2πkn/N})', () => {
    const n = 16;
    const rng = createRng(3);
    const x = Float64Array.from({ length: n }, () => rng.normal());
    const out = new Float64Array(2 * n);
    createFft(n).realForward(x, out);
    for (let k = 0; k < n; k++) {
      let re = 0;
      let im = 0;
      for (let m = 0; m < n; m++) {
        re += x[m]! * Math.cos((2 * Math.PI * k * m) / n);
        im -= x[m]! * Math.sin((2 * Math.PI * k * m) / n);
      }
      expect(out[2 * k]).toBeCloseTo(re, 10);
      expect(out[2 * k + 1]).toBeCloseTo(im, 10);
    }
  });
  it('rejects a size that is not a power of two', () => {
    expect(() => createFft(1000)).toThrow(/power of two .* use 1024/);
  });
});

describe('measureTones: levels (AES17, Heinzel 2002 scaling)', () => {
  it('a full-scale sine reads 0 dBFS, real and complex (AES17)', () => {
    const [r] = measureTones(sine(32768, [[1, 1000]]), fs, [1000]);
    expect(r!.levelDbfs).toBeCloseTo(0, 3);
    const i = sine(32768, [[1, 1000, Math.PI / 2]]);
    const q = sine(32768, [[1, 1000]]);
    const [c, img] = measureTones({ i, q }, fs, [1000, -1000]);
    expect(c!.levelDbfs).toBeCloseTo(0, 3);
    expect(img!.levelDbfs).toBeLessThan(-120);
  });

  for (const window of WINDOW_NAMES.filter((w) => w !== 'rectangular')) {
    it(`${window}: a tone anywhere between bins is read within 0.02 dB`, () => {
      const len = 16384;
      const bin = fs / len;
      let worst = 0;
      for (let d = 0; d <= 1.0001; d += 0.125) {
        const hz = 1500 + d * bin;
        const [r] = measureTones(sine(len, [[0.5, hz, 0.7 * d]]), fs, [1500], { window });
        worst = Math.max(worst, Math.abs(r!.levelDbfs - 20 * Math.log10(0.5)));
        expect(Math.abs(r!.frequencyHz - hz)).toBeLessThan(0.01 * bin);
      }
      expect(worst).toBeLessThan(0.02);
    });
  }

  it('a −54 dBc tone 234.5 Hz from a strong tone is read within 0.2 dB, with noise', () => {
    const rng = createRng(11);
    const len = 65536;
    const x = sine(len, [
      [0.8, 1000.37],
      [0.8 * 10 ** (-54 / 20), 1234.87, 1.1],
    ]);
    for (let n = 0; n < len; n++) x[n]! += 1e-5 * rng.normal();
    for (const window of ['hann', 'blackman-harris', 'flattop'] as const) {
      const [a, b] = measureTones(x, fs, [1000.37, 1234.87], { window });
      expect(Math.abs(b!.levelDbfs - a!.levelDbfs + 54)).toBeLessThan(0.2);
      expect(b!.aboveFloorDb).toBeGreaterThan(20);
    }
  });

  it('noise floor per hertz equals white noise density (power averaged, not dB averaged)', () => {
    // Real white noise of variance σ²: one-sided density 2σ²/fs in mean-square units, i.e. 4σ²/fs
    // in the sine-peak² units a tone reads in. Complex noise σ² per channel: 2σ²/fs (two-sided).
    // A dB average of a single-frame periodogram would read 2.5 dB low (mean of ln of an
    // exponential variable is −γ), so a 0.5 dB tolerance can tell the two apart.
    const rng = createRng(5);
    const len = 262144;
    const sigma = 1e-3;
    const x = sine(len, [[0.5, 3000]]);
    for (let n = 0; n < len; n++) x[n]! += sigma * rng.normal();
    const [r] = measureTones(x, fs, [3000], { frameLength: 4096 });
    expect(Math.abs(r!.floorDbfsPerHz - 10 * Math.log10((4 * sigma * sigma) / fs))).toBeLessThan(0.5);
    const i = new Float64Array(len);
    const q = new Float64Array(len);
    for (let n = 0; n < len; n++) {
      i[n] = 0.5 * Math.cos((2 * Math.PI * 3000 * n) / fs) + sigma * rng.normal();
      q[n] = 0.5 * Math.sin((2 * Math.PI * 3000 * n) / fs) + sigma * rng.normal();
    }
    const [c] = measureTones({ i, q }, fs, [3000], { frameLength: 4096 });
    expect(Math.abs(c!.floorDbfsPerHz - 10 * Math.log10((2 * sigma * sigma) / fs))).toBeLessThan(0.5);
    expect(Math.abs(c!.levelDbfs - 20 * Math.log10(0.5))).toBeLessThan(0.01);
  });

  it('averages power over overlapping frames (frames and equivalent averages reported)', () => {
    const s = computeSpectrum(sine(65536, [[1, 1000]]), fs, { frameLength: 8192, window: 'hann' });
    expect(s.hop).toBe(4096);
    expect(s.frames).toBe(15);
    // 50% overlapped Hann: K_eff ≈ K/(1 + 2·ρ(N/2)²), ρ = 1/6 (Welch 1967; Heinzel 2002 §14).
    expect(s.equivalentAverages).toBeCloseTo(15 / (1 + 2 * (14 / 15) * (1 / 36)), 2);
  });
});

describe('measureTones: bad input', () => {
  it('tone beyond Nyquist: INVALID_ARGUMENT naming Nyquist', () => {
    const [code, msg] = codeOf(() => measureTones(sine(8192, [[1, 1000]]), fs, [25000]));
    expect(code).toBe('INVALID_ARGUMENT');
    expect(msg).toMatch(/25000 Hz .*24000 Hz/);
    expect(
      codeOf(() => measureTones({ i: new Float64Array(8192), q: new Float64Array(8192) }, fs, [-24000]))[0],
    ).toBe('INVALID_ARGUMENT');
  });
  it('capture too short for the requested resolution: CAPTURE_TOO_SHORT with the length needed', () => {
    const [code, msg] = codeOf(() => measureTones(sine(4800, [[1, 1000]]), fs, [1000], { resolutionHz: 1 }));
    expect(code).toBe('CAPTURE_TOO_SHORT');
    expect(msg).toMatch(/4800 samples .* needs at least 48000 samples \(1 s\)/);
  });
  it('capture too short for the tone spacing: CAPTURE_TOO_SHORT naming samples and a narrower window', () => {
    // Blackman–Harris separates 8 bins: tones 10 Hz apart need 8·48000/10 = 38400 samples.
    const [code, msg] = codeOf(() => measureTones(sine(8192, [[1, 1000]]), fs, [1000, 1010]));
    expect(code).toBe('CAPTURE_TOO_SHORT');
    expect(msg).toMatch(/needs at least 38400 samples .* hann window needs 19200 samples/);
  });
  it('tones closer than the chosen frames resolve: TONES_UNRESOLVED with the frame length needed', () => {
    const [code, msg] = codeOf(() =>
      measureTones(sine(65536, [[1, 1000]]), fs, [1000, 1010], { frameLength: 4096 }),
    );
    expect(code).toBe('TONES_UNRESOLVED');
    expect(msg).toMatch(/frames of at least 38400 samples/);
  });
  it('repeated tone and mismatched I/Q lengths', () => {
    expect(codeOf(() => measureTones(sine(8192, [[1, 1000]]), fs, [1000, 1000]))[0]).toBe('INVALID_ARGUMENT');
    expect(
      codeOf(() => measureTones({ i: new Float64Array(10), q: new Float64Array(9) }, fs, [1000]))[0],
    ).toBe('BUFFER_MISMATCH');
  });
});
