// The trim stage on its own (no network in front), with short signals, against independent
// expectations: the closed-form image rejection of a gain/phase error, the carrier of a DC offset,
// the phase of a pure delay, linear ramps that reach their target in the stated time, the documented
// latency and correction alignment, reset and clone, the counters and the output guard. Light
// enough to run per mutant (tests/mutants/scopes.mjs, scope trim-stage).
import { describe, expect, it } from 'vitest';
import { createRng } from '../../src/core/rng.js';
import type { Trims } from '../../src/core/trims.js';
import {
  emptyStats,
  INPUT_LIMIT,
  OUTPUT_FLUSH,
  OUTPUT_LIMIT,
  sanitiseInput,
  TrimStage,
  type TrimStageOptions,
  validateTrimStageOptions,
} from '../../src/generate/trim-stage.js';
import { expectOrthotoneError } from '../support/errors.js';
import { bitDiffs, dftBin, dftBinIq } from './dft.js';

const fs = 48000;

/** Runs I and Q through `stage` in blocks of `block` samples; returns the outputs. */
function run(stage: TrimStage, inI: Float32Array, inQ: Float32Array, block = inI.length) {
  const i = new Float32Array(inI.length);
  const q = new Float32Array(inI.length);
  for (let o = 0; o < inI.length; o += block) {
    const e = Math.min(inI.length, o + block);
    stage.process(inI.subarray(o, e), inQ.subarray(o, e), i.subarray(o, e), q.subarray(o, e));
  }
  return { i, q };
}

/** An exact analytic pair I = A·cos ωn, Q = A·sin ωn (the ideal output of a 90° network). */
function analytic(n: number, f: number, amp: number) {
  const i = new Float32Array(n);
  const q = new Float32Array(n);
  for (let k = 0; k < n; k++) {
    i[k] = amp * Math.cos((2 * Math.PI * f * k) / fs);
    q[k] = amp * Math.sin((2 * Math.PI * f * k) / fs);
  }
  return { i, q };
}

const constant = (n: number, v: number) => new Float32Array(n).fill(v);

// Reading window: 1500 Hz is 32 samples a cycle at 48 kHz, so 4800 samples hold 150 whole cycles
// (no leakage); the first 256 samples (latency 62 and the history filling) are skipped. 5056
// samples also pass the end of the stage's history buffer (2048 spare samples), so its wrap is read.
const f0 = 1500;
const skip = 256;
const win = 4800;

/** Wanted over image power, dB, of I + jQ on exact bins (wanted at +f, or −f for 'lower'). */
function irrDb(i: Float32Array, q: Float32Array, f: number, wanted: 1 | -1): number {
  const w = dftBinIq(i, q, skip, win, wanted * f, fs);
  const u = dftBinIq(i, q, skip, win, -wanted * f, fs);
  return 20 * Math.log10(Math.hypot(w.re, w.im) / Math.hypot(u.re, u.im));
}

/** Phase of Q minus phase of I at f, radians, wrapped to (−π, π]. */
function phaseQminusI(i: Float32Array, q: Float32Array, f: number): number {
  const a = dftBin(i, skip, win, f, fs);
  const b = dftBin(q, skip, win, f, fs);
  const d = Math.atan2(b.im, b.re) - Math.atan2(a.im, a.re);
  return Math.atan2(Math.sin(d), Math.cos(d));
}

describe('gain and phase trims against the closed-form image rejection', () => {
  // I/Q imbalance model I = cos ωt, Q = g·sin(ωt + φ): IRR = (1 + 2g cos φ + g²)/(1 − 2g cos φ + g²)
  // (K. Schmidt, "Phase-Shift Network Analysis and Optimization", QEX Aug 1994 §2; the same formula
  // in Razavi, RF Microelectronics, image-reject receivers, from memory). The stage turns an exact
  // pair into exactly this model: Q'' = g·(Q cos φ + I sin φ) = g·A·sin(ωt + φ).
  const schmidt = (gainDb: number, phaseDeg: number) => {
    const g = 10 ** (gainDb / 20);
    const c = Math.cos((phaseDeg * Math.PI) / 180);
    return 10 * Math.log10((1 + 2 * g * c + g * g) / (1 - 2 * g * c + g * g));
  };
  // Table values computed from that formula (computed, not published: K. Schmidt, QEX Aug 1994).
  const table: [number, number, number][] = [
    [0, 1, 41.183],
    [0, -2, 35.162],
    [0.5, 0, 30.82],
    [-1, 0, 24.806], // (1 + g)/|1 − g| is the same for g and 1/g: −1 dB reads as +1 dB
    [0.1, 1, 39.614],
    [0, 5, 27.198],
  ];
  for (const sideband of ['upper', 'lower'] as const) {
    it(`${sideband} sideband: the image sits where the formula puts it, and Q leads or lags by 90° − φ`, () => {
      const { i: ai, q: aq } = analytic(skip + win, f0, 0.5);
      const s = sideband === 'upper' ? 1 : -1;
      for (const [gainDb, phaseDeg, published] of table) {
        const stage = new TrimStage(fs, { trims: { gainDb, phaseDeg }, sideband, rampSeconds: 0 });
        const { i, q } = run(stage, ai, aq, 1000);
        const read = irrDb(i, q, f0, s);
        expect(Math.abs(read - schmidt(gainDb, phaseDeg))).toBeLessThan(0.005);
        expect(Math.abs(read - published)).toBeLessThan(0.01);
        // Upper: Q'' = g·A·sin(ωt + φ), Q's phase is φ − 90° re I. Lower (Q negated before the
        // trims, DESIGN.md §2): Q'' = g·A·(−sin ωt·cos φ + cos ωt·sin φ) = −g·A·sin(ωt − φ), 90° − φ.
        const phi = (phaseDeg * Math.PI) / 180;
        const want = s > 0 ? phi - Math.PI / 2 : Math.PI / 2 - phi;
        expect(Math.abs(phaseQminusI(i, q, f0) - want)).toBeLessThan(1e-5);
        // the wanted tone keeps I's amplitude A; Q's is g·A
        const xi = dftBin(i, skip, win, f0, fs);
        const xq = dftBin(q, skip, win, f0, fs);
        expect(Math.hypot(xi.re, xi.im) / (win / 2)).toBeCloseTo(0.5, 5);
        expect(Math.hypot(xq.re, xq.im) / (win / 2)).toBeCloseTo(0.5 * 10 ** (gainDb / 20), 5);
      }
    });
  }
});

