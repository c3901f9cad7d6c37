import { describe, expect, it } from 'vitest';
import { isOrthotoneError } from '../../src/core/errors.js';
import { measureTwoTone } from '../../src/measure/two-tone.js';

const fs = 48000;
const twoTone = (len: number, a: number, f1: number, f2: number, k3: number, k5: number): Float64Array => {
  const y = new Float64Array(len);
  for (let n = 0; n < len; n++) {
    const x = a * (Math.cos((2 * Math.PI * f1 * n) / fs) + Math.cos((2 * Math.PI * f2 * n) / fs + 0.4));
    y[n] = x + k3 * x ** 3 + k5 * x ** 5;
  }
  return y;
};

describe('measureTwoTone', () => {
  it('equal tones: each is 6.02 dB below PEP (Krauss, Bostian & Raab, Solid State Radio Engineering p. 509)', () => {
    const r = measureTwoTone(twoTone(65536, 0.25, 700, 1900, 0, 0), fs, [700, 1900]);
    expect(r.pepDbfs - r.toneDbfs).toBeCloseTo(20 * Math.log10(2), 3);
    expect(r.pepDbfs).toBeCloseTo(20 * Math.log10(0.5), 3);
  });
  it('3rd-order products of a cubic y = x + k·x³ match the closed form', () => {
    // Two tones of amplitude a through k·x³: products at 2f1−f2 and 2f2−f1 of amplitude (3/4)k·a³;
    // each tone becomes a + (9/4)k·a³ (expansion of (cos A + cos B)³, standard trigonometry).
    const a = 0.25;
    const k = -0.3;
    const r = measureTwoTone(twoTone(65536, a, 700, 1900, k, 0), fs, [700, 1900]);
    const expected = 20 * Math.log10(Math.abs((0.75 * k * a ** 3) / (a + 2.25 * k * a ** 3)));
    const third = r.products.filter((p) => p.order === 3);
    expect(third.map((p) => Math.round(p.frequencyHz))).toEqual([500, 3100]); // 2·700−1900 folds to 500 Hz
    for (const p of third) expect(p.dbcTone).toBeCloseTo(expected, 2);
    expect(r.imd3DbPep).toBeCloseTo(expected - 20 * Math.log10(2), 2);
    expect(r.imd5Dbc).toBeLessThan(-120);
  });
  it('5th-order products of y = x + k·x⁵ match the closed form', () => {
    // (cos A + cos B)⁵: amplitude at 3A−2B is 10/16 = 0.625; at A it is 100/16 = 6.25 (multinomial counts).
    const a = 0.2;
    const k = 2;
    const r = measureTwoTone(twoTone(65536, a, 1000, 1300, 0, k), fs, [1000, 1300]);
    const expected = 20 * Math.log10((0.625 * k * a ** 5) / (a + 6.25 * k * a ** 5));
    expect(r.imd5Dbc).toBeCloseTo(expected, 2);
    const five = r.products.filter((p) => p.order === 5).map((p) => Math.round(p.frequencyHz));
    expect(five).toEqual([400, 1900]);
  });
  it('I/Q capture: products on both sides, negative frequencies allowed', () => {
    const len = 65536;
    const i = new Float64Array(len);
    const q = new Float64Array(len);
    const a = 0.25;
    const k = -0.2;
    for (let n = 0; n < len; n++) {
      const w1 = (2 * Math.PI * 300 * n) / fs;
      const w2 = (2 * Math.PI * 1100 * n) / fs;
      let re = a * (Math.cos(w1) + Math.cos(w2));
      let im = a * (Math.sin(w1) + Math.sin(w2));
      // Envelope (AM/AM) cubic: z·(1 + k|z|²): products at 2f1−f2 = −500 Hz and 2f2−f1 = 1900 Hz.
      const m = 1 + k * (re * re + im * im);
      re *= m;
      im *= m;
      i[n] = re;
      q[n] = im;
    }
    const r = measureTwoTone({ i, q }, fs, [300, 1100]);
    const third = r.products.filter((p) => p.order === 3).map((p) => Math.round(p.frequencyHz));
    expect(third).toEqual([-500, 1900]);
    // z(1+k|z|²) with |z|² = 2a²(1 + cos(Δ)): each product k·a³, each tone a(1 + 3k·a²).
    expect(r.imd3Dbc).toBeCloseTo(20 * Math.log10(Math.abs(k * a ** 3) / (a * (1 + 3 * k * a * a))), 2);
  });
  it('rejects one tone or equal tones, and an even order', () => {
    const x = new Float64Array(8192);
    const code = (fn: () => unknown): string | undefined => {
      try {
        fn();
      } catch (e) {
        return isOrthotoneError(e) ? e.code : 'other';
      }
    };
    expect(code(() => measureTwoTone(x, fs, [700, 700]))).toBe('INVALID_ARGUMENT');
    expect(code(() => measureTwoTone(x, fs, [700, 1900], { maxOrder: 4 }))).toBe('INVALID_ARGUMENT');
    expect(code(() => measureTwoTone(x, fs, [700, 705]))).toBe('CAPTURE_TOO_SHORT');
  });
});
