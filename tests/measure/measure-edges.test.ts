/**
 * The measuring layer's building blocks and refusals, on short captures: the FFT wrapper against a
 * direct DFT, capture shapes, frame planning against closed forms (Welch 1967; Heinzel, Rüdiger &
 * Schilling 2002; F. J. Harris, Proc. IEEE 66(1):51, 1978), the spectrum's calibration at DC, the
 * median-to-mean factor of the noise floor against the exact median of a gamma distribution, and
 * the messages that name the bad value and the fix.
 */
import { describe, expect, it } from 'vitest';
import { createWindow, WINDOW_COEFFICIENTS } from '../../src/core/windows.js';
import { createFft, isPowerOfTwo, nextPowerOfTwo } from '../../src/measure/fft.js';
import { captureLength, isIqCapture } from '../../src/measure/signal.js';
import {
  binFrequency,
  computeSpectrum,
  DEFAULT_SPECTRUM_OPTIONS,
  floorNear,
  frequencyBin,
  gammaMedianToMean,
  planFrames,
  powerAt,
  type Spectrum,
  type SpectrumOptions,
  sharedWindow,
} from '../../src/measure/spectrum.js';
import { refusal } from '../support/errors.js';

const opts = (o: Partial<SpectrumOptions> = {}): SpectrumOptions => ({ ...DEFAULT_SPECTRUM_OPTIONS, ...o });

describe('fft.ts', () => {
  it('isPowerOfTwo and nextPowerOfTwo', () => {
    for (const n of [1, 2, 4, 1024, 2 ** 30]) expect(isPowerOfTwo(n), `${n}`).toBe(true);
    for (const n of [0, -4, 3, 6, 12, 1000, 4.5, Number.NaN, Number.POSITIVE_INFINITY]) {
      expect(isPowerOfTwo(n), `${n}`).toBe(false);
    }
    expect([0, 0.5, 1, 2, 3, 5, 8, 9, 1025].map(nextPowerOfTwo)).toEqual([1, 1, 1, 2, 4, 8, 8, 16, 2048]);
  });
  it('sizes: 4 is the least, 2^24 the most; the refusal names the size to use', () => {
    expect(createFft(4).size).toBe(4);
    for (const [size, use] of [
      [2, 4],
      [1, 4],
      [-8, 4],
      [6, 8],
      [1000, 1024],
    ] as const) {
      const [code, msg] = refusal(() => createFft(size));
      expect(code).toBe('INVALID_ARGUMENT');
      expect(msg).toBe(`FFT size ${size} must be a power of two from 4 to 16777216: use ${use}`);
    }
    expect(refusal(() => createFft(2 ** 25))[1]).toMatch(
      /^FFT size 33554432 must be a power of two from 4 to 16777216/,
    );
  });
  it('realForward fills the whole spectrum and complexForward matches a direct DFT (X[k] = Σ x[n]·e^{−j2πkn/N})', () => {
    const n = 8;
    const x = Float64Array.from(
      { length: 2 * n },
      (_, k) => Math.sin(1.7 * k + 0.3) + 0.25 * Math.cos(0.9 * k * k),
    );
    const out = new Float64Array(2 * n);
    createFft(n).complexForward(x, out);
    const realIn = Float64Array.from({ length: n }, (_, k) => x[2 * k]!);
    const realOut = new Float64Array(2 * n);
    createFft(n).realForward(realIn, realOut);
    for (let k = 0; k < n; k++) {
      let re = 0;
      let im = 0;
      let rr = 0;
      let ri = 0;
      for (let m = 0; m < n; m++) {
        const a = (-2 * Math.PI * k * m) / n;
        re += x[2 * m]! * Math.cos(a) - x[2 * m + 1]! * Math.sin(a);
        im += x[2 * m]! * Math.sin(a) + x[2 * m + 1]! * Math.cos(a);
        rr += x[2 * m]! * Math.cos(a);
        ri += x[2 * m]! * Math.sin(a);
      }
      expect(out[2 * k]).toBeCloseTo(re, 10);
      expect(out[2 * k + 1]).toBeCloseTo(im, 10);
      // Upper half too (bins above N/2 by conjugate symmetry).
      expect(realOut[2 * k]).toBeCloseTo(rr, 10);
      expect(realOut[2 * k + 1]).toBeCloseTo(ri, 10);
    }
  });
});