describe('DC trims and the carrier', () => {
  it('dI = 0.001A, dQ = 0.0005A give a carrier of −59.031 dBc, and the tone keeps its amplitude', () => {
    // Carrier relative to the tone 20·log10(√(dI² + dQ²)/A) (closed form: a DC offset (dI, dQ) is a carrier of amplitude √(dI² + dQ²); computed, not published: −59.031 dBc).
    const a = 0.5;
    const stage = new TrimStage(fs, { trims: { dcI: 0.001 * a, dcQ: 0.0005 * a }, rampSeconds: 0 });
    const { i: ai, q: aq } = analytic(skip + win, f0, a);
    const { i, q } = run(stage, ai, aq, 128);
    const z0 = dftBinIq(i, q, skip, win, 0, fs);
    const zt = dftBinIq(i, q, skip, win, f0, fs);
    const dbc = 20 * Math.log10(Math.hypot(z0.re, z0.im) / Math.hypot(zt.re, zt.im));
    expect(Math.abs(dbc - -59.031)).toBeLessThan(0.005);
    expect(Math.hypot(zt.re, zt.im) / win).toBeCloseTo(a, 5);
    // DC is added after the gain: with +6 dB of gain the carrier stays dI + j·dQ in full-scale units
    const g = new TrimStage(fs, { trims: { gainDb: 6, dcI: 0.25, dcQ: -0.125 }, rampSeconds: 0 });
    const z = run(g, constant(200, 0), constant(200, 0));
    expect([z.i[199], z.q[199]]).toEqual([0.25, -0.125]);
  });
});

describe('skew: a pure delay of Q', () => {
  // A delay of τ samples turns sin ωn into sin ω(n − τ) (common practice, no source): every output
  // sample of Q is the input tone τ samples (plus the latency) late. Accuracy of the interpolator:
  // src/generate/fractional-delay.ts documents an error below −90 dB up to 0.25·fs, so 1e-4 of a
  // 0.5 tone is ample. 2600 samples pass the end of the history buffer (2048 spare samples).
  const f = 3000;
  const len = 2600;
  for (const opts of [
    { maxCorrectionTaps: 0, maxSkewSamples: 16 },
    { maxCorrectionTaps: 63, maxSkewSamples: 16 },
    { maxCorrectionTaps: 0, maxSkewSamples: 3 },
  ]) {
    it(`${JSON.stringify(opts)}: Q is the tone delayed by τ over the whole range, set at once or from the start`, () => {
      const { i: ai, q: aq } = analytic(len, f, 0.5);
      const m = opts.maxSkewSamples;
      for (const tau of [0.37, -2.6, m - 0.5, -(m - 0.5), m, -m]) {
        for (const late of [false, true]) {
          const stage = new TrimStage(fs, {
            ...opts,
            rampSeconds: 0,
            trims: late ? {} : { skewSamples: tau },
          });
          // set immediately (ramp 0) before the first block: the steady delay must follow at once
          if (late) stage.setTrims({ skewSamples: tau });
          const { i, q } = run(stage, ai, aq, 700);
          const lat = stage.latencySamples;
          let worst = 0;
          for (let n = 100; n < len; n++) {
            const e = 0.5 * Math.sin((2 * Math.PI * f * (n - lat - tau)) / fs);
            worst = Math.max(worst, Math.abs(q[n]! - e));
            // I is only delayed by the latency, exactly
            if (i[n] !== ai[n - lat]) worst = 1;
          }
          expect(worst).toBeLessThan(1e-4);
          expect(stage.stats.overFullScale).toBe(0);
        }
      }
    });
  }

  it('skew exactly at maxSkewSamples is accepted, at construction and later', () => {
    const s = new TrimStage(fs, { maxSkewSamples: 2, trims: { skewSamples: -2 } });
    s.setTrims({ skewSamples: 2 });
    expect(s.trims.skewSamples).toBe(2);
  });
});

