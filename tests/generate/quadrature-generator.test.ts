import { describe, expect, it } from 'vitest';
import { isOrthotoneError } from '../../src/core/errors.js';
import { createRng } from '../../src/core/rng.js';
import { imageRejectionDb } from '../../src/core/units.js';
import type { Network } from '../../src/design/network.js';
import { createAllpassRuntime } from '../../src/generate/allpass-runtime.js';
import {
  createQuadratureGenerator,
  type QuadratureGenerator,
} from '../../src/generate/quadrature-generator.js';
import { expectOrthotoneError } from '../support/errors.js';
import { ownFigures, ownResponseAt } from '../support/network-response.js';
import { bitDiffs, dftBin, dftBinIq } from './dft.js';
import { kaiserHilbertNetwork, niemitaloNetwork } from './reference-networks.js';

const deg = (r: number) => (r * 180) / Math.PI;

/** Runs `input` through `gen` in blocks of `block` samples. */
function run(
  gen: QuadratureGenerator,
  input: Float32Array,
  block = 128,
): { i: Float32Array; q: Float32Array } {
  const i = new Float32Array(input.length);
  const q = new Float32Array(input.length);
  for (let o = 0; o < input.length; o += block) {
    const e = Math.min(input.length, o + block);
    gen.process(input.subarray(o, e), i.subarray(o, e), q.subarray(o, e));
  }
  return { i, q };
}

function tone(n: number, f: number, fs: number, amp: number): Float32Array {
  const x = new Float32Array(n);
  for (let k = 0; k < n; k++) x[k] = amp * Math.cos((2 * Math.PI * f * k) / fs);
  return x;
}

/** Image rejection read from the output: |Z(+f)| / |Z(−f)| of I + jQ, dB. */
function readImageDb(
  i: Float32Array,
  q: Float32Array,
  from: number,
  count: number,
  f: number,
  fs: number,
): number {
  const w = dftBinIq(i, q, from, count, f, fs);
  const u = dftBinIq(i, q, from, count, -f, fs);
  return 20 * Math.log10(Math.hypot(w.re, w.im) / Math.hypot(u.re, u.im));
}

const networks: [string, Network][] = [
  ['all-pass, z⁻² sections (Niemitalo)', niemitaloNetwork(false)],
  ['all-pass, first-order sections (Niemitalo split)', niemitaloNetwork(true)],
  ['Hilbert FIR, 127 taps Kaiser', kaiserHilbertNetwork(127, 8, [300, 3700], 8000)],
];

describe('I and Q are 90° apart within the predicted error (independent single-bin DFT)', () => {
  for (const [name, net] of networks) {
    it(name, () => {
      const fs = net.sampleRate;
      const n = 8192;
      const settle = 40000;
      const gen = createQuadratureGenerator(net);
      const [lo, hi] = net.band;
      for (const frac of [0.05, 0.2, 0.5, 0.8, 0.97]) {
        // A whole number of cycles in the window: no leakage.
        const f = (Math.round((lo * (hi / lo) ** frac * n) / fs) * fs) / n;
        gen.reset();
        const { i, q } = run(gen, tone(settle + n, f, fs, 0.5));
        const xi = dftBin(i, settle, n, f, fs);
        const xq = dftBin(q, settle, n, f, fs);
        const measured = deg(Math.atan2(xi.im, xi.re) - Math.atan2(xq.im, xq.re));
        const errDeg = ((((measured - 90 + 180) % 360) + 360) % 360) - 180;
        // Within the design's predicted worst error (plus float32 output rounding) ...
        expect(Math.abs(errDeg)).toBeLessThanOrEqual(net.predicted.maxPhaseErrorDeg + 1e-4);
        // ... and equal to the tests' own evaluator's error at this frequency (tests/support).
        expect(errDeg).toBeCloseTo(ownFigures(ownResponseAt(net, f)).phaseErrorDeg, 4);
        const gainDb = 20 * Math.log10(Math.hypot(xq.re, xq.im) / Math.hypot(xi.re, xi.im));
        expect(Math.abs(gainDb)).toBeLessThanOrEqual(net.predicted.maxGainErrorDb + 1e-4);
        // Amplitude of I: a real tone of amplitude A reads |X| = A·n/2.
        expect((2 * Math.hypot(xi.re, xi.im)) / n).toBeCloseTo(0.5, 4);
      }
    });
  }

  it('the first-order split runs the same response as the z⁻² sections', () => {
    const x = tone(20000, 1234, 44100, 0.7);
    const a = run(createQuadratureGenerator(networks[0]![1]), x);
    const b = run(createQuadratureGenerator(networks[1]![1]), x);
    let d = 0;
    for (let k = 0; k < x.length; k++)
      d = Math.max(d, Math.abs(a.q[k]! - b.q[k]!), Math.abs(a.i[k]! - b.i[k]!));
    expect(d).toBeLessThan(1e-5);
  });
});