describe('signal.ts: capture shapes', () => {
  it('tells an {i, q} pair from an array of samples', () => {
    const a = new Float64Array(4);
    expect(isIqCapture({ i: a, q: a })).toBe(true);
    expect(isIqCapture(a)).toBe(false);
    expect(isIqCapture([1, 2, 3])).toBe(false);
    expect(isIqCapture({ i: a } as never)).toBe(false);
    expect(isIqCapture({ q: a } as never)).toBe(false);
    // An array-like that also carries i and q fields is an array of samples.
    expect(isIqCapture(Object.assign([0, 1], { i: a, q: a }) as never)).toBe(false);
    expect(isIqCapture(null as never)).toBe(false);
    expect(isIqCapture('iq' as never)).toBe(false);
    expect(captureLength({ i: [1, 2, 3], q: new Float32Array(3) })).toBe(3);
    expect(captureLength([1, 2, 3, 4, 5])).toBe(5);
  });
  it('refuses what is not a capture, naming the shape wanted', () => {
    for (const bad of [
      { i: 5, q: [1] },
      { i: [1], q: 7 },
      { i: null, q: [1] },
      { i: [1], q: undefined },
    ]) {
      expect(refusal(() => captureLength(bad as never))).toEqual([
        'INVALID_ARGUMENT',
        'an I/Q capture needs arrays i and q of samples',
      ]);
    }
    for (const bad of [null, 7, 'abc', { n: 3 }, undefined]) {
      expect(refusal(() => captureLength(bad as never))).toEqual([
        'INVALID_ARGUMENT',
        'a capture must be an array of samples (real) or an object {i, q} of two arrays (complex)',
      ]);
    }
    expect(refusal(() => captureLength({ i: [1, 2], q: [1] }))).toEqual([
      'BUFFER_MISMATCH',
      'I/Q capture has 2 I samples but 1 Q samples: pass channels of equal length',
    ]);
  });
});

describe('spectrum.ts: bins and frequencies', () => {
  const plan = { fftSize: 8, binHz: 1000, complex: true };
  it('complex spectra: bins from N/2 up are negative frequencies; frequencies wrap into FFT order', () => {
    expect([0, 1, 3, 4, 5, 7].map((k) => binFrequency(plan, k))).toEqual([
      0, 1000, 3000, -4000, -3000, -1000,
    ]);
    expect([0, 1000, -1000, -4000, 3400, 3600, 9000, -9000].map((f) => frequencyBin(plan, f))).toEqual([
      0, 1, 7, 4, 3, 4, 1, 7,
    ]);
  });
  it('real spectra: bin k is k·binHz, and frequencies are not wrapped', () => {
    const real = { ...plan, complex: false };
    expect([0, 4, 7].map((k) => binFrequency(real, k))).toEqual([0, 4000, 7000]);
    expect([-1000, 9000, 2600].map((f) => frequencyBin(real, f))).toEqual([-1, 9, 3]);
  });
});