describe('latency and the alignment of a correction (impulses)', () => {
  /** Index and value of the largest magnitude. */
  const peakOf = (x: Float32Array) => {
    let k = 0;
    for (let n = 1; n < x.length; n++) if (Math.abs(x[n]!) > Math.abs(x[k]!)) k = n;
    return [k, x[k]!];
  };
  const impulse = (n: number, at: number, v: number) => {
    const x = new Float32Array(n);
    x[at] = v;
    return x;
  };
  it('the defaults delay I and Q by (63 − 1)/2 + 16 + 15 = 62 samples, as latencySamples documents', () => {
    const s = new TrimStage(fs);
    expect(s.latencySamples).toBe(62);
    const r = run(s, impulse(128, 0, 0.5), impulse(128, 0, 0.25));
    expect(peakOf(r.i)).toEqual([62, 0.5]);
    expect(peakOf(r.q)).toEqual([62, 0.25]);
  });

  it('maxCorrectionTaps 7, maxSkewSamples 2.5: 3 + ceil(2.5) + 15 = 21; a correction convolves about its centre tap', () => {
    const opts: Partial<TrimStageOptions> = { maxCorrectionTaps: 7, maxSkewSamples: 2.5, rampSeconds: 0 };
    const s = new TrimStage(fs, opts);
    expect(s.latencySamples).toBe(21);
    expect(peakOf(run(s, impulse(64, 3, 0.5), new Float32Array(64)).i)).toEqual([24, 0.5]);
    // Q_c = qFromQ ∗ Q' + qFromI ∗ I' with y[n] = Σ c[k]·x[n − k], taps centred at (5 − 1)/2 = 2
    // (Anttila, Valkama & Renfors, IEEE TCAS-II, Apr 2008): tap 3 delays one sample more, tap 0 two less.
    const c = { qFromQ: [0, 0, 0, 0.75, 0], qFromI: [0.125, 0, 0, 0, 0] };
    const fromQ = new TrimStage(fs, { ...opts, correction: c });
    expect(peakOf(run(fromQ, new Float32Array(64), impulse(64, 3, 0.5)).q)).toEqual([25, 0.375]);
    const fromI = new TrimStage(fs, { ...opts, correction: c });
    const r = run(fromI, impulse(64, 3, 0.5), new Float32Array(64));
    expect(peakOf(r.q)).toEqual([22, 0.0625]);
    expect(peakOf(r.i)).toEqual([24, 0.5]);
    // the same at full length (7 taps, centre 3), and the rest of Q is silent
    const full = { qFromQ: [0, 0, 0, 0, 0.75, 0, 0], qFromI: [0, 0.125, 0, 0, 0, 0, 0] };
    const q7 = run(
      new TrimStage(fs, { ...opts, correction: full }),
      new Float32Array(64),
      impulse(64, 3, 0.5),
    ).q;
    expect(peakOf(q7)).toEqual([25, 0.375]);
    const i7 = run(
      new TrimStage(fs, { ...opts, correction: full }),
      impulse(64, 3, 0.5),
      new Float32Array(64),
    ).q;
    expect(peakOf(i7)).toEqual([22, 0.0625]);
    expect(q7.reduce((a, v) => a + Math.abs(v), 0) + i7.reduce((a, v) => a + Math.abs(v), 0)).toBe(0.4375);
  });

  it('maxCorrectionTaps 0 and maxSkewSamples 0: no delay at all', () => {
    const s = new TrimStage(fs, { maxCorrectionTaps: 0, maxSkewSamples: 0 });
    expect(s.latencySamples).toBe(0);
    expect(peakOf(run(s, impulse(16, 5, 0.5), new Float32Array(16)).i)).toEqual([5, 0.5]);
  });
});

