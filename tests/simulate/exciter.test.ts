import { describe, expect, it } from 'vitest';
import { isOrthotoneError } from '../../src/core/errors.js';
import { imageRejectionDb } from '../../src/core/units.js';
import { measureSideband } from '../../src/measure/sideband.js';
import { createVirtualExciter, type VirtualExciter } from '../../src/simulate/exciter.js';
import {
  drawDevice,
  type ExciterModel,
  HOMEBREW_BENCH_SEED,
  homebrewBenchDevice,
  IDEAL_MODEL,
  TOLERANCE_PRESETS,
} from '../../src/simulate/model.js';
import { mixerHarmonicRatio, predictedSuppression } from '../../src/simulate/response.js';

const fs = 48000;
const model = (over: Partial<ExciterModel>): ExciterModel =>
  ({ ...structuredClone(IDEAL_MODEL), ...over }) as ExciterModel;

/** Runs a tone (I = a·cos, Q = a·sin; negative hz = lower sideband) and reads it back. */
function runAndRead(ex: VirtualExciter, hz: number, a = 0.5, len = 65536, block = 4096) {
  const total = len + 2048;
  const i = new Float32Array(total);
  const q = new Float32Array(total);
  for (let n = 0; n < total; n++) {
    i[n] = a * Math.cos((2 * Math.PI * hz * n) / fs);
    q[n] = a * Math.sin((2 * Math.PI * hz * n) / fs);
  }
  const re = new Float32Array(total);
  const im = new Float32Array(total);
  for (let s = 0; s < total; s += block) {
    const e = Math.min(total, s + block);
    ex.process(i.subarray(s, e), q.subarray(s, e), re.subarray(s, e), im.subarray(s, e));
  }
  return {
    re,
    im,
    reading: measureSideband(re.subarray(total - len), im.subarray(total - len), fs, {
      toneHz: Math.abs(hz),
      sideband: hz < 0 ? 'lower' : 'upper',
    }),
  };
}

describe('virtual exciter readings equal the image-rejection and carrier formulas (K. Schmidt, QEX Aug 1994 §2)', () => {
  // Gain mismatch between the I_eff and Q_eff paths (phase gains), phase error from channel skew
  // (2πfτ, common practice, no source), each read through the sampled path and measureSideband.
  const cases: [string, number, number, number][] = [
    ['0.1 dB gain, no skew', 0.1, 0, 1000],
    ['0.5 dB gain', 0.5, 0, 700],
    ['1° at 1800 Hz from skew', 0, 1, 1800],
    ['0.1 dB and 1° at 1900 Hz', 0.1, 1, 1900],
    ['0.05 dB and 0.1° at 700 Hz (about 50 dB)', 0.05, 0.1, 700],
  ];
  for (const [name, gDb, phDeg, hz] of cases) {
    it(name, () => {
      const g = 10 ** (gDb / 20);
      const tau = phDeg / 360 / hz; // Q delayed: Q lags by 2πfτ
      const ex = createVirtualExciter(model({ phaseGain: [1, g, 1, g], skewSeconds: tau }), {
        sampleRate: fs,
        seed: 4,
      });
      const { reading } = runAndRead(ex, hz);
      const ref = imageRejectionDb(g, (phDeg * Math.PI) / 180);
      expect(reading.unwanted.aboveFloorDb).toBeGreaterThan(20);
      expect(Math.abs(reading.sidebandSuppressionDb - ref)).toBeLessThan(0.1);
      expect(Math.abs(-ex.response(hz, {}, 0.5).unwantedDbc - ref)).toBeLessThan(0.001);
    });
  }
  it('carrier from differential phase offsets: dI = 0.001A, dQ = 0.0005A → −59.031 dBc', () => {
    // A = 0.5 full scale on a 0.5 V full scale: dI = (d0 − d180)/2 = 0.25 mV, dQ = 0.125 mV.
    const ex = createVirtualExciter(
      model({ fullScaleVolts: 0.5, phaseOffsetVolts: [0.0002, 0.0001, -0.0003, -0.00015] }),
      { sampleRate: fs, seed: 2 },
    );
    const { reading } = runAndRead(ex, 1000);
    expect(reading.carrier.aboveFloorDb).toBeGreaterThan(20);
    expect(Math.abs(reading.carrierDbc + 59.031)).toBeLessThan(0.1);
    expect(ex.response(1000, {}, 0.5).carrierDbc).toBeCloseTo(-59.031, 3);
    // Common-mode offsets (equal on all four phases) cancel at the fundamental.
    const cm = createVirtualExciter(model({ phaseOffsetVolts: [0.01, 0.01, 0.01, 0.01] }), {
      sampleRate: fs,
      seed: 2,
    });
    expect(cm.response(1000, {}, 0.5).carrierDbc).toBeLessThan(-250);
  });
  it('sampled path and analytic response agree within 0.1 dB for drawn devices, all presets, lower sideband too', () => {
    for (const [k, preset] of ['one-percent', 'homebrew-bench', 'ac-coupled', 'precision'].entries()) {
      const m = drawDevice({ ...TOLERANCE_PRESETS[preset]!, skewSeconds: 1e-6, loPhaseDeg: 0.5 }, 100 + k);
      const ex = createVirtualExciter(m, { sampleRate: fs, seed: k, floorDbc: -140 });
      for (const hz of [700, -1900, 3000]) {
        const { reading } = runAndRead(ex, hz, 0.5, 65536);
        const a = ex.response(hz, {}, 0.5);
        if (reading.unwanted.aboveFloorDb >= 20)
          expect(Math.abs(reading.unwantedDbc - a.unwantedDbc)).toBeLessThan(0.1);
        if (reading.carrier.aboveFloorDb >= 20)
          expect(Math.abs(reading.carrierDbc - a.carrierDbc)).toBeLessThan(0.1);
        expect(Math.abs(reading.wanted.levelDbfs - a.wantedDbfs)).toBeLessThan(0.01);
        ex.reset();
      }
    }
  });
});