describe('spectrum.ts: frame planning', () => {
  const fs = 48000;
  it('figures of the frames against their closed forms (Heinzel, Rüdiger & Schilling 2002)', () => {
    // NENBW of the windows (Heinzel 2002 table): Hann 1.5, Blackman–Harris 2.0044, HFT95 3.8112 bins.
    for (const [window, nenbw, half] of [
      ['hann', 1.5, 2],
      ['blackman-harris', 2.0044, 4],
      ['flattop', 3.8112, 5],
    ] as const) {
      // 12000 samples: not a power of two, so the FFT is zero-padded to 16384.
      const p = planFrames(36000, fs, false, opts({ window, frameLength: 12000 }));
      expect(p.frameLength).toBe(12000);
      expect(p.fftSize).toBe(16384);
      expect(p.binHz).toBe(fs / 16384);
      expect(p.resolutionHz).toBe(4);
      expect(p.window).toBe(window);
      expect(p.sampleRate).toBe(fs);
      expect(p.complex).toBe(false);
      // A periodic cosine-sum window sums to N·c0 (every cosine sums to zero over whole periods).
      expect(p.windowSum).toBeCloseTo(12000 * WINDOW_COEFFICIENTS[window][0]!, 8);
      expect(Math.abs(p.nenbwBins - nenbw) / nenbw).toBeLessThan(1e-3);
      expect(p.enbwHz).toBeCloseTo((p.nenbwBins * fs) / 12000, 10);
      // The main lobe of a K-term cosine sum is K bins wide each side: two half-widths separate tones.
      expect(p.resolvableHz).toBe((2 * half * fs) / 12000);
    }
  });
  it('Welch averaging: hop, frame count and equivalent averages (Welch 1967; overlap correlation of Harris 1978)', () => {
    // Rectangular frames do not overlap by default: K frames are K independent averages.
    const r = planFrames(10000, fs, false, opts({ window: 'rectangular', frameLength: 1000 }));
    expect([r.hop, r.frames, r.equivalentAverages]).toEqual([1000, 10, 10]);
    // Hann at 75 % overlap: frame correlations ρ(N/4) = 1/2 + 1/(2π) (Harris's 65.9 %), ρ(N/2) = 1/6
    // (16.7 %), ρ(3N/4) = 1/6 − 1/(2π) (0.75 %), closed forms of ∫sin²(πt)·sin²(π(t+d))dt / ∫sin⁴.
    // K_eff = K / (1 + 2·Σ_j (1 − j/K)·ρ_j²) (Welch 1967).
    const n = 4096;
    const k = 13;
    const h = planFrames(
      n + 12 * (n / 4) + 100,
      fs,
      true,
      opts({ window: 'hann', frameLength: n, overlap: 0.75 }),
    );
    expect([h.hop, h.frames, h.complex]).toEqual([1024, k, true]);
    const rho = [0.5 + 1 / (2 * Math.PI), 1 / 6, 1 / 6 - 1 / (2 * Math.PI)];
    const keff = k / (1 + 2 * rho.reduce((s, x, j) => s + (1 - (j + 1) / k) * x * x, 0));
    expect(Math.abs(h.equivalentAverages - keff) / keff).toBeLessThan(1e-3);
    // One frame only: one average, whatever the overlap.
    expect(planFrames(n, fs, false, opts({ window: 'hann', frameLength: n })).equivalentAverages).toBe(1);
    // Two frames half overlapped: K_eff = 2 / (1 + 2·(1/2)·(1/6)²).
    const two = planFrames(n + n / 2, fs, false, opts({ window: 'hann', frameLength: n }));
    expect(two.frames).toBe(2);
    expect(two.equivalentAverages).toBeCloseTo(2 / (1 + 1 / 36), 3);
  });
  it('the default frame: the whole capture up to maxFrameLength, at least what the spacing needs, at least 16', () => {
    expect(planFrames(5000, fs, false, opts()).frameLength).toBe(5000);
    expect(planFrames(50000, fs, false, opts()).frameLength).toBe(16384);
    const capped = planFrames(5000, fs, false, opts({ maxFrameLength: 1024, window: 'hann' }));
    expect([capped.frameLength, capped.hop, capped.frames]).toEqual([1024, 512, 8]);
    // Tones 100 Hz apart with Blackman–Harris: 2·4 bins → 8·48000/100 = 3840 samples.
    expect(planFrames(20000, fs, false, opts({ maxFrameLength: 1024 }), 100).frameLength).toBe(3840);
    // A resolution: N = ⌈fs/r⌉, never below 16.
    expect(planFrames(20000, fs, false, opts({ resolutionHz: 7 })).frameLength).toBe(6858);
    expect(planFrames(20000, fs, false, opts({ resolutionHz: 10000 })).frameLength).toBe(16);
    expect(refusal(() => planFrames(10, fs, false, opts()))).toEqual([
      'CAPTURE_TOO_SHORT',
      'capture of 10 samples (0.0002083 s at 48000 Hz) is too short for tones Infinity Hz apart with the blackman-harris window: it needs at least 16 samples (0.0003333 s); the hann window needs 0 samples',
    ]);
  });
  it('too short for explicit frames or a resolution: the message names them, with no window hint', () => {
    expect(refusal(() => planFrames(4000, fs, false, opts({ frameLength: 4096 })))).toEqual([
      'CAPTURE_TOO_SHORT',
      'capture of 4000 samples (0.08333 s at 48000 Hz) is too short for 4096-sample frames: it needs at least 4096 samples (0.08533 s)',
    ]);
    expect(refusal(() => planFrames(4000, fs, false, opts({ resolutionHz: 4 })))[1]).toBe(
      'capture of 4000 samples (0.08333 s at 48000 Hz) is too short for 4 Hz resolution (12000-sample frames): it needs at least 12000 samples (0.25 s)',
    );
    // Tones too close for a Hann or rectangular window: no narrower window to suggest.
    for (const window of ['hann', 'rectangular'] as const) {
      const [code, msg] = refusal(() => planFrames(4000, fs, false, opts({ window }), 10));
      expect(code).toBe('CAPTURE_TOO_SHORT');
      expect(msg).toMatch(
        new RegExp(
          `tones 10 Hz apart with the ${window} window: it needs at least \\d+ samples \\([\\d.]+ s\\)$`,
        ),
      );
    }
    expect(refusal(() => planFrames(4000, fs, false, opts({ window: 'flattop' }), 10))[1]).toMatch(
      /needs at least 48000 samples \(1 s\); the hann window needs 19200 samples$/,
    );
  });
  it('explicit frames too short for the spacing: TONES_UNRESOLVED naming what they separate and the frames needed', () => {
    expect(refusal(() => planFrames(100000, fs, false, opts({ frameLength: 4096 }), 20))).toEqual([
      'TONES_UNRESOLVED',
      'features 20 Hz apart are not resolved by the blackman-harris window with 4096-sample frames, which separates 93.75 Hz: use frames of at least 19200 samples (0.4 s)',
    ]);
    // Exactly enough: accepted.
    expect(planFrames(100000, fs, false, opts({ frameLength: 19200 }), 20).frameLength).toBe(19200);
  });
  it('bad options are INVALID_ARGUMENT naming the option and its range', () => {
    const bad: [Partial<SpectrumOptions>, RegExp][] = [
      [{ overlap: 0.96 }, /^overlap 0.96 is out of range: use a value from 0 to 0.95$/],
      [{ overlap: -0.1 }, /^overlap -0.1 is out of range/],
      [{ maxFrameLength: 8 }, /^maxFrameLength 8 must be a whole number from 16 to 4194304$/],
      [{ frameLength: 8 }, /^frameLength 8 must be a whole number from 16 to 16777216$/],
      [{ resolutionHz: 0 }, /^resolutionHz 0 Hz must be greater than 0$/],
      [{ window: 'kaiser' as never }, /^window "kaiser" is not recognised/],
    ];
    for (const [o, re] of bad) {
      const [code, msg] = refusal(() => planFrames(65536, 48000, false, opts(o)));
      expect(code).toBe('INVALID_ARGUMENT');
      expect(msg).toMatch(re);
    }
    expect(refusal(() => planFrames(65536, 100, false, opts()))[1]).toMatch(
      /^sampleRate 100 Hz is out of range/,
    );
    // The ends of the overlap range are allowed.
    expect(planFrames(4096, fs, false, opts({ overlap: 0, frameLength: 1024 })).hop).toBe(1024);
    expect(planFrames(4096, fs, false, opts({ overlap: 0.95, frameLength: 1024 })).hop).toBe(51);
  });
});

