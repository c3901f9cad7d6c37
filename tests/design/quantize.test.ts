import { describe, expect, it } from 'vitest';
import { designAllpassPair } from '../../src/design/allpass-pair.js';
import { predictFigures } from '../../src/design/analysis.js';
import type { AllpassBranch, AllpassNetwork, FirNetwork } from '../../src/design/network.js';
import {
  type CoefficientFormat,
  quantizationReport,
  quantizeCoefficient,
  quantizeNetwork,
} from '../../src/design/quantize.js';
import { expectOrthotoneError } from '../support/errors.js';
import { ownSweep } from '../support/network-response.js';

const blank = {
  format: 'orthotone-network' as const,
  version: 1 as const,
  predicted: { worstSuppressionDb: 0, maxPhaseErrorDeg: 0, maxGainErrorDb: 0 },
  cost: { multipliesPerSample: 0, latencySamples: 0 },
  design: { note: 'test' },
};

function allpassNet(fs: number, band: [number, number], targetDb: number): AllpassNetwork {
  const d = designAllpassPair({ sampleRate: fs, band, targetDb });
  const body = { kind: 'allpass' as const, sampleRate: fs, band, branches: d.branches };
  return { ...blank, ...body, predicted: predictFigures(body) };
}

/**
 * Q15 rounding of every all-pass coefficient, done here: round(a·2¹⁵) with ties away from zero,
 * limited to ±(2¹⁵ − 1), over 2¹⁵ (the rule the quantizeCoefficient test above pins).
 */
function ownQ15(net: AllpassNetwork): AllpassNetwork {
  const q = (a: number) => {
    const v = Math.sign(a) * Math.floor(Math.abs(a) * 32768 + 0.5);
    return Math.max(-32767, Math.min(32767, v)) / 32768;
  };
  const br = (b: AllpassBranch): AllpassBranch => ({
    delay: b.delay,
    sections: b.sections.map((s) => ({ ...s, a: q(s.a) })),
  });
  return { ...net, branches: { i: br(net.branches.i), q: br(net.branches.q) } };
}

/** Phase of a branch at ω: −d·ω − Σ 2·atan(r·tan(mω/2)), r = (1−a)/(1+a) (first-order all-pass phase, own formula). */
function branchPhase(b: AllpassBranch, w: number): number {
  let p = -b.delay * w;
  for (const s of b.sections) p -= 2 * Math.atan(((1 - s.a) / (1 + s.a)) * Math.tan((s.order * w) / 2));
  return p;
}

describe('quantizeCoefficient', () => {
  it('rounds to nearest with ties away from zero and saturates symmetrically', () => {
    // Source: Q15 = int16/32768 (task contract); symmetric rounding and saturation as documented
    // in quantize.ts (common practice, no source).
    const lsb = 2 ** -15;
    expect(quantizeCoefficient(0.5, 'q15')).toBe(0.5);
    expect(quantizeCoefficient(0.5 * lsb, 'q15')).toBe(lsb);
    expect(quantizeCoefficient(-0.5 * lsb, 'q15')).toBe(-lsb);
    expect(quantizeCoefficient(0.49 * lsb, 'q15')).toBe(0);
    expect(quantizeCoefficient(1.5, 'q15')).toBe(32767 / 32768);
    expect(quantizeCoefficient(-1, 'q15')).toBe(-32767 / 32768);
    expect(quantizeCoefficient(0.1, 'q15')).toBe(3277 / 32768); // 0.1·32768 = 3276.8
    expect(quantizeCoefficient(0.1, 'q31')).toBe(214748365 / 2 ** 31); // 0.1·2³¹ = 214748364.8
    // Source: IEEE 754 binary32, as Math.fround implements it.
    expect(quantizeCoefficient(0.1, 'float32')).toBe(Math.fround(0.1));
    expect(Math.abs(quantizeCoefficient(-0.99999999, 'float32'))).toBeLessThan(1);
  });

  it('rejects an unknown format', () => {
    expectOrthotoneError(
      () => quantizeCoefficient(0.3, 'q7' as CoefficientFormat),
      'INVALID_ARGUMENT',
      /format "q7" is not recognised: use one of 'float32', 'q15', 'q31'/,
    );
  });
});