describe('trims in response() follow the trims of src/generate/trim-stage.ts and can null a drawn device', () => {
  it('the gain/phase trim that matches the device’s imbalance removes the image', () => {
    const g = 10 ** (0.3 / 20);
    const ex = createVirtualExciter(model({ phaseGain: [1, g, 1, g], skewSeconds: 2 / 360 / 1000 }), {
      sampleRate: fs,
      seed: 1,
    });
    expect(-ex.response(1000, {}).unwantedDbc).toBeCloseTo(imageRejectionDb(g, (2 * Math.PI) / 180), 6);
    // Q' = G·(Q cos φ + I sin φ): G = 1/g undoes the gain; φ = +2° advances Q back by 2° at 1 kHz.
    expect(ex.response(1000, { gainDb: -0.3, phaseDeg: 2 }).unwantedDbc).toBeLessThan(-120);
    // The skew trim in samples does the same: Q delayed by −τ·fs.
    expect(ex.response(1000, { gainDb: -0.3, skewSamples: (-2 / 360 / 1000) * fs }).unwantedDbc).toBeLessThan(
      -120,
    );
  });
  it('DC trims null the carrier when DC-coupled and do nothing through coupling capacitors', () => {
    const off: [number, number, number, number] = [0.003, -0.002, -0.001, 0.001];
    const dc = createVirtualExciter(model({ phaseOffsetVolts: off }), { sampleRate: fs, seed: 1 });
    const dI = -(off[0] - off[2]) / 2 / 0.5;
    const dQ = -(off[1] - off[3]) / 2 / 0.5;
    expect(dc.response(1000, { dcI: dI, dcQ: dQ }).carrierDbc).toBeLessThan(-250);
    const ac = createVirtualExciter(model({ phaseOffsetVolts: off, couplingHighPassHz: [10, 10] }), {
      sampleRate: fs,
      seed: 1,
    });
    expect(ac.response(1000, { dcI: dI, dcQ: dQ }).carrierDbc).toBeCloseTo(
      ac.response(1000, {}).carrierDbc,
      9,
    );
  });
});