describe('spectrum.ts: calibration (Heinzel, Rüdiger & Schilling 2002 §9–10; AES17)', () => {
  it('a DC level D reads D² in bin 0 and at 0 Hz, real or complex, with every window', () => {
    const d = 0.3;
    for (const window of ['rectangular', 'hann', 'blackman-harris', 'flattop'] as const) {
      const x = new Float64Array(3000).fill(d);
      const s = computeSpectrum(x, 48000, { window, frameLength: 1000 });
      expect(s.power.length).toBe(1024 / 2 + 1);
      expect(s.power[0]).toBeCloseTo(d * d, 12);
      const w = sharedWindow(window, 1000);
      expect(powerAt(x, s, w, 0)).toBeCloseTo(d * d, 12);
      const c = computeSpectrum({ i: x, q: new Float64Array(3000).fill(-d) }, 48000, {
        window,
        frameLength: 1000,
      });
      expect(c.power.length).toBe(1024);
      // Complex DC (d − j·d): |d − jd|² = 2d².
      expect(c.power[0]).toBeCloseTo(2 * d * d, 12);
      expect(powerAt({ i: x, q: new Float64Array(3000).fill(-d) }, c, w, 0)).toBeCloseTo(2 * d * d, 12);
    }
  });
  it('a tone between bins reads A² at its own frequency, A² in every frame, real or complex', () => {
    const fs = 48000;
    const hz = 1234.567;
    const a = 0.4;
    const len = 6000;
    const x = Float64Array.from({ length: len }, (_, n) => a * Math.cos((2 * Math.PI * hz * n) / fs + 0.5));
    const s = computeSpectrum(x, fs, { window: 'blackman-harris', frameLength: 2000 });
    expect(s.frames).toBeGreaterThan(3);
    const w = sharedWindow('blackman-harris', 2000);
    expect(Math.abs(10 * Math.log10(powerAt(x, s, w, hz) / (a * a)))).toBeLessThan(1e-3);
    const i = Float64Array.from({ length: len }, (_, n) => a * Math.cos((-2 * Math.PI * hz * n) / fs));
    const q = Float64Array.from({ length: len }, (_, n) => a * Math.sin((-2 * Math.PI * hz * n) / fs));
    const c = computeSpectrum({ i, q }, fs, { window: 'blackman-harris', frameLength: 2000 });
    expect(Math.abs(10 * Math.log10(powerAt({ i, q }, c, w, -hz) / (a * a)))).toBeLessThan(1e-4);
    // The positive frequency of a negative-frequency complex tone holds nothing but sidelobes.
    expect(powerAt({ i, q }, c, w, hz)).toBeLessThan(a * a * 1e-9);
  });
  it('windows are shared per name and length', () => {
    const w = sharedWindow('hann', 64);
    expect(sharedWindow('hann', 64)).toBe(w);
    expect(Array.from(w)).toEqual(Array.from(createWindow('hann', 64)));
    expect(sharedWindow('hann', 65)).not.toBe(w);
    // More lengths than the cache keeps: the first is built again, equal in value.
    for (let n = 100; n < 120; n++) sharedWindow('hann', n);
    expect(Array.from(sharedWindow('hann', 64))).toEqual(Array.from(w));
  });
});