describe('ramps: linear in A = s·g·cos φ, B = g·sin φ, skew, dcI, dcQ; at the target after the ramp time', () => {
  // 0.001 s at 48 kHz is 48 samples: the k-th sample after a change (k = 1…48) carries the fraction
  // k/48 of the step and the 48th the target itself (common practice, no source: a linear parameter
  // ramp to avoid clicks, over exactly the stated time).
  const N = 48;
  const flat = () => new TrimStage(fs, { rampSeconds: 0.001, maxSkewSamples: 0, maxCorrectionTaps: 0 });
  const frac = (k: number) => Math.min(k + 1, N) / N;
  /** `got` against a ramp from `from` to `to` over `len` samples that starts `lat` samples late. */
  const expectRamp = (got: Float32Array, from: number, to: number, len = N, lat = 0) => {
    let worst = 0;
    let at = -1;
    for (let k = 0; k < got.length; k++) {
      const r = Math.min(Math.max(k + 1 - lat, 0), len) / len;
      const d = Math.abs(got[k]! - (from + (to - from) * r));
      if (!(d <= worst)) [worst, at] = [d, k];
    }
    expect(worst, `worst at sample ${at}`).toBeLessThan(1e-7);
  };

  it('DC: a straight line to the target in 48 samples; a change mid-ramp starts from where it is', () => {
    const s = flat();
    s.setTrims({ dcI: 0.48, dcQ: -0.24 });
    expect(s.ramping).toBe(true);
    const a = run(s, constant(24, 0), constant(24, 0));
    expectRamp(a.i, 0, 0.24, 24);
    expectRamp(a.q, 0, -0.12, 24);
    s.setTrims({ dcI: 0 }); // turn back at 0.24 (halfway): 48 samples down from there, no jump
    const b = run(s, constant(60, 0), constant(60, 0));
    expectRamp(b.i, 0.24, 0);
    expectRamp(b.q, -0.12, -0.24);
    expect(s.ramping).toBe(false);
    // a per-change override: 0.0005 s is 24 samples
    s.setTrims({ dcQ: 0.3 }, { rampSeconds: 0.0005 });
    expectRamp(run(s, constant(30, 0), constant(30, 0)).q, -0.24, 0.3, 24);
    // the last step lands on the target itself, not one rounding off it (0.3 + (0.9 − 0.3) is not 0.9
    // in binary floating point): the peak reads exactly 0.9
    const t = flat();
    t.setTrims({ dcI: 0.3 }, { rampSeconds: 0 });
    t.setTrims({ dcI: 0.9 });
    expect(run(t, constant(60, 0), constant(60, 0)).i[59]).toBe(Math.fround(0.9));
    expect(t.stats.peak).toBe(0.9);
  });

  it('gain: Q scales from 1 to g linearly; phase: the I-to-Q term moves from g·sin φ₀ to g·sin φ₁', () => {
    const g = 10 ** (6 / 20);
    const s = flat();
    s.setTrims({ gainDb: 6 });
    expectRamp(run(s, constant(60, 0), constant(60, 0.25)).q, 0.25, 0.25 * g);
    // with a correction delay in front of the output (maxCorrectionTaps 5: 2 samples, no correction
    // set), the gain ramp acts on the input samples, so it leaves the stage 2 samples late
    const d = new TrimStage(fs, { rampSeconds: 0.001, maxSkewSamples: 0, maxCorrectionTaps: 5 });
    expect(d.latencySamples).toBe(2);
    run(d, constant(8, 0), constant(8, 0.25));
    d.setTrims({ gainDb: -6 });
    expectRamp(run(d, constant(60, 0), constant(60, 0.25)).q, 0.25, 0.25 / g, N, 2);
    const p = flat();
    p.setTrims({ phaseDeg: 10 }, { rampSeconds: 0 });
    p.setTrims({ phaseDeg: 30 });
    const sin = (deg: number) => Math.sin((deg * Math.PI) / 180);
    expectRamp(run(p, constant(60, 0.25), constant(60, 0)).q, 0.25 * sin(10), 0.25 * sin(30));
    const c = flat();
    c.setTrims({ phaseDeg: -30 });
    expectRamp(run(c, constant(60, 0), constant(60, 0.25)).q, 0.25, 0.25 * Math.cos(Math.PI / 6));
  });

  it('sideband: Q goes linearly from +Q through 0 (at half the ramp) to −Q', () => {
    const s = flat();
    s.setSideband('lower');
    const r = run(s, constant(60, 0.1), constant(60, 0.5));
    expectRamp(r.q, 0.5, -0.5);
    expect(r.q[N / 2 - 1]).toBe(0);
    expectRamp(r.i, 0.1, 0.1);
    expect(s.sideband).toBe('lower');
  });

  it('skew: the delay moves linearly from −0.3 to 2 samples (each sample read at its own delay), then holds exactly', () => {
    const s = new TrimStage(fs, {
      rampSeconds: 0.001,
      maxSkewSamples: 4,
      maxCorrectionTaps: 0,
      trims: { skewSamples: -0.3 },
    });
    const lat = s.latencySamples; // 4 + 15
    const f = 1000;
    const len = 400;
    const { i: ai, q: aq } = analytic(len, f, 0.5);
    const out = { q: new Float32Array(len) };
    const head = run(s, ai.subarray(0, 200), aq.subarray(0, 200));
    s.setTrims({ skewSamples: 2 });
    const tail = run(s, ai.subarray(200), aq.subarray(200));
    out.q.set(head.q);
    out.q.set(tail.q, 200);
    let worst = 0;
    for (let n = 100; n < len; n++) {
      const tau = n < 200 ? -0.3 : -0.3 + 2.3 * frac(n - 200);
      const e = 0.5 * Math.sin((2 * Math.PI * f * (n - lat - tau)) / fs);
      worst = Math.max(worst, Math.abs(out.q[n]! - e));
    }
    expect(worst).toBeLessThan(1e-4);
    // after the ramp a whole-sample delay is exact: the very input samples, 21 later
    expect(bitDiffs(out.q.subarray(300), aq.subarray(300 - lat - 2, len - lat - 2))).toBe(0);
  });
});