describe('trims against the image-rejection formula (K. Schmidt, QEX Aug 1994 §2)', () => {
  // 511-tap Kaiser Hilbert FIR: its own suppression at 6 and 12 kHz is over 130 dB, negligible.
  const net = kaiserHilbertNetwork(511, 12, [2000, 22000], 48000);
  const fs = 48000;
  const n = 4800;
  const settle = 2000;
  for (const f of [6000, 12000]) {
    it(`gain and phase trims at ${f} Hz give imageRejectionDb within 0.01 dB`, () => {
      expect(-ownFigures(ownResponseAt(net, f)).phaseErrorDeg).toBeLessThan(1e-6);
      for (const t of [
        { gainDb: 0.5, phaseDeg: 0 },
        { gainDb: 0, phaseDeg: 2 },
        { gainDb: 0.1, phaseDeg: 1 },
        { gainDb: -1, phaseDeg: -5 },
        { gainDb: 0.01, phaseDeg: 0.1 },
      ]) {
        const gen = createQuadratureGenerator(net, { trims: t });
        const { i, q } = run(gen, tone(settle + n, f, fs, 0.5));
        const read = readImageDb(i, q, settle, n, f, fs);
        expect(
          Math.abs(read - imageRejectionDb(10 ** (t.gainDb / 20), (t.phaseDeg * Math.PI) / 180)),
        ).toBeLessThan(0.01);
      }
    });
  }

  it("Schmidt's formula: 1° alone gives 41.183 dB, 0.5 dB alone 30.820 dB, both 0.1 dB and 1° 39.614 dB", () => {
    for (const [t, pub] of [
      [{ phaseDeg: 1 }, 41.183],
      [{ gainDb: 0.5 }, 30.82],
      [{ gainDb: 0.1, phaseDeg: 1 }, 39.614],
    ] as const) {
      const { i, q } = run(createQuadratureGenerator(net, { trims: t }), tone(settle + n, 12000, fs, 0.5));
      expect(Math.abs(readImageDb(i, q, settle, n, 12000, fs) - pub)).toBeLessThan(0.01);
    }
  });

  it('lower sideband: the wanted tone moves to −f, Q is exactly negated, trims keep their meaning', () => {
    const x = tone(settle + n, 12000, fs, 0.5);
    const up = run(createQuadratureGenerator(net), x);
    const lo = run(createQuadratureGenerator(net, { sideband: 'lower' }), x);
    expect(bitDiffs(up.i, lo.i)).toBe(0);
    let d = 0;
    for (let k = 0; k < x.length; k++) if (lo.q[k] !== -up.q[k]!) d++;
    expect(d).toBe(0);
    const t = { gainDb: 0.1, phaseDeg: 1 };
    const tr = run(createQuadratureGenerator(net, { sideband: 'lower', trims: t }), x);
    // Wanted at −f now: the ratio |Z(−f)|/|Z(+f)| is the same formula.
    expect(
      Math.abs(-readImageDb(tr.i, tr.q, settle, n, 12000, fs) - imageRejectionDb(10 ** 0.005, Math.PI / 180)),
    ).toBeLessThan(0.01);
  });

  it('DC trims give the carrier of the formula: dI = 0.001A, dQ = 0.0005A → −59.031 dBc (K. Schmidt, QEX Aug 1994 §2)', () => {
    const a = 0.5;
    const gen = createQuadratureGenerator(net, { trims: { dcI: 0.001 * a, dcQ: 0.0005 * a } });
    const { i, q } = run(gen, tone(settle + n, 12000, fs, a));
    const z0 = dftBinIq(i, q, settle, n, 0, fs);
    const zt = dftBinIq(i, q, settle, n, 12000, fs);
    const carrierDbc = 20 * Math.log10(Math.hypot(z0.re, z0.im) / Math.hypot(zt.re, zt.im));
    expect(Math.abs(carrierDbc - -59.031)).toBeLessThan(0.01);
    expect(Math.abs(carrierDbc - 20 * Math.log10(Math.hypot(0.001, 0.0005)))).toBeLessThan(0.01);
    // Tone amplitude unchanged by DC (DC is added last and never scales).
    expect(Math.hypot(zt.re, zt.im) / n).toBeCloseTo(a, 4);
  });

  it('fractional skew gives the phase error 2πfτ of a delay τ (common practice, no source; both signs)', () => {
    for (const s of [0.05, -0.05, 0.37, -2.6]) {
      for (const f of [6000, 3000]) {
        const gen = createQuadratureGenerator(net, { trims: { skewSamples: s } });
        const { i, q } = run(gen, tone(settle + n, f, fs, 0.5));
        const phi = (2 * Math.PI * f * s) / fs;
        expect(Math.abs(readImageDb(i, q, settle, n, f, fs) - imageRejectionDb(1, phi))).toBeLessThan(0.01);
        // Q is delayed (lags more) by ωτ: the measured phase difference grows by ωτ.
        const xi = dftBin(i, settle, n, f, fs);
        const xq = dftBin(q, settle, n, f, fs);
        const d = Math.atan2(xi.im, xi.re) - Math.atan2(xq.im, xq.re);
        const wrapped =
          ((((d - Math.PI / 2 - phi + Math.PI) % (2 * Math.PI)) + 2 * Math.PI) % (2 * Math.PI)) - Math.PI;
        expect(Math.abs(wrapped)).toBeLessThan(1e-4);
      }
    }
  });

  it('a correction acts between the gain/phase trim and DC, frequency-dependent as its FIR says', () => {
    // qFromI = [b, 0, −b] adds b·(I[n+1] − I[n−1]) = −2b·sin(ω)·Q to Q: gain 1 − 2b·sin ω.
    const b = 0.01;
    for (const f of [3000, 9000]) {
      const gen = createQuadratureGenerator(net, { correction: { qFromQ: [0, 1, 0], qFromI: [b, 0, -b] } });
      const { i, q } = run(gen, tone(settle + n, f, fs, 0.5));
      const g = 1 - 2 * b * Math.sin((2 * Math.PI * f) / fs);
      expect(Math.abs(readImageDb(i, q, settle, n, f, fs) - imageRejectionDb(g, 0))).toBeLessThan(0.01);
    }
    // The identity correction is bit-exact with none.
    const x = tone(6000, 1000, fs, 0.5);
    const none = run(createQuadratureGenerator(net), x);
    const id = run(
      createQuadratureGenerator(net, { correction: { qFromQ: [0, 0, 1, 0, 0], qFromI: [0, 0, 0, 0, 0] } }),
      x,
    );
    expect(bitDiffs(none.i, id.i) + bitDiffs(none.q, id.q)).toBe(0);
  });
});