describe('LO harmonics of the four-phase commutating mixer', () => {
  it('c_n/c_1 = sin(nπ/4)/(n·sin(π/4)): 3rd −9.54 dB, 5th −13.98 dB, 4th none', () => {
    // Source: the Fourier series of a square wave, odd harmonics at 1/n of the fundamental (A. V.
    // Oppenheim & A. S. Willsky, Signals and Systems, 2nd ed., the periodic square wave example):
    // 20·log10(1/3) = −9.542 dB, 20·log10(1/5) = −13.979 dB. The four-phase weighting sin(nπ/4)
    // removes the even harmonics (common practice, no source).
    expect(20 * Math.log10(1 / 3)).toBeCloseTo(-9.542, 3);
    expect(20 * Math.log10(1 / 5)).toBeCloseTo(-13.979, 3);
    expect(20 * Math.log10(Math.abs(mixerHarmonicRatio(3)))).toBeCloseTo(-9.542, 3);
    expect(20 * Math.log10(Math.abs(mixerHarmonicRatio(5)))).toBeCloseTo(-13.979, 3);
    expect(mixerHarmonicRatio(4)).toBe(0);
  });
  it('the 3rd harmonic carries the opposite sideband, the 5th the same; the 2nd only mismatch', () => {
    const ex = createVirtualExciter(IDEAL_MODEL, { sampleRate: fs, seed: 1 });
    const h3 = ex.harmonicResponse(1000, 3);
    expect(h3.oppositeSideDbc).toBeCloseTo(-9.542, 3);
    expect(h3.sameSideDbc).toBeLessThan(-250);
    const h5 = ex.harmonicResponse(1000, 5);
    expect(h5.sameSideDbc).toBeCloseTo(-13.979, 3);
    expect(h5.oppositeSideDbc).toBeLessThan(-250);
    expect(ex.harmonicResponse(1000, 2).sameSideDbc).toBeLessThan(-250);
    const sampled = createVirtualExciter(IDEAL_MODEL, { sampleRate: fs, seed: 1, harmonic: 3 });
    const { reading } = runAndRead(sampled, 1000, 0.5, 16384);
    // Read as upper sideband, the 3rd-harmonic zone shows the tone on the "unwanted" side, 9.54 dB down.
    expect(reading.unwanted.levelDbfs).toBeCloseTo(20 * Math.log10(0.5) - 9.542, 2);
  });
});

describe('determinism, block-size invariance, clone', () => {
  it('block sizes 1, 128 and 4096 give identical output; clone continues bit-identically', () => {
    const m = drawDevice(TOLERANCE_PRESETS['one-percent']!, 9);
    const outs = [1, 128, 4096].map(
      (b) => runAndRead(createVirtualExciter(m, { sampleRate: fs, seed: 3 }), 700, 0.5, 8192, b).re,
    );
    expect(outs[1]).toEqual(outs[0]);
    expect(outs[2]).toEqual(outs[0]);
    const ex = createVirtualExciter(m, { sampleRate: fs, seed: 3 });
    const x = Float32Array.from({ length: 1000 }, (_, n) => Math.sin(n / 7));
    const a = new Float32Array(1000);
    const b = new Float32Array(1000);
    ex.process(x, x, a, b);
    const c = ex.clone();
    const r1 = [new Float32Array(1000), new Float32Array(1000)] as const;
    const r2 = [new Float32Array(1000), new Float32Array(1000)] as const;
    ex.process(x, x, r1[0], r1[1]);
    c.process(x, x, r2[0], r2[1]);
    expect(r2[0]).toEqual(r1[0]);
    expect(r2[1]).toEqual(r1[1]);
  });
  it('never emits NaN for NaN/Infinity input', () => {
    const ex = createVirtualExciter(drawDevice(TOLERANCE_PRESETS['ac-coupled']!, 1), {
      sampleRate: fs,
      seed: 1,
    });
    const x = Float32Array.from([Number.NaN, Number.POSITIVE_INFINITY, 0.5, -2]);
    const re = new Float32Array(4);
    const im = new Float32Array(4);
    ex.process(x, x, re, im);
    for (const v of [...re, ...im]) expect(Number.isFinite(v)).toBe(true);
  });
  it('rejects a bad model and bad options with INVALID_ARGUMENT', () => {
    const bad = (fn: () => unknown): boolean => {
      try {
        fn();
        return false;
      } catch (e) {
        return isOrthotoneError(e, 'INVALID_ARGUMENT');
      }
    };
    expect(bad(() => createVirtualExciter(model({ converterBits: 4 }), { sampleRate: fs, seed: 1 }))).toBe(
      true,
    );
    expect(bad(() => createVirtualExciter(IDEAL_MODEL, { sampleRate: -1, seed: 1 }))).toBe(true);
    expect(bad(() => drawDevice({ resistorPct: -1 }, 1))).toBe(true);
  });
});