describe('a correction set mid-stream, reset and clone', () => {
  const len = 3000;
  const rng = createRng(11);
  const xi = new Float32Array(len);
  const xq = new Float32Array(len);
  for (let k = 0; k < len; k++) {
    xi[k] = 0.4 * Math.cos((2 * Math.PI * 700 * k) / fs) + 0.05 * (rng.uniform() - 0.5);
    xq[k] = 0.4 * Math.sin((2 * Math.PI * 700 * k) / fs) + 0.05 * (rng.uniform() - 0.5);
  }
  const cases = [
    {
      maxCorrectionTaps: 63,
      correction: { qFromQ: [0.01, 0.97, 0.02, 0, -0.01], qFromI: [0.02, 0, 0.01, 0, -0.03] },
    },
    { maxCorrectionTaps: 1, correction: { qFromQ: [0.95], qFromI: [0.04] } },
    { maxCorrectionTaps: 3, correction: { qFromQ: [0.02, 0.96, 0.01], qFromI: [0, 0.03, 0] } },
  ];
  for (const { maxCorrectionTaps, correction } of cases) {
    it(`maxCorrectionTaps ${maxCorrectionTaps}: from the next block on, the output is that of a stage that always had the correction`, () => {
      // The stage's own promise (setCorrection): the interpolator's history is recomputed as if the
      // correction had always been set. Fractional skew makes it read that history.
      const trims = { skewSamples: 1.5, gainDb: 0.2, phaseDeg: -1 };
      const late = new TrimStage(fs, { maxCorrectionTaps, trims, rampSeconds: 0 });
      const always = new TrimStage(fs, { maxCorrectionTaps, trims, rampSeconds: 0, correction });
      const a = run(late, xi.subarray(0, 1000), xq.subarray(0, 1000), 100);
      expect(late.correction).toBeNull();
      late.setCorrection(correction);
      const b = run(always, xi, xq, 100);
      const c = run(late, xi.subarray(1000), xq.subarray(1000), 100);
      expect(bitDiffs(c.i, b.i.subarray(1000)) + bitDiffs(c.q, b.q.subarray(1000))).toBe(0);
      expect(bitDiffs(a.i, b.i.subarray(0, 1000))).toBe(0);
      // and the correction really acts: Q differs from the uncorrected stage's
      const none = run(new TrimStage(fs, { maxCorrectionTaps, trims, rampSeconds: 0 }), xi, xq, 100);
      expect(bitDiffs(none.q.subarray(1000), c.q)).toBeGreaterThan(1900);
    });
  }

  it('reset mid-ramp: silence state, the ramp ended at its target, zero counters; then as a new stage', () => {
    const c = cases[0]!.correction;
    const s = new TrimStage(fs, { rampSeconds: 0.01, correction: c });
    run(s, xi, xq, 128); // past the end of the history buffer, so all of it holds signal
    const t = { skewSamples: -3.25, gainDb: 0.4, dcQ: 0.01 };
    s.setTrims(t);
    run(s, xi.subarray(0, 100), xq.subarray(0, 100));
    expect(s.ramping).toBe(true);
    s.reset();
    expect(s.ramping).toBe(false);
    expect(s.stats).toEqual(emptyStats());
    const fresh = new TrimStage(fs, { rampSeconds: 0.01, correction: c, trims: t });
    const a = run(s, xi, xq, 128);
    const b = run(fresh, xi, xq, 128);
    expect(bitDiffs(a.i, b.i) + bitDiffs(a.q, b.q)).toBe(0);
    expect(s.stats).toEqual(fresh.stats);
    // resetStats alone keeps the state
    s.resetStats();
    expect(s.stats).toEqual(emptyStats());
  });

  it('a clone made mid-ramp with a correction and non-default sizes continues bit-identically, independently', () => {
    const opts = { maxSkewSamples: 4, maxCorrectionTaps: 7, rampSeconds: 0.002, sideband: 'lower' as const };
    const s = new TrimStage(fs, {
      ...opts,
      correction: cases[2]!.correction,
      trims: { skewSamples: 0.75, dcI: 0.01 },
    });
    run(s, xi.subarray(0, 2500), xq.subarray(0, 2500), 128); // past the history wrap
    s.setTrims({ skewSamples: -2.5, phaseDeg: 2, gainDb: -0.3 });
    run(s, xi.subarray(0, 40), xq.subarray(0, 40));
    expect(s.ramping).toBe(true);
    const c = s.clone();
    expect(c.trims).toEqual(s.trims);
    expect(c.sideband).toBe('lower');
    expect(c.correction).toEqual(s.correction);
    expect([c.latencySamples, c.maxSkewSamples, c.maxCorrectionTaps]).toEqual([s.latencySamples, 4, 7]);
    expect(c.stats).toEqual(s.stats);
    const a = run(s, xi, xq, 100);
    const b = run(c, xi, xq, 100);
    expect(bitDiffs(a.i, b.i) + bitDiffs(a.q, b.q)).toBe(0);
    expect(c.stats).toEqual(s.stats);
    // the same default ramp afterwards (0.002 s = 96 samples), and no shared state
    c.setTrims({ dcQ: 0.2 });
    s.setTrims({ dcQ: 0.2 });
    const a2 = run(s, xi.subarray(0, 95), xq.subarray(0, 95));
    const b2 = run(c, xi.subarray(0, 95), xq.subarray(0, 95));
    expect(bitDiffs(a2.q, b2.q)).toBe(0);
    expect([s.ramping, c.ramping]).toEqual([true, true]);
    c.setCorrection(null);
    expect(s.correction).not.toBeNull();
  });

  it('a steady clone (fractional skew, correction) continues bit-identically too', () => {
    const s = new TrimStage(fs, {
      correction: cases[0]!.correction,
      trims: { skewSamples: 2.3, phaseDeg: 1 },
    });
    run(s, xi.subarray(0, 700), xq.subarray(0, 700));
    const c = s.clone();
    const a = run(s, xi, xq, 128);
    const b = run(c, xi, xq, 128);
    expect(bitDiffs(a.i, b.i) + bitDiffs(a.q, b.q)).toBe(0);
  });

  it('the correction kept is a copy of both filters', () => {
    const s = new TrimStage(fs, { maxCorrectionTaps: 3 });
    const c = { qFromQ: [0, 1, 0], qFromI: [0.01, 0, 0] };
    s.setCorrection(c);
    c.qFromI[0] = 0.5;
    expect(s.correction?.qFromI).toEqual([0.01, 0, 0]);
  });
});