describe('block partitioning, clone, ramps', () => {
  const fs = 48000;
  const len = 3 * 28672; // 28672 = lcm(7, 4096): every block size has a boundary there
  const x = new Float32Array(len);
  const rng = createRng(42);
  for (let k = 0; k < len; k++)
    x[k] = 0.3 * Math.cos((2 * Math.PI * 1000 * k) / fs) + 0.1 * (rng.uniform() - 0.5);
  const script = (gen: QuadratureGenerator, block: number) => {
    const i = new Float32Array(len);
    const q = new Float32Array(len);
    for (let o = 0; o < len; o += block) {
      if (o === 28672) gen.setTrims({ gainDb: 0.3, phaseDeg: -2, skewSamples: 0.4, dcI: 0.01, dcQ: -0.02 });
      if (o === 2 * 28672) {
        gen.setCorrection({ qFromQ: [0.01, 0.98, 0.01], qFromI: [0.02, 0, -0.02] });
        gen.setSideband('lower');
      }
      const e = Math.min(len, o + block);
      gen.process(x.subarray(o, e), i.subarray(o, e), q.subarray(o, e));
    }
    return { i, q };
  };
  for (const [name, net] of [
    ['all-pass', niemitaloNetwork(false, 48000)],
    ['all-pass first-order', niemitaloNetwork(true, 48000)],
    ['FIR', kaiserHilbertNetwork(255, 8, [2000, 22000], 48000)],
  ] as const) {
    it(`${name}: block sizes 1, 7, 128, 4096 give bit-identical output through ramps and a correction swap`, () => {
      const ref = script(createQuadratureGenerator(net, { trims: { skewSamples: -1.25 } }), 4096);
      for (const b of [1, 7, 128]) {
        const r = script(createQuadratureGenerator(net, { trims: { skewSamples: -1.25 } }), b);
        expect(bitDiffs(r.i, ref.i)).toBe(0);
        expect(bitDiffs(r.q, ref.q)).toBe(0);
      }
    });
  }

  it('a clone made mid-stream (mid-ramp) continues bit-identically', () => {
    const net = niemitaloNetwork(false, 48000);
    const gen = createQuadratureGenerator(net, { rampSeconds: 0.05 });
    const i = new Float32Array(1000);
    const q = new Float32Array(1000);
    gen.process(x.subarray(0, 1000), i, q);
    gen.setTrims({ gainDb: 1, phaseDeg: 3, skewSamples: 0.7, dcQ: 0.01 });
    gen.process(x.subarray(1000, 1500), i.subarray(0, 500), q.subarray(0, 500));
    expect(gen.ramping).toBe(true);
    const c = gen.clone();
    const a = { i: new Float32Array(20000), q: new Float32Array(20000) };
    const b = { i: new Float32Array(20000), q: new Float32Array(20000) };
    gen.process(x.subarray(1500, 21500), a.i, a.q);
    c.process(x.subarray(1500, 21500), b.i, b.q);
    expect(bitDiffs(a.i, b.i) + bitDiffs(a.q, b.q)).toBe(0);
    expect(c.stats.samplesOut).toBe(gen.stats.samplesOut);
  });

  it('a ramp ends exactly at the target: afterwards the output equals a generator made with those trims', () => {
    const net = kaiserHilbertNetwork(255, 8, [2000, 22000], 48000);
    const t = { gainDb: 0.5, phaseDeg: 4, skewSamples: 0.3, dcI: 0.05 };
    const a = createQuadratureGenerator(net, { rampSeconds: 0.01 });
    const b = createQuadratureGenerator(net, { trims: t });
    const ai = new Float32Array(len);
    const aq = new Float32Array(len);
    const bi = new Float32Array(len);
    const bq = new Float32Array(len);
    a.process(x.subarray(0, 1000), ai.subarray(0, 1000), aq.subarray(0, 1000));
    a.setTrims(t);
    a.process(x.subarray(1000), ai.subarray(1000), aq.subarray(1000));
    b.process(x, bi, bq);
    const after = 1000 + 480 + 200; // ramp + the trim stage's history
    expect(bitDiffs(ai.subarray(after), bi.subarray(after))).toBe(0);
    expect(bitDiffs(aq.subarray(after), bq.subarray(after))).toBe(0);
    // No click: the largest step of I during the ramp stays near the tone's own slope.
    let step = 0;
    for (let k = 1001; k < 1480; k++) step = Math.max(step, Math.abs(ai[k]! - ai[k - 1]!));
    const slope = 0.35 * ((2 * Math.PI * 1000) / fs) + 0.1 + 0.05 / 480;
    expect(step).toBeLessThan(slope + 0.01);
  });
});