describe('the homebrew bench (common practice, no source: about 34 dB carrier, 44 dB sideband)', () => {
  it(`homebrew-bench with seed ${HOMEBREW_BENCH_SEED} lands near 34 dB / 44 dB at 1 kHz with zero trims`, () => {
    const [p] = predictedSuppression(homebrewBenchDevice(), [1000]);
    expect(Math.abs(p!.carrierDb - 34)).toBeLessThan(0.5);
    expect(Math.abs(p!.sidebandDb - 44)).toBeLessThan(0.5);
    // Its four phases show unequal gains and DC offsets of a few mV, as on the bench described.
    const m = homebrewBenchDevice();
    expect(Math.max(...m.phaseOffsetVolts.map(Math.abs))).toBeGreaterThan(0.001);
    expect(Math.max(...m.phaseGain) - Math.min(...m.phaseGain)).toBeGreaterThan(0.001);
  });
});

describe('frequency-dependent imbalance from mismatched corners and skew', () => {
  it('low-pass corners 20 kHz vs 21 kHz: suppression follows the image formula with g(f), φ(f) of two RC poles', () => {
    const f1 = 20000;
    const f2 = 21000;
    const m = model({ antiImagingLowPassHz: [f1, f2] });
    const freqs = [300, 700, 1800, 1900, 3000];
    const got = predictedSuppression(m, freqs);
    for (const [k, f] of freqs.entries()) {
      // |1/(1+jf/fc)| and −atan(f/fc) per channel (first-order RC); Q relative to I.
      const g = Math.hypot(1, f / f1) / Math.hypot(1, f / f2);
      const phi = Math.atan(f / f1) - Math.atan(f / f2);
      expect(got[k]!.sidebandDb).toBeCloseTo(imageRejectionDb(g, phi), 6);
    }
    expect(got[0]!.sidebandDb - got[4]!.sidebandDb).toBeGreaterThan(15); // 20 dB/decade roll-off of the error
  });
  it('skew: −60 dBc at 2.7 kHz needs |τ| ≤ 0.12 µs (rounded; exactly 0.1179 µs)', () => {
    // A skew τ is a phase error φ = 2πfτ (common practice, no source); at equal gains the image is
    // −20·log10|tan(φ/2)| below the wanted tone (K. Schmidt, QEX Aug 1994 §2), so −60 dBc needs
    // τ = atan(10⁻³)/(π·2700 Hz) = 0.11789 µs.
    const tau = Math.atan(1e-3) / (Math.PI * 2700);
    expect(tau * 1e6).toBeCloseTo(0.11789, 5);
    const [e] = predictedSuppression(model({ skewSeconds: 0.1e-6 }), [2700]);
    expect(e!.sidebandDb).toBeCloseTo(-20 * Math.log10(Math.tan(Math.PI * 2700 * 0.1e-6)), 6);
    const [p] = predictedSuppression(model({ skewSeconds: 0.117e-6 }), [2700]);
    expect(p!.sidebandDb).toBeGreaterThan(60);
    const [q] = predictedSuppression(model({ skewSeconds: 0.12e-6 }), [2700]);
    expect(q!.sidebandDb).toBeLessThan(60);
    expect(q!.sidebandDb).toBeGreaterThan(59.8);
  });
});
