import { describe, expect, it } from 'vitest';
import { imageRejectionDb } from '../../src/core/units.js';
import {
  predictCarrierDbc,
  predictOutputPeaks,
  predictSuppressionDb,
} from '../../src/generate/prediction.js';
import {
  createAnalyticSource,
  createSignalSource,
  type SignalSpec,
  signalLevels,
} from '../../src/generate/sources.js';
import { TrimStage } from '../../src/generate/trim-stage.js';
import { expectOrthotoneError } from '../support/errors.js';
import { bitDiffs, dftBin, dftBinIq } from './dft.js';
import { kaiserHilbertNetwork, niemitaloNetwork } from './reference-networks.js';

const fs = 48000;

/** A Hann-windowed copy of x[s … s+n) (plain DFTs of noise need a window against leakage). */
function hann(x: Float32Array, s: number, n: number): Float32Array {
  const o = new Float32Array(n);
  for (let k = 0; k < n; k++) o[k] = x[s + k]! * (0.5 - 0.5 * Math.cos((2 * Math.PI * k) / n));
  return o;
}

function fillBlocks(fill: (o: Float32Array) => void, n: number, block: number): Float32Array {
  const x = new Float32Array(n);
  for (let o = 0; o < n; o += block) fill(x.subarray(o, Math.min(n, o + block)));
  return x;
}