describe('block-size invariance (short script, the stage alone)', () => {
  it('blocks of 1, 7, 100 and 140 give output bit-identical to blocks of 700', () => {
    const len = 4900;
    const rng = createRng(3);
    const xi = new Float32Array(len);
    const xq = new Float32Array(len);
    for (let k = 0; k < len; k++) {
      xi[k] = 0.3 * Math.cos((2 * Math.PI * 900 * k) / fs) + 0.1 * (rng.uniform() - 0.5);
      xq[k] = 0.3 * Math.sin((2 * Math.PI * 900 * k) / fs) + 0.1 * (rng.uniform() - 0.5);
    }
    // events at multiples of 700 (a multiple of 1, 7, 100 and 140), where every block size has a boundary
    const script = (block: number) => {
      const s = new TrimStage(fs, { rampSeconds: 0.003, trims: { skewSamples: 1 } });
      const i = new Float32Array(len);
      const q = new Float32Array(len);
      for (let o = 0; o < len; o += block) {
        if (o === 700) s.setTrims({ skewSamples: -0.6, gainDb: 0.3, phaseDeg: -2, dcI: 0.01 });
        if (o === 1400) s.setCorrection({ qFromQ: [0.01, 0.98, 0.01], qFromI: [0.02, 0, -0.02] });
        if (o === 2100) s.setSideband('lower');
        if (o === 2800) s.setTrims({ skewSamples: 2 });
        if (o === 3500) s.setCorrection(null);
        const e = Math.min(len, o + block);
        s.process(xi.subarray(o, e), xq.subarray(o, e), i.subarray(o, e), q.subarray(o, e));
      }
      return { i, q, stats: { ...s.stats } };
    };
    const ref = script(700);
    for (const b of [1, 7, 100, 140]) {
      const r = script(b);
      expect(bitDiffs(r.i, ref.i) + bitDiffs(r.q, ref.q)).toBe(0);
      expect(r.stats).toEqual(ref.stats);
    }
    expect(ref.stats.samplesOut).toBe(2 * len);
  });
});

