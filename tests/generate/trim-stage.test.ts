import { describe, expect, it } from 'vitest';
import { createRng } from '../../src/core/rng.js';
import type { Trims } from '../../src/core/trims.js';
import type { Network } from '../../src/design/network.js';
import { createNetworkRuntime, createQuadratureGenerator } from '../../src/generate/quadrature-generator.js';
import { TrimStage } from '../../src/generate/trim-stage.js';
import { bitDiffs } from './dft.js';
import { kaiserHilbertNetwork, niemitaloNetwork } from './reference-networks.js';

// The trim stage has a one-pass path for the common case (steady trims, no correction, whole-sample
// skew) beside the general path. These tests pin that path to the formulas in src/generate/trim-stage.ts, exactly,
// and check that switching between the paths (ramps, a correction) keeps block-size invariance.

const fs = 48000;
const len = 3 * 28672; // 28672 = lcm(7, 4096): every block size has a boundary there
const x = new Float32Array(len);
const rng = createRng(5);
for (let k = 0; k < len; k++)
  x[k] = 0.4 * Math.cos((2 * Math.PI * 1300 * k) / fs) + 0.1 * (rng.uniform() - 0.5);

/** Network outputs for `x` in double precision (the runtime on its own, 128-sample chunks). */
function networkOutput(net: Network) {
  const rt = createNetworkRuntime(net);
  const i = new Float64Array(len);
  const q = new Float64Array(len);
  const xc = new Float64Array(128);
  const bi = new Float64Array(128);
  const bq = new Float64Array(128);
  for (let o = 0; o < len; o += 128) {
    for (let j = 0; j < 128; j++) xc[j] = x[o + j]!;
    rt.process(xc, 128, bi, bq);
    i.set(bi, o);
    q.set(bq, o);
  }
  return { i, q };
}

describe('trim stage steady path: the formulas of trim-stage.ts exactly', () => {
  for (const [name, net] of [
    ['all-pass', niemitaloNetwork(false, fs)],
    ['FIR', kaiserHilbertNetwork(127, 8, [2000, 22000], fs)],
  ] as const) {
    for (const opts of [{}, { maxCorrectionTaps: 0, maxSkewSamples: 0 }]) {
      const skews = 'maxSkewSamples' in opts ? [0] : [0, 3, -2];
      for (const skewSamples of skews) {
        it(`${name} ${JSON.stringify(opts)} skew ${skewSamples}: I'' = I + dcI, Q'' = g(Q cos φ + I sin φ) + dcQ, delayed`, () => {
          const trims: Trims = { gainDb: 0.7, phaseDeg: -3, skewSamples, dcI: 0.01, dcQ: -0.004 };
          const gen = createQuadratureGenerator(net, { ...opts, trims });
          const oi = new Float32Array(len);
          const oq = new Float32Array(len);
          for (let o = 0; o < len; o += 128) {
            gen.process(x.subarray(o, o + 128), oi.subarray(o, o + 128), oq.subarray(o, o + 128));
          }
          const { i, q } = networkOutput(net);
          const g = 10 ** (trims.gainDb / 20);
          const phi = (trims.phaseDeg * Math.PI) / 180;
          const a = g * Math.cos(phi);
          const b = g * Math.sin(phi);
          const lat = gen.trimLatencySamples;
          const ei = new Float32Array(len);
          const eq = new Float32Array(len);
          for (let n = 0; n < len; n++) {
            const ni = n - lat;
            const nq = n - lat - skewSamples;
            ei[n] = (ni >= 0 ? i[ni]! : 0) + trims.dcI;
            eq[n] = (nq >= 0 ? a * q[nq]! + b * i[nq]! : 0) + trims.dcQ;
          }
          expect(bitDiffs(oi, ei)).toBe(0);
          expect(bitDiffs(oq, eq)).toBe(0);
        });
      }
    }
  }
});

describe('trim stage: switching between the steady and the general path', () => {
  const long = new Float32Array(4 * 28672);
  for (let k = 0; k < long.length; k++) long[k] = x[k % len]!;
  const script = (block: number) => {
    const gen = createQuadratureGenerator(niemitaloNetwork(true, fs), {
      trims: { skewSamples: 2, gainDb: -0.2 },
      rampSeconds: 0.003,
    });
    const i = new Float32Array(len);
    const q = new Float32Array(len);
    for (let o = 0; o < len; o += block) {
      // whole-sample skew to whole-sample skew through a ramp, then a correction, then none
      // (events at multiples of 28672, where every block size has a boundary)
      if (o === 28672) gen.setTrims({ skewSamples: -3, phaseDeg: 1.5, dcQ: 0.02 });
      if (o === 2 * 28672) gen.setCorrection({ qFromQ: [0.02, 0.97, 0.01], qFromI: [0.01, 0, -0.01] });
      if (o === 3 * 28672) gen.setCorrection(null);
      const e = Math.min(long.length, o + block);
      gen.process(long.subarray(o, e), i.subarray(o, e), q.subarray(o, e));
    }
    return { i, q };
  };
  it('block sizes 1, 7, 128 give output bit-identical to 4096', () => {
    const ref = script(4096);
    for (const b of [1, 7, 128]) {
      const r = script(b);
      expect(bitDiffs(r.i, ref.i)).toBe(0);
      expect(bitDiffs(r.q, ref.q)).toBe(0);
    }
  });
});