describe('bad input and robustness', () => {
  const net = niemitaloNetwork(false, 48000);
  it('buffers of different lengths: BUFFER_MISMATCH at the call', () => {
    const gen = createQuadratureGenerator(net);
    expectOrthotoneError(
      () => gen.process(new Float32Array(128), new Float32Array(128), new Float32Array(127)),
      'BUFFER_MISMATCH',
      /outQ 127/,
    );
  });
  it('trims NaN, |phase| > 45°, |gain| > 6 dB: INVALID_ARGUMENT naming the trim', () => {
    const gen = createQuadratureGenerator(net);
    for (const [t, re] of [
      [{ gainDb: Number.NaN }, /gainDb NaN/],
      [{ phaseDeg: 46 }, /phaseDeg 46/],
      [{ phaseDeg: -50 }, /phaseDeg -50/],
      [{ gainDb: 6.5 }, /gainDb 6.5/],
      [{ skewSamples: 17 }, /skewSamples 17/],
    ] as const) {
      expect(() => gen.setTrims(t)).toThrow(re);
      expect(() => createQuadratureGenerator(net, { trims: t })).toThrow(re);
      try {
        gen.setTrims(t);
      } catch (e) {
        expect(isOrthotoneError(e, 'INVALID_ARGUMENT')).toBe(true);
      }
    }
    expect(() => createQuadratureGenerator(net, { maxSkewSamples: 2, trims: { skewSamples: 3 } })).toThrow(
      /exceeds maxSkewSamples 2/,
    );
    expect(() => gen.setCorrection({ qFromQ: [1, 0], qFromI: [0, 0] })).toThrow(/must be odd/);
    expect(() => gen.setCorrection({ qFromQ: new Array(65).fill(0), qFromI: new Array(65).fill(0) })).toThrow(
      /exceeds this generator's maxCorrectionTaps 63/,
    );
    expect(() =>
      createQuadratureGenerator(net, { maxCorrectionTaps: 0 }).setCorrection({ qFromQ: [1], qFromI: [0] }),
    ).toThrow(/maxCorrectionTaps 0/);
    expect(() => gen.setSideband('middle' as 'upper')).toThrow(/sideband "middle"/);
  });
  it('non-finite input samples do not stop the stream: finite output and a counter', () => {
    const gen = createQuadratureGenerator(net);
    const x = tone(4096, 1000, 48000, 0.5);
    x[10] = Number.NaN;
    x[500] = Number.POSITIVE_INFINITY;
    x[501] = Number.NEGATIVE_INFINITY;
    x[3000] = 3e38;
    const { i, q } = run(gen, x);
    expect(i.every(Number.isFinite) && q.every(Number.isFinite)).toBe(true);
    expect(gen.stats.nonFiniteInputs).toBe(3);
    expect(gen.stats.clampedInputs).toBe(1);
    expect(gen.stats.overFullScale).toBeGreaterThan(0);
    expect(gen.stats.peak).toBeGreaterThan(1);
    // Stream continues: a later block is the same as a fresh generator's after the history clears.
    // The slowest pole of this pair has radius 0.99875 (section c = −0.99875², NIEMITALO_A1), so the
    // limited 1e6 spike decays below 1e-20 within 48000 samples; compare the last 4096 samples of a
    // clean continuation with a fresh generator fed the same samples.
    const more = tone(48000, 1000, 48000, 0.5);
    const after = run(gen, more);
    const fresh = run(createQuadratureGenerator(net), more);
    let diff = 0;
    for (let k = more.length - 4096; k < more.length; k++) {
      diff = Math.max(diff, Math.abs(after.i[k]! - fresh.i[k]!), Math.abs(after.q[k]! - fresh.q[k]!));
    }
    expect(diff).toBeLessThan(1e-6);
    expect(after.q.subarray(more.length - 4096).some((v) => v !== 0)).toBe(true);
  });
  it('counts samples over full scale (never silent clipping) and reports the peak', () => {
    const gen = createQuadratureGenerator(net, { trims: { gainDb: 3 } });
    const x = tone(96000, 1000, 48000, 0.9);
    // The tone's switch-on transient overshoots; read the steady state after it.
    run(gen, x.subarray(0, 48000));
    gen.resetStats();
    const { q } = run(gen, x.subarray(48000));
    const over = q.filter((v) => Math.abs(v) > 1).length;
    expect(over).toBeGreaterThan(0);
    expect(gen.stats.overFullScale).toBe(over);
    expect(gen.stats.peak).toBeCloseTo(0.9 * 10 ** (3 / 20), 2);
    gen.resetStats();
    expect(gen.stats.overFullScale).toBe(0);
  });
  it('long silence: the all-pass state never becomes subnormal', () => {
    const rt = createAllpassRuntime(net.branches);
    const x = new Float64Array(128);
    const oi = new Float64Array(128);
    const oq = new Float64Array(128);
    for (let k = 0; k < 128; k++) x[k] = Math.sin(k);
    rt.process(x, 128, oi, oq);
    x.fill(0);
    let subnormal = 0;
    let maxAbs = 0;
    // 40 s at 48 kHz: without protection the slowest pole (|z| = 0.99937) decays past 1e-308.
    for (let b = 0; b < 15000; b++) {
      rt.process(x, 128, oi, oq);
      for (let k = 0; k < 128; k++) {
        for (const v of [oi[k]!, oq[k]!]) {
          const a = Math.abs(v);
          if (a !== 0 && a < 2.2250738585072014e-308) subnormal++;
          if (b > 14000) maxAbs = Math.max(maxAbs, a);
        }
      }
    }
    expect(subnormal).toBe(0);
    expect(maxAbs).toBeLessThan(1e-30);
    // And the float outputs of the generator are exactly 0 (no subnormal float32 either).
    const gen = createQuadratureGenerator(net);
    run(gen, tone(4800, 1000, 48000, 0.5));
    const { i, q } = run(gen, new Float32Array(48000 * 3));
    expect(i.subarray(120000).every((v) => v === 0) && q.subarray(120000).every((v) => v === 0)).toBe(true);
  });
  it('finite output for huge finite input', () => {
    const fir = kaiserHilbertNetwork(127, 8, [300, 3700], 8000);
    for (const nw of [net, fir]) {
      const gen = createQuadratureGenerator(nw, { trims: { gainDb: 6 } });
      const x = new Float32Array(2048);
      for (let k = 0; k < x.length; k++) x[k] = k % 2 ? 3.4e38 : -3.4e38;
      const { i, q } = run(gen, x);
      expect(i.every(Number.isFinite) && q.every(Number.isFinite)).toBe(true);
    }
  });
});