describe('test signal sources', () => {
  it('tone: peak level in dBFS (AES17), read by a plain DFT', () => {
    const s = createSignalSource({ kind: 'tone', frequencyHz: 1000, levelDbfs: -6 }, fs);
    const x = fillBlocks((o) => s.fill(o), 4800, 128);
    const X = dftBin(x, 0, 4800, 1000, fs);
    expect((2 * Math.hypot(X.re, X.im)) / 4800).toBeCloseTo(10 ** (-6 / 20), 5);
    expect(s.levels.toneDbfs[0]).toBeCloseTo(-6, 12);
    expect(s.levels.rmsDbfs).toBeCloseTo(-6, 12);
  });
  it('two-tone: each tone at its level; PEP = sum of amplitudes (equal tones 6.02 dB below PEP: Krauss, Bostian & Raab, Solid State Radio Engineering p. 509)', () => {
    const l = signalLevels({ kind: 'two-tone', frequenciesHz: [700, 1900], levelDbfs: -7 }, fs);
    expect(l.pepDbfs - l.toneDbfs[0]!).toBeCloseTo(6.0206, 4);
    expect(l.rmsDbfs).toBeCloseTo(-7 + 3.0103, 4);
    const s = createSignalSource({ kind: 'two-tone', frequenciesHz: [700, 1900], levelDbfs: [-6, -12] }, fs);
    const x = fillBlocks((o) => s.fill(o), 4800, 77);
    for (const [f, lev] of [
      [700, -6],
      [1900, -12],
    ] as const) {
      const X = dftBin(x, 0, 4800, f, fs);
      expect(20 * Math.log10((2 * Math.hypot(X.re, X.im)) / 4800)).toBeCloseTo(lev, 4);
    }
    expect(Math.max(...Array.from(x, Math.abs))).toBeLessThanOrEqual(10 ** (s.levels.pepDbfs / 20) + 1e-6);
  });
  it('log sweep: instantaneous frequency rises exponentially from start to end (Farina 2000)', () => {
    const s = createAnalyticSource(
      { kind: 'sweep', startHz: 100, endHz: 10000, durationSeconds: 1, levelDbfs: 0 },
      fs,
    );
    const i = new Float32Array(fs);
    const q = new Float32Array(fs);
    s.fill(i, q);
    const instHz = (n: number) => {
      const a = Math.atan2(q[n]!, i[n]!);
      const b = Math.atan2(q[n + 1]!, i[n + 1]!);
      let d = b - a;
      if (d < -Math.PI) d += 2 * Math.PI;
      return (d * fs) / (2 * Math.PI);
    };
    expect(instHz(0)).toBeCloseTo(100, 0);
    expect(instHz(fs / 2)).toBeCloseTo(1000, -1);
    expect(instHz(fs - 2)).toBeCloseTo(10000, -2);
  });
  it('noise: RMS in dBFS (AES17); band-limited noise stays in its band; seeded', () => {
    const w = createSignalSource({ kind: 'noise', levelDbfs: -20, seed: 7 }, fs);
    const x = fillBlocks((o) => w.fill(o), 96000, 1000);
    const rms = Math.sqrt(x.reduce((s, v) => s + v * v, 0) / x.length);
    expect(20 * Math.log10(rms * Math.SQRT2)).toBeCloseTo(-20, 1);
    const b = createSignalSource({ kind: 'noise', levelDbfs: -20, seed: 7, band: [1000, 3000] }, fs);
    const y = fillBlocks((o) => b.fill(o), 96000, 333);
    const rmsB = Math.sqrt(y.subarray(4096).reduce((s, v) => s + v * v, 0) / (y.length - 4096));
    expect(20 * Math.log10(rmsB * Math.SQRT2)).toBeCloseTo(-20, 0);
    // Power at 6 kHz (out of band) vs 2 kHz (in band), averaged over segments.
    let inB = 0;
    let outB = 0;
    for (let s = 4096; s + 4800 <= y.length; s += 4800) {
      const h = hann(y, s, 4800);
      const a = dftBin(h, 0, 4800, 2000, fs);
      const c = dftBin(h, 0, 4800, 6000, fs);
      inB += a.re * a.re + a.im * a.im;
      outB += c.re * c.re + c.im * c.im;
    }
    expect(10 * Math.log10(inB / outB)).toBeGreaterThan(60);
    const again = createSignalSource({ kind: 'noise', levelDbfs: -20, seed: 7, band: [1000, 3000] }, fs);
    expect(
      bitDiffs(
        fillBlocks((o) => again.fill(o), 96000, 4096),
        y,
      ),
    ).toBe(0);
  });
  it('block sizes, reset and clone give bit-identical samples', () => {
    const specs: SignalSpec[] = [
      { kind: 'two-tone', frequenciesHz: [700, 1900], levelDbfs: -7 },
      { kind: 'sweep', startHz: 300, endHz: 3000, durationSeconds: 0.1, levelDbfs: -6 },
      { kind: 'noise', levelDbfs: -10, seed: 3, band: [300, 3000] },
      { kind: 'noise', levelDbfs: -10, seed: 3 },
    ];
    for (const spec of specs) {
      const a = createSignalSource(spec, fs);
      const ref = fillBlocks((o) => a.fill(o), 10000, 4096);
      const b = createSignalSource(spec, fs);
      expect(
        bitDiffs(
          fillBlocks((o) => b.fill(o), 10000, 7),
          ref,
        ),
      ).toBe(0);
      b.reset();
      const head = new Float32Array(3333);
      b.fill(head);
      const c = b.clone();
      const t1 = new Float32Array(6667);
      const t2 = new Float32Array(6667);
      b.fill(t1);
      c.fill(t2);
      expect(bitDiffs(t1, ref.subarray(3333))).toBe(0);
      expect(bitDiffs(t2, ref.subarray(3333))).toBe(0);
    }
  });
  it('analytic source: Q lags I by 90°; band noise I equals the real source, Q its Hilbert transform', () => {
    const a = createAnalyticSource({ kind: 'tone', frequencyHz: 1000, levelDbfs: -3 }, fs);
    const i = new Float32Array(4800);
    const q = new Float32Array(4800);
    a.fill(i, q);
    const Z = dftBinIq(i, q, 0, 4800, -1000, fs);
    expect(Math.hypot(Z.re, Z.im) / 4800).toBeLessThan(1e-6);
    const spec: SignalSpec = { kind: 'noise', levelDbfs: -20, seed: 9, band: [1000, 3000] };
    const r = createSignalSource(spec, fs);
    const x = new Float32Array(20000);
    r.fill(x);
    const an = createAnalyticSource(spec, fs);
    const ni = new Float32Array(20000);
    const nq = new Float32Array(20000);
    an.fill(ni, nq);
    expect(bitDiffs(ni, x)).toBe(0);
    // Analytic: the negative-frequency content of I + jQ is far below the positive.
    let pos = 0;
    let neg = 0;
    for (let s = 4096; s + 4800 <= 20000; s += 4800) {
      const hi = hann(ni, s, 4800);
      const hq = hann(nq, s, 4800);
      for (const f of [1500, 2000, 2500]) {
        const p = dftBinIq(hi, hq, 0, 4800, f, fs);
        const m = dftBinIq(hi, hq, 0, 4800, -f, fs);
        pos += p.re * p.re + p.im * p.im;
        neg += m.re * m.re + m.im * m.im;
      }
    }
    expect(10 * Math.log10(pos / neg)).toBeGreaterThan(60);
    expect(() => createAnalyticSource({ kind: 'noise', levelDbfs: -20 }, fs)).toThrow(
      /give the noise a band/,
    );
  });
  it('bad specs: typed errors naming the field', () => {
    for (const [spec, re] of [
      [
        { kind: 'tone', frequencyHz: 30000, levelDbfs: -6 },
        /frequencyHz 30000 Hz must be below Nyquist 24000/,
      ],
      [{ kind: 'tone', frequencyHz: 1000, levelDbfs: Number.NaN }, /levelDbfs NaN/],
      [{ kind: 'two-tone', frequenciesHz: [700], levelDbfs: -6 }, /two frequencies/],
      [{ kind: 'noise', levelDbfs: -6, band: [3000, 300] }, /lower edge 3000 Hz must be below/],
      [{ kind: 'chirp', levelDbfs: -6 }, /kind "chirp" is not recognised/],
    ] as const) {
      expectOrthotoneError(() => createSignalSource(spec as never, fs), 'INVALID_ARGUMENT', re);
    }
  });
});