describe('quantizeNetwork', () => {
  it('rounds every all-pass coefficient to the Q15 grid, re-evaluates predicted, leaves the input alone', () => {
    const net = allpassNet(48000, [300, 3000], 60);
    const before = JSON.stringify(net);
    const q = quantizeNetwork(net, 'q15');
    expect(JSON.stringify(net)).toBe(before);
    expect(q.kind).toBe('allpass');
    if (q.kind !== 'allpass') return;
    for (const s of [...q.branches.i.sections, ...q.branches.q.sections]) {
      expect(Number.isInteger(s.a * 32768)).toBe(true);
      expect(Math.abs(s.a)).toBeLessThan(1);
    }
    expect(q.design).toEqual({ note: 'test', coefficientFormat: 'q15' });
    // The coefficients are the ones rounded here, and the re-evaluated figures are those of the rounded
    // coefficients by the tests' own evaluator (tests/support/network-response.ts; a dense sweep finds
    // the worst point to within about 0.01 dB), not the stored figures of the input.
    expect(q.branches).toEqual(ownQ15(net).branches);
    const own = ownSweep(q, 20000);
    expect(Math.abs(q.predicted.worstSuppressionDb - own.worstSuppressionDb)).toBeLessThan(0.02);
    expect(Math.abs(q.predicted.maxPhaseErrorDeg - own.maxPhaseErrorDeg)).toBeLessThan(1e-3);
    expect(Math.abs(ownSweep(net, 20000).worstSuppressionDb - own.worstSuppressionDb)).toBeGreaterThan(0.1);
  });

  it('keeps a Hilbert FIR antisymmetric with its zero taps zero', () => {
    // Source: symmetric rounding preserves antisymmetry (round(−x) = −round(x)); common practice, no source.
    const d = 15;
    const taps = Array.from({ length: 2 * d + 1 }, (_, k) => {
      const m = k - d;
      return m % 2 === 0 ? 0 : (2 / (Math.PI * m)) * (0.54 + 0.46 * Math.cos((Math.PI * m) / (d + 1)));
    });
    const net: FirNetwork = { ...blank, kind: 'fir', sampleRate: 48000, band: [3000, 21000], taps };
    const q = quantizeNetwork(net, 'q15');
    if (q.kind !== 'fir') throw new Error('kind');
    for (let k = 0; k < taps.length; k++) {
      expect(q.taps[k]).toBe(-q.taps[taps.length - 1 - k]! || 0);
      if (taps[k] === 0) expect(q.taps[k]).toBe(0);
    }
    expect(q.cost.multipliesPerSample).toBe(8);
  });
});

describe('quantizationReport', () => {
  it('orders the formats: Q15 loses most, Q31 and float32 almost nothing', () => {
    for (const [fs, band, target] of [
      [48000, [300, 3000], 60],
      [8000, [200, 3400], 70],
      [44100, [30, 20000], 80],
    ] as const) {
      const net = allpassNet(fs, [band[0], band[1]], target);
      const r = quantizationReport(net);
      // Coefficients here lie in (−1, 1), mostly near ±1, where Q31's step 2⁻³¹ is finer than
      // float32's 2⁻²⁴, and Q15's 2⁻¹⁵ much coarser.
      expect(r.q15.lossDb).toBeGreaterThan(r.float32.lossDb);
      expect(r.float32.lossDb).toBeGreaterThanOrEqual(r.q31.lossDb);
      expect(Math.abs(r.q31.lossDb)).toBeLessThan(0.01);
      expect(Math.abs(r.float32.lossDb)).toBeLessThan(1);
      expect(r.q15.lossDb).toBeGreaterThan(0.5);
      // The Q15 figure and its loss against the tests' own rounding and evaluation.
      const ownWorst = ownSweep(ownQ15(net), 20000).worstSuppressionDb;
      expect(Math.abs(r.q15.worstSuppressionDb - ownWorst)).toBeLessThan(0.02);
      expect(Math.abs(r.q15.lossDb - (ownSweep(net, 20000).worstSuppressionDb - ownWorst))).toBeLessThan(
        0.03,
      );
    }
  });

  it('Q15 loss stays within a first-order sensitivity bound', () => {
    // Source: first-order perturbation of the section phase −2·atan(r·tan(ω/2)), r = (1−a)/(1+a):
    // |Δφ| ≤ Σ|∂φ/∂a_k|·|Δa_k| + O(Δa²); suppression at unity gain 20·log10(cot(ε/2)) (Schmidt, QEX 1994 §2).
    const fs = 48000;
    const band: [number, number] = [300, 3000];
    const net = allpassNet(fs, band, 60);
    const q = quantizeNetwork(net, 'q15') as AllpassNetwork;
    let worstEps = 0;
    let bound = 0;
    for (let k = 0; k <= 20000; k++) {
      const f = band[0] * (band[1] / band[0]) ** (k / 20000);
      const w = (2 * Math.PI * f) / fs;
      const e0 = branchPhase(net.branches.i, w) - branchPhase(net.branches.q, w) - Math.PI / 2;
      const e1 = branchPhase(q.branches.i, w) - branchPhase(q.branches.q, w) - Math.PI / 2;
      worstEps = Math.max(worstEps, Math.abs(e1));
      let sens = 0;
      for (const key of ['i', 'q'] as const) {
        net.branches[key].sections.forEach((s, j) => {
          const da = q.branches[key].sections[j]!.a - s.a;
          const h = 1e-7;
          const dphi =
            (branchPhase({ delay: 0, sections: [{ order: s.order, a: s.a + h }] }, w) -
              branchPhase({ delay: 0, sections: [{ order: s.order, a: s.a - h }] }, w)) /
            (2 * h);
          sens += Math.abs(dphi * da);
        });
      }
      bound = Math.max(bound, Math.abs(e0) + sens);
    }
    const db = (e: number) => 20 * Math.log10(1 / Math.tan(e / 2));
    const r = quantizationReport(net);
    expect(r.q15.worstSuppressionDb).toBeGreaterThanOrEqual(db(bound) - 0.01);
    expect(r.q15.worstSuppressionDb).toBeCloseTo(db(worstEps), 1);
  });
});