describe('counters and the output guard', () => {
  // Each of the stage's internal paths: the one-pass steady path, whole-sample delays with a
  // correction (an identity, so values pass exactly), the fractional-skew interpolator, and a ramp
  // in progress (to the same trims: values constant, but the ramped path runs).
  const paths: [string, (t: Partial<Trims>) => TrimStage, boolean][] = [
    [
      'steady',
      (t) => new TrimStage(fs, { maxSkewSamples: 0, maxCorrectionTaps: 0, rampSeconds: 0, trims: t }),
      true,
    ],
    [
      'identity correction',
      (t) => new TrimStage(fs, { rampSeconds: 0, trims: t, correction: { qFromQ: [1], qFromI: [0] } }),
      true,
    ],
    [
      'fractional skew',
      (t) => new TrimStage(fs, { rampSeconds: 0, trims: { ...t, skewSamples: 0.5 } }),
      false,
    ],
    [
      'ramping',
      (t) => {
        const s = new TrimStage(fs, { rampSeconds: 0, trims: t });
        s.setTrims({}, { rampSeconds: 1 });
        return s;
      },
      true,
    ],
  ];
  for (const [name, make, exactQ] of paths) {
    it(`${name}: full scale 1.0 is not over, the next float is; peak is the largest |output|; samplesOut counts I and Q`, () => {
      const s = make({});
      const lat = s.latencySamples;
      // The stage works in chunks of 128 samples: the over-full-scale samples leave at chunk starts
      // (outputs 256 and 384), so a sample is neither missed nor counted twice at a boundary.
      const n = 512;
      const over = Math.fround(1 + 2 ** -23);
      const over2 = Math.fround(1 + 2 ** -19);
      const i = constant(n, 0.25);
      const q = constant(n, 0.25);
      // exactly full scale, once beside a silent partner (so the pair is looked at closely)
      i[100 - lat] = 1;
      q[100 - lat] = 0;
      i[120 - lat] = 0;
      q[120 - lat] = -1;
      i[256 - lat] = over2;
      q[384 - lat] = -over;
      const r = run(s, i, q);
      // the fractional-skew interpolator spreads Q's single samples: count only from the data
      const fromData = (x: { i: Float32Array; q: Float32Array }) => {
        let count = 0;
        let peak = 0;
        for (let k = 0; k < x.i.length; k++) {
          for (const v of [x.i[k]!, x.q[k]!]) {
            if (Math.abs(v) > 1) count++;
            peak = Math.max(peak, Math.abs(v));
          }
        }
        return { count, peak };
      };
      const d = fromData(r);
      expect([r.i[100], r.i[256]]).toEqual([1, over2]);
      if (exactQ) expect([r.q[120], r.q[384], d.count, d.peak]).toEqual([-1, -over, 2, over2]);
      expect(s.stats.overFullScale).toBe(d.count);
      // exact where the outputs are exact; the interpolator's outputs are read back rounded to float32
      if (exactQ) expect(s.stats.peak).toBe(d.peak);
      expect(s.stats.peak).toBeCloseTo(d.peak, 6);
      expect(s.stats.samplesOut).toBe(2 * n);
      // a larger Q sample later raises the peak (Q's own update)
      const q2 = constant(200, 0.25);
      const over3 = Math.fround(1 + 2 ** -17);
      q2[150 - lat] = -over3;
      const r2 = run(s, constant(200, 0.25), q2);
      const d2 = fromData(r2);
      if (exactQ) expect([r2.q[150], d2.peak]).toEqual([-over3, over3]);
      if (exactQ) expect(s.stats.peak).toBe(over3);
      expect(s.stats.peak).toBeCloseTo(Math.max(d.peak, d2.peak), 6);
      expect(s.stats.overFullScale).toBe(d.count + d2.count);
      expect(s.stats.samplesOut).toBe(2 * (n + 200));
      expect(s.ramping).toBe(name === 'ramping');
    });

    it(`${name}: outputs below ${OUTPUT_FLUSH} are written as 0, from 1e-30 up they pass`, () => {
      for (const [dc, want] of [
        [5e-31, 0],
        [1e-30, Math.fround(1e-30)],
        [-3e-30, Math.fround(-3e-30)],
      ] as const) {
        const s = make({ dcI: dc, dcQ: dc });
        const r = run(s, constant(64, 0), constant(64, 0));
        expect([r.i[63], r.q[63]]).toEqual([want, want]);
        expect(s.stats.overFullScale).toBe(0);
        if (want !== 0) expect(s.stats.peak).toBe(Math.abs(dc));
        // one of the pair tiny and the other silent or not: each is judged on its own
        for (const [t, k] of [
          [{ dcI: dc }, 0],
          [{ dcQ: dc }, 1],
        ] as const) {
          const st = make(t);
          const z = run(st, constant(64, 0), constant(64, 0));
          expect(z[k === 0 ? 'i' : 'q'][63]).toBe(want);
          expect(z[k === 0 ? 'q' : 'i'][63]).toBe(0);
          expect(st.stats.overFullScale).toBe(0);
        }
        const iq = make({ dcQ: dc });
        const r1 = run(iq, constant(100, 0.25), constant(100, 0));
        expect([r1.i[99], r1.q[99]]).toEqual([0.25, want]);
        const qi = make({ dcI: dc });
        const r2 = run(qi, constant(100, 0), constant(100, 0.25));
        expect(r2.i[99]).toBe(want);
        // (the interpolator's gain at DC is 1 within its documented accuracy, not exactly)
        if (exactQ) expect(r2.q[99]).toBe(0.25);
        else expect(Math.abs(r2.q[99]! - 0.25)).toBeLessThan(1e-4);
        expect(iq.stats.overFullScale + qi.stats.overFullScale).toBe(0);
      }
    });
  }

  it('processChunk with input it was never meant to get (unsanitised): output limited to ±OUTPUT_LIMIT, NaN written as 0, all counted', () => {
    // File comment of trim-stage.ts: beyond OUTPUT_LIMIT the output is limited there and counted, so
    // it stays finite; the audio path never emits NaN (RULES: "never emits NaN").
    for (const opts of [
      { maxSkewSamples: 0, maxCorrectionTaps: 0, rampSeconds: 0 },
      { maxSkewSamples: 0, maxCorrectionTaps: 0, rampSeconds: 0, trims: { phaseDeg: 1 } },
      { maxSkewSamples: 1, maxCorrectionTaps: 0, rampSeconds: 0, trims: { skewSamples: 0.5 } },
    ]) {
      const s = new TrimStage(fs, opts);
      const lat = s.latencySamples;
      const n = 40;
      const iIn = new Float64Array(n);
      const qIn = new Float64Array(n);
      iIn[0] = 1e300;
      qIn[0] = 0;
      iIn[1] = -1e300;
      iIn[2] = Number.NaN;
      qIn[3] = -1e300;
      const oi = new Float32Array(n);
      const oq = new Float32Array(n);
      s.processChunk(iIn, qIn, n, oi, oq, 0);
      expect([oi[lat], oi[lat + 1], oi[lat + 2]]).toEqual([OUTPUT_LIMIT, -OUTPUT_LIMIT, 0]);
      for (let k = 0; k < n; k++) {
        expect(Number.isFinite(oi[k]!) && Number.isFinite(oq[k]!)).toBe(true);
        expect(Math.abs(oi[k]!)).toBeLessThanOrEqual(OUTPUT_LIMIT);
        expect(Math.abs(oq[k]!)).toBeLessThanOrEqual(OUTPUT_LIMIT);
      }
      if (!('trims' in opts)) expect(oq[lat + 3]).toBe(-OUTPUT_LIMIT);
      expect(s.stats.peak).toBe(OUTPUT_LIMIT);
      expect(s.stats.overFullScale).toBeGreaterThanOrEqual(3);
    }
  });
});