describe('trim stage: clone', () => {
  it('never throws, even where the ramp in seconds would round past the 10 s limit', () => {
    // Found in review: 1000.05 Hz with rampSeconds 10 rebuilt the ramp from seconds and overflowed.
    const net = niemitaloNetwork(false, 1000.05);
    const gen = createQuadratureGenerator(net, { rampSeconds: 10 });
    const x = new Float32Array(64).fill(0.25);
    const a = [new Float32Array(64), new Float32Array(64)] as const;
    const b = [new Float32Array(64), new Float32Array(64)] as const;
    gen.setTrims({ gainDb: 1 });
    gen.process(x, a[0], a[1]);
    const copy = gen.clone();
    gen.process(x, a[0], a[1]);
    copy.process(x, b[0], b[1]);
    expect(bitDiffs(a[0], b[0]) + bitDiffs(a[1], b[1])).toBe(0);
  });
});

describe('trim stage phase and gain trims through image rejection (not only the formula)', () => {
  // A modulator whose Q path has gain h and phase error ψ (its Q local oscillator off quadrature):
  // I_hw = I', Q_hw = h·(Q'·cos ψ + I'·sin ψ), which turns an exact pair (cos, sin) into
  // (cos ωt, h·sin(ωt + ψ)), the model of K. Schmidt, QEX Aug 1994 §2. Its image
  // rejection is IRR = (1 + 2h·cos ψ + h²)/(1 − 2h·cos ψ + h²). The trims that undo it solve
  // g·cos ψ·sin φ + sin ψ = 0 and h·g·cos ψ·cos φ = 1 (Q'' then equals Q exactly), for either sideband.
  const h = 10 ** (0.3 / 20);
  const psi = (3 * Math.PI) / 180;
  const f0 = 1500; // 32 samples a cycle at 48 kHz: 4800 samples hold 150 whole cycles
  const n = 8192;
  const skip = 1024;
  const m = 4800;
  /** Wanted and image power ratio, dB, of z = I + jQ read on exact bins with a plain DFT. */
  function irrDb(i: Float32Array, q: Float32Array, wantedSign: 1 | -1): number {
    const bin = (sign: number) => {
      let re = 0;
      let im = 0;
      for (let k = 0; k < m; k++) {
        const w = (sign * 2 * Math.PI * f0 * k) / fs;
        const a = i[skip + k]!;
        const b = q[skip + k]!;
        // (a + jb)·e^{−jw}
        re += a * Math.cos(w) + b * Math.sin(w);
        im += b * Math.cos(w) - a * Math.sin(w);
      }
      return re * re + im * im;
    };
    return 10 * Math.log10(bin(wantedSign) / bin(-wantedSign));
  }
  function run(sideband: 'upper' | 'lower', trims: Partial<Trims>) {
    const stage = new TrimStage(fs, { trims, sideband, rampSeconds: 0 });
    const inI = new Float32Array(n);
    const inQ = new Float32Array(n);
    for (let k = 0; k < n; k++) {
      inI[k] = 0.5 * Math.cos((2 * Math.PI * f0 * k) / fs);
      inQ[k] = 0.5 * Math.sin((2 * Math.PI * f0 * k) / fs);
    }
    const oi = new Float32Array(n);
    const oq = new Float32Array(n);
    stage.process(inI, inQ, oi, oq);
    const qi = new Float32Array(n);
    for (let k = 0; k < n; k++) qi[k] = h * (oq[k]! * Math.cos(psi) + oi[k]! * Math.sin(psi));
    return irrDb(oi, qi, sideband === 'upper' ? 1 : -1);
  }
  // Closed-form trims: tan φ = −sin ψ/(g·cos ψ) with g·cos φ = 1/(h·cos ψ) ⇒ tan φ = −h·sin ψ.
  const phi = Math.atan(-h * Math.sin(psi));
  const g = 1 / (h * Math.cos(psi) * Math.cos(phi));
  const good: Partial<Trims> = { gainDb: 20 * Math.log10(g), phaseDeg: (phi * 180) / Math.PI };
  const flipped: Partial<Trims> = { ...good, phaseDeg: -good.phaseDeg! };
  const uncorrected =
    10 * Math.log10((1 + 2 * h * Math.cos(psi) + h * h) / (1 - 2 * h * Math.cos(psi) + h * h));

  for (const sideband of ['upper', 'lower'] as const) {
    it(`${sideband} sideband: no trims read the Schmidt IRR, the solved trims null the image, the opposite phase sign does not`, () => {
      expect(Math.abs(run(sideband, {}) - uncorrected)).toBeLessThan(0.01);
      // float32 samples: the null is limited near 130 dB; 90 dB is far beyond any wrong sign.
      expect(run(sideband, good)).toBeGreaterThan(90);
      // Flipping the phase trim's sign doubles the phase error instead of cancelling it.
      const twice = -20 * Math.log10(Math.abs(Math.tan(psi)));
      expect(run(sideband, flipped)).toBeLessThan(twice + 1);
    });
  }
});