describe('networks from designNetwork (the project designer)', () => {
  const specs = [
    { sampleRate: 48000, band: [300, 3000], method: 'allpass', targetDb: 50, allpassForm: 'first-order' },
    { sampleRate: 48000, band: [300, 3000], method: 'allpass', targetDb: 50, allpassForm: 'second-order' },
    { sampleRate: 8000, band: [300, 3700], method: 'fir', targetDb: 50 },
  ] as const;
  for (const spec of specs) {
    it(`${spec.method} ${'allpassForm' in spec ? spec.allpassForm : ''}: tone phase difference within the document's prediction`, async () => {
      const { designNetwork } = await import('../../src/design/design-network.js');
      const net = designNetwork({ ...spec, band: [...spec.band] as [number, number] });
      const fs = net.sampleRate;
      const n = 8000;
      const settle = 30000;
      const gen = createQuadratureGenerator(net);
      for (const f0 of [400, 1000, 2900]) {
        const f = (Math.round((f0 * n) / fs) * fs) / n;
        gen.reset();
        const { i, q } = run(gen, tone(settle + n, f, fs, 0.5));
        const w = dftBinIq(i, q, settle, n, f, fs);
        const u = dftBinIq(i, q, settle, n, -f, fs);
        const read = 20 * Math.log10(Math.hypot(w.re, w.im) / Math.hypot(u.re, u.im));
        expect(read).toBeGreaterThanOrEqual(net.predicted.worstSuppressionDb - 0.1);
        const r = ownFigures(ownResponseAt(net, f));
        const xi = dftBin(i, settle, n, f, fs);
        const xq = dftBin(q, settle, n, f, fs);
        const errDeg = deg(Math.atan2(xi.im, xi.re) - Math.atan2(xq.im, xq.re)) - 90;
        const wrapped = ((((errDeg + 180) % 360) + 360) % 360) - 180;
        expect(wrapped).toBeCloseTo(r.phaseErrorDeg, 3);
      }
    });
  }
});