/** Exact median of Gamma(K, 1) for integer K: P(K, x) = 1 − e^{−x}·Σ_{j<K} x^j/j! = 1/2, by bisection. */
function gammaMedian(k: number): number {
  const cdf = (x: number): number => {
    let term = 1;
    let sum = 1;
    for (let j = 1; j < k; j++) {
      term *= x / j;
      sum += term;
    }
    return 1 - Math.exp(-x) * sum;
  };
  let lo = 0;
  let hi = 2 * k + 10;
  for (let it = 0; it < 200; it++) {
    const mid = (lo + hi) / 2;
    if (cdf(mid) < 0.5) lo = mid;
    else hi = mid;
  }
  return (lo + hi) / 2;
}

describe('spectrum.ts: noise floor', () => {
  it('gammaMedianToMean follows the exact median of Gamma(K) over K (Choi 1994)', () => {
    expect(gammaMedianToMean(1)).toBe(Math.LN2); // exponential: median ln 2 · mean
    expect(gammaMedianToMean(0.3)).toBe(Math.LN2);
    for (const k of [2, 3, 5, 10, 40, 200]) {
      const exact = gammaMedian(k) / k;
      expect(Math.abs(gammaMedianToMean(k) / exact - 1), `K = ${k}`).toBeLessThan(2e-3);
    }
    // Between ln 2 and 1, and never falling as K grows (the median/mean of a gamma rises to 1).
    let prev = 0;
    for (let k = 1; k <= 60; k *= 1.01) {
      const v = gammaMedianToMean(k);
      expect(v, `K = ${k}`).toBeGreaterThanOrEqual(Math.LN2);
      expect(v, `K = ${k}`).toBeLessThan(1);
      expect(v, `K = ${k}`).toBeGreaterThanOrEqual(prev);
      prev = v;
    }
  });

  /** A hand-made spectrum: `power[k] = values[k]`, bin width 10 Hz. */
  const handMade = (values: number[], complex: boolean, k = 1): Spectrum => ({
    ...planFrames(4096, 48000, complex, opts({ window: 'rectangular', frameLength: 4096 })),
    fftSize: complex ? values.length : 2 * (values.length - 1),
    binHz: 10,
    equivalentAverages: k,
    power: Float64Array.from(values),
  });

  it('floorNear: the median of the bins within the span, excluded bins left out, as a mean', () => {
    // Real: 41 bins 0…400 Hz; bin k holds k + 1 except DC and the last bin, which hold huge values.
    const vals = Array.from({ length: 41 }, (_, k) => k + 1);
    vals[0] = 1e9;
    vals[40] = 1e9;
    const s = handMade(vals, false, 1);
    // Span 100…300 Hz: bins 10…30 (values 11…31); excluding 200 ± 25 Hz leaves bins 10…17 and 23…30,
    // 16 values, median (18 + 24)/2 = 21; K = 1: mean = median / ln 2.
    expect(floorNear(s, 200, 100, [200], 25)).toBeCloseTo(21 / Math.LN2, 12);
    // Exclusion edges are inclusive: ±30 Hz also drops bins 17 and 23, leaving 14 < 16 values, so the
    // whole spectrum is used: bins 1…39 (not DC, not the last bin) minus 17…23, 32 values.
    const whole = floorNear(s, 200, 100, [200], 30);
    const rest = vals.slice(1, 40).filter((_, j) => Math.abs((j + 1) * 10 - 200) > 30);
    rest.sort((a, b) => a - b);
    const m = rest.length >> 1;
    expect(rest.length).toBe(32);
    expect(whole).toBeCloseTo((rest[m - 1]! + rest[m]!) / 2 / Math.LN2, 12);
    // An odd count takes the middle value: span 100…260 Hz (bins 10…26), nothing excluded: 17 values.
    expect(floorNear(s, 180, 80, [], 0)).toBeCloseTo(19 / Math.LN2, 12);
    // Larger K: the median of χ² with 2K degrees of freedom is nearer its mean (Choi 1994).
    const s8 = handMade(vals, false, 8);
    expect(floorNear(s8, 180, 80, [], 0)).toBeCloseTo(19 / gammaMedianToMean(8), 12);
  });
  it('floorNear on a complex spectrum keeps DC and the negative frequencies; an empty one has no floor', () => {
    // 32 bins, FFT order: bins 16…31 are −160…−10 Hz. Values: 100 at DC, k elsewhere.
    const vals = Array.from({ length: 32 }, (_, k) => (k === 0 ? 100 : k));
    const s = handMade(vals, true);
    // ±200 Hz around 0 takes all 32 bins: median of {1…31, 100} = (16 + 17)/2.
    expect(floorNear(s, 0, 200, [], 0)).toBeCloseTo(16.5 / Math.LN2, 12);
    expect(Number.isNaN(floorNear(handMade([], true), 0, 100, [], 0))).toBe(true);
  });
});