describe('sanitiseInput', () => {
  it('keeps ±INPUT_LIMIT and 1e-30, limits beyond and counts, zeroes NaN/±Inf and reads past the end, flushes tiny', () => {
    const src = new Float64Array([
      INPUT_LIMIT,
      -INPUT_LIMIT,
      INPUT_LIMIT * (1 + 2 ** -40),
      -3e30,
      Number.NaN,
      Number.NEGATIVE_INFINITY,
      1e-30,
      -9.9e-31,
      0.5,
    ]);
    const dst = new Float64Array(12).fill(7);
    const st = emptyStats();
    sanitiseInput(src, 0, 11, dst, st);
    expect(Array.from(dst)).toEqual([
      INPUT_LIMIT,
      -INPUT_LIMIT,
      INPUT_LIMIT,
      -INPUT_LIMIT,
      0,
      0,
      1e-30,
      0,
      0.5,
      0,
      0,
      7,
    ]);
    expect(st).toEqual({ ...emptyStats(), clampedInputs: 2, nonFiniteInputs: 4 });
    const part = new Float64Array(2);
    sanitiseInput(src, 7, 2, part, st);
    expect(Array.from(part)).toEqual([0, 0.5]);
  });
});

describe('messages name the value, its unit and the fix', () => {
  it('sample rate, initial trims, ramp time, skew range, correction length', () => {
    expectOrthotoneError(
      () => new TrimStage(fs, { trims: { gainDb: 7 } }),
      'INVALID_ARGUMENT',
      /^gainDb 7 dB is out of range: use a value from -6 to 6 dB$/,
    );
    expectOrthotoneError(() => new TrimStage(fs, { trims: { dcQ: Number.NaN } }), 'INVALID_ARGUMENT', /dcQ/);
    const later = new TrimStage(fs, { trims: { gainDb: 1 } });
    expectOrthotoneError(
      () => later.setTrims({ phaseDeg: 50 }),
      'INVALID_ARGUMENT',
      /^phaseDeg 50 degrees is out of range: use a value from -45 to 45 degrees$/,
    );
    expect(later.trims).toEqual({ gainDb: 1, phaseDeg: 0, skewSamples: 0, dcI: 0, dcQ: 0 });
    expectOrthotoneError(
      () => new TrimStage(500),
      'INVALID_ARGUMENT',
      /^sampleRate 500 Hz is out of range: use a value from 1000 to 1000000 Hz$/,
    );
    expectOrthotoneError(
      () => new TrimStage(fs, { rampSeconds: 12 }),
      'INVALID_ARGUMENT',
      /^rampSeconds 12 s is out of range: use a value from 0 to 10 s$/,
    );
    expectOrthotoneError(
      () => new TrimStage(fs).setTrims({}, { rampSeconds: 12 }),
      'INVALID_ARGUMENT',
      /^rampSeconds 12 s is out of range: use a value from 0 to 10 s$/,
    );
    expectOrthotoneError(
      () => new TrimStage(fs, { maxSkewSamples: 20 }),
      'INVALID_ARGUMENT',
      /^maxSkewSamples 20 samples is out of range: use a value from 0 to 16 samples$/,
    );
    expectOrthotoneError(
      () => new TrimStage(fs, { maxCorrectionTaps: 301 }),
      'INVALID_ARGUMENT',
      /^maxCorrectionTaps 301 taps is out of range: use a value from 0 to 255 taps$/,
    );
    const e = expectOrthotoneError(
      () => new TrimStage(fs, { maxSkewSamples: 2, trims: { skewSamples: -3 } }),
      'INVALID_ARGUMENT',
      /^skewSamples -3 exceeds maxSkewSamples 2: raise maxSkewSamples \(up to 16\)$/,
    );
    expect(e.value).toBe(-3);
  });

  it('validateTrimStageOptions checks the initial correction against maxCorrectionTaps', () => {
    const base = {
      trims: {},
      sideband: 'upper' as const,
      rampSeconds: 0,
      maxSkewSamples: 0,
      maxCorrectionTaps: 3,
    };
    expectOrthotoneError(
      () =>
        validateTrimStageOptions({
          ...base,
          correction: { qFromQ: [0, 0, 1, 0, 0], qFromI: [0, 0, 0, 0, 0] },
        }),
      'INVALID_ARGUMENT',
      /correction length 5 exceeds this generator's maxCorrectionTaps 3/,
    );
    const ok = { ...base, correction: { qFromQ: [0, 1, 0], qFromI: [0, 0, 0] } };
    expect(validateTrimStageOptions(ok)).toBe(ok);
  });

  it('buffer mismatch: any one of the four lengths off is refused, the error carries all four', () => {
    const s = new TrimStage(fs);
    const a = new Float32Array(8);
    const b = new Float32Array(9);
    for (const [args, text, value] of [
      [[a, b, a, a], /inI 8, inQ 9, outI 8, outQ 8/, [8, 9, 8, 8]],
      [[a, a, b, a], /inI 8, inQ 8, outI 9, outQ 8/, [8, 8, 9, 8]],
      [[a, a, a, b], /inI 8, inQ 8, outI 8, outQ 9/, [8, 8, 8, 9]],
    ] as const) {
      const e = expectOrthotoneError(
        () => s.process(...(args as unknown as [Float32Array, Float32Array, Float32Array, Float32Array])),
        'BUFFER_MISMATCH',
        text,
        /pass four arrays of the same length/,
      );
      expect(e.value).toEqual(value);
    }
  });
});