describe('ideal analytic source through the trim stage, and predictions', () => {
  it('trims on the ideal I/Q give imageRejectionDb within 0.01 dB (K. Schmidt, QEX Aug 1994 §2)', () => {
    const a = createAnalyticSource({ kind: 'tone', frequencyHz: 1000, levelDbfs: -6 }, fs);
    const i = new Float32Array(9600);
    const q = new Float32Array(9600);
    a.fill(i, q);
    for (const t of [
      { gainDb: 0.1, phaseDeg: 1 },
      { gainDb: -0.5, phaseDeg: 0 },
    ]) {
      const st = new TrimStage(fs, { trims: t });
      const oi = new Float32Array(9600);
      const oq = new Float32Array(9600);
      st.process(i, q, oi, oq);
      const w = dftBinIq(oi, oq, 4800, 4800, 1000, fs);
      const u = dftBinIq(oi, oq, 4800, 4800, -1000, fs);
      const read = 20 * Math.log10(Math.hypot(w.re, w.im) / Math.hypot(u.re, u.im));
      const formula = imageRejectionDb(10 ** (t.gainDb / 20), (t.phaseDeg * Math.PI) / 180);
      expect(Math.abs(read - formula)).toBeLessThan(0.01);
    }
  });
  it('predictSuppressionDb: an ideal network reproduces the formula; a real one its own figure', () => {
    const fir = kaiserHilbertNetwork(511, 12, [2000, 22000], fs);
    expect(predictSuppressionDb(fir, 12000, { phaseDeg: 1 })).toBeCloseTo(41.183, 3);
    expect(predictSuppressionDb(fir, 12000, { gainDb: 0.5 })).toBeCloseTo(30.82, 3);
    expect(predictSuppressionDb(fir, 12000, { gainDb: 0.1, phaseDeg: 1 }, 'lower')).toBeCloseTo(39.614, 3);
    const ap = niemitaloNetwork(false);
    expect(predictSuppressionDb(ap, 1000)).toBeGreaterThanOrEqual(ap.predicted.worstSuppressionDb - 1e-9);
    expect(predictCarrierDbc({ dcI: 0.0005, dcQ: 0.00025 }, 0.5)).toBeCloseTo(-59.031, 3);
    const p = predictOutputPeaks(0.9, { gainDb: 1, dcQ: 0.05 }, ap);
    expect(p.q).toBeCloseTo(0.9 * 10 ** 0.05 + 0.05, 12);
    expect(p.overFullScale).toBe(true);
    expect(predictOutputPeaks(0.5, {}, ap).overFullScale).toBe(false);
  });
});
