import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { designAllpassPair } from '../../src/design/allpass-pair.js';
import { analyzeNetwork, networkCost, predictFigures } from '../../src/design/analysis.js';
import type { AllpassNetwork, FirNetwork, Network } from '../../src/design/network.js';
import { expectOrthotoneError } from '../support/errors.js';
import { ownResponseAt, ownSweep } from '../support/network-response.js';

const blank = {
  format: 'orthotone-network' as const,
  version: 1 as const,
  predicted: { worstSuppressionDb: 0, maxPhaseErrorDeg: 0, maxGainErrorDb: 0 },
  cost: { multipliesPerSample: 0, latencySamples: 0 },
  design: {},
};

function allpassNet(
  fs: number,
  band: [number, number],
  targetDb: number,
  form?: 'second-order',
): AllpassNetwork {
  const d = designAllpassPair({ sampleRate: fs, band, targetDb, ...(form ? { form } : {}) });
  return { ...blank, kind: 'allpass', sampleRate: fs, band, branches: d.branches };
}

/** Windowed ideal Hilbert FIR, textbook sign h(n) = 2/(πn) for odd n (Reilly, Frazer & Boashash 1994), Hann window. */
function windowedHilbert(n: number): number[] {
  const d = (n - 1) / 2;
  return Array.from({ length: n }, (_, k) => {
    const m = k - d;
    if (m % 2 === 0) return 0;
    const w = 0.5 + 0.5 * Math.cos((Math.PI * m) / (d + 1)); // Hann, zero just beyond the ends
    return (2 / (Math.PI * m)) * w;
  });
}

/** Unwrapped phase of one branch along a frequency grid, from the tests' own evaluator (tests/support). */
function unwrappedPhase(net: Network, freqs: number[], which: 'i' | 'q'): number[] {
  const out: number[] = [];
  let prev = 0;
  let offset = 0;
  for (const f of freqs) {
    const [re, im] = ownResponseAt(net, f)[which];
    let p = Math.atan2(im, re) + offset;
    while (p - prev > Math.PI) {
      p -= 2 * Math.PI;
      offset -= 2 * Math.PI;
    }
    while (p - prev < -Math.PI) {
      p += 2 * Math.PI;
      offset += 2 * Math.PI;
    }
    out.push(p);
    prev = p;
  }
  return out;
}

describe('analyzeNetwork: group delay', () => {
  it('matches the numerical derivative of phase for all-pass pairs (both forms)', () => {
    // Source: group delay τ = −dφ/dω (definition); phase from network.ts's evaluator, differentiated here.
    for (const net of [
      allpassNet(48000, [300, 3000], 60),
      allpassNet(44100, [40, 22010], 50, 'second-order'),
    ]) {
      const fs = net.sampleRate;
      const an = analyzeNetwork(net, { points: 64 });
      const h = 1e-3; // Hz
      for (let k = 0; k < 64; k += 7) {
        const f = an.frequencyHz[k]!;
        if (f < 2 * h || f > fs / 2 - 2 * h) continue;
        for (const which of ['i', 'q'] as const) {
          const [p0, p1] = unwrappedPhase(net, [f - h, f + h], which);
          const tau = -(p1! - p0!) / ((2 * Math.PI * 2 * h) / fs);
          const got = which === 'i' ? an.groupDelayI[k]! : an.groupDelayQ[k]!;
          expect(Math.abs(got - tau)).toBeLessThan(1e-4 * Math.max(1, tau));
        }
      }
    }
  });

  it('matches the numerical derivative for an FIR and equals (N−1)/2 for antisymmetric taps', () => {
    // Source: a type III (antisymmetric) FIR has exact linear phase, delay (N−1)/2 (Reilly, Frazer & Boashash 1994).
    const taps = windowedHilbert(63);
    const net: FirNetwork = { ...blank, kind: 'fir', sampleRate: 48000, band: [2400, 21600], taps };
    const an = analyzeNetwork(net, { points: 40, scale: 'linear', fromHz: 1000, toHz: 23000 });
    for (let k = 0; k < 40; k++) {
      expect(an.groupDelayI[k]).toBe(31);
      expect(an.groupDelayQ[k]).toBeCloseTo(31, 8);
    }
    expect(an.groupDelayDifference.max).toBeCloseTo(0, 8);
    expect(an.groupDelayDifference.min).toBeCloseTo(0, 8);
  });
});

describe('analyzeNetwork: FIR Hilbert transformer', () => {
  it('analyses a hand-built Hann-windowed ideal Hilbert FIR: exact 90°, gain = amplitude response', () => {
    // Source: ideal response h(n) = 2/(πn), odd n (Reilly, Frazer & Boashash, IEEE Trans. SP 42:3241, 1994);
    // the amplitude of an antisymmetric FIR is A(ω) = 2·Σ h(n)·sin(ωn) (computed here), and
    // suppression at exact 90° is 20·log10((1+A)/|1−A|) (Schmidt's formula, QEX Aug 1994 §2, with φ = 0).
    const fs = 48000;
    const taps = windowedHilbert(63);
    const net: FirNetwork = { ...blank, kind: 'fir', sampleRate: fs, band: [2400, 21600], taps };
    const an = analyzeNetwork(net, { points: 101, scale: 'linear', fromHz: 2400, toHz: 21600 });
    const amp = (f: number) => {
      const w = (2 * Math.PI * f) / fs;
      let a = 0;
      for (let n = 1; n <= 31; n += 2) a += 2 * taps[31 + n]! * Math.sin(w * n);
      return a;
    };
    for (let k = 0; k < 101; k++) {
      const f = an.frequencyHz[k]!;
      const A = amp(f);
      expect(Math.abs(an.phaseErrorDeg[k]!)).toBeLessThan(1e-9);
      expect(an.gainErrorDb[k]).toBeCloseTo(20 * Math.log10(Math.abs(A)), 9);
      expect(an.suppressionDb[k]).toBeCloseTo(20 * Math.log10((1 + A) / Math.abs(1 - A)), 7);
    }
    // Own dense worst over the band vs the refined figure.
    let worst = Number.POSITIVE_INFINITY;
    for (let k = 0; k <= 200000; k++) {
      const A = amp(2400 + (19200 * k) / 200000);
      worst = Math.min(worst, 20 * Math.log10((1 + A) / Math.abs(1 - A)));
    }
    expect(an.worst.suppressionDb).toBeLessThanOrEqual(worst + 1e-9);
    expect(an.worst.suppressionDb).toBeGreaterThan(worst - 0.001);
    // 32 non-zero taps, antisymmetric: 16 multiplies; latency (N−1)/2.
    expect(an.cost).toEqual({ multipliesPerSample: 16, latencySamples: 31 });
  });

  it('figures of scipy remez(11, [0.1, 0.4], [1], hilbert): the dip below 1 sets the worst suppression', () => {
    // [C] Computed with scipy 1.10.1 (Debian python3-scipy): tests/fixtures/scipy/hilbert_excursions.json,
    // made by tests/fixtures/scipy/gen_hilbert_excursions.py with the command
    //   /usr/bin/python3 tests/fixtures/scipy/gen_hilbert_excursions.py > tests/fixtures/scipy/hilbert_excursions.json
    // scipy's own TestRemez.test_hilbert makes the same call but checks only the structure and
    // |H| − 1 < 0.015: it publishes none of these values. Taps in scipy's sign, the opposite of the
    // textbook 2/(πn) (Reilly, Frazer & Boashash, IEEE Trans. SP 42:3241, 1994), so they are negated here; scipy's round-off at the even
    // offsets (below 4e-16) is set to the exact zero a half-band design has.
    const x = JSON.parse(
      readFileSync(new URL('../fixtures/scipy/hilbert_excursions.json', import.meta.url), 'utf8'),
    ) as { taps: number[]; aboveOne: number; belowOne: number; ripple: number };
    const taps = x.taps.map((t) => (Math.abs(t) < 1e-12 ? 0 : -t));
    const net: FirNetwork = { ...blank, kind: 'fir', sampleRate: 1000, band: [100, 400], taps };
    const p = predictFigures(net);
    // The worst suppression sits at the largest excursion below 1 (scipy: 1 − min |H| = 0.0111760):
    // at exact 90° and gain A, 20·log10((1+A)/|1−A|) (Schmidt's formula, QEX Aug 1994 §2, with φ = 0).
    const dip = x.belowOne;
    expect(dip).toBeCloseTo(0.011176018, 9);
    expect(p.worstSuppressionDb).toBeCloseTo(20 * Math.log10((2 - dip) / dip), 3);
    // The +δ extremum (max |H| − 1 = 0.0112119, the ripple) gives the better side, 45.08 dB.
    expect(p.worstSuppressionDb).toBeLessThan(20 * Math.log10((2 + x.aboveOne) / x.aboveOne));
    // Gain error: the larger in dB of the two excursions.
    const gainDb = Math.max(20 * Math.log10(1 + x.aboveOne), -20 * Math.log10(1 - dip));
    expect(p.maxGainErrorDb).toBeCloseTo(gainDb, 5);
    expect(networkCost(net).multipliesPerSample).toBe(3);
  });
});

describe('predictFigures', () => {
  it('finds the true worst case between grid points and at the band edges', () => {
    // Source: the tests' own dense evaluation (tests/support/network-response.ts, no code shared with
    // src/design), 500k points.
    for (const net of [
      allpassNet(48000, [300, 3000], 60),
      allpassNet(8000, [200, 3800], 45, 'second-order'),
    ]) {
      const p = predictFigures(net);
      const worst = ownSweep(net, 500000, 'linear').worstSuppressionDb;
      expect(p.worstSuppressionDb).toBeLessThanOrEqual(worst + 1e-9);
      expect(p.worstSuppressionDb).toBeGreaterThan(worst - 0.002);
      // All-pass: gain is exactly 1, so the gain error is rounding noise.
      expect(p.maxGainErrorDb).toBeLessThan(1e-9);
    }
  });
});

describe('networkCost', () => {
  it('counts one multiply per all-pass section and gives the mean group delay over the band', () => {
    // Source: latency defined as the mean group delay over the band (src/design/analysis.ts); group delay from the numerical
    // derivative of the tests' own phase evaluation (tests/support), averaged here on a uniform grid.
    const net = allpassNet(48000, [300, 3000], 60);
    const c = networkCost(net);
    expect(c.multipliesPerSample).toBe(net.branches.i.sections.length + net.branches.q.sections.length);
    const fs = 48000;
    const freqs = Array.from({ length: 2701 }, (_, k) => 300 + k);
    const pi = unwrappedPhase(net, freqs, 'i');
    const pq = unwrappedPhase(net, freqs, 'q');
    const dw = (2 * Math.PI) / fs;
    const mean = (-(pi.at(-1)! - pi[0]!) / (2700 * dw) - (pq.at(-1)! - pq[0]!) / (2700 * dw)) / 2;
    expect(c.latencySamples).toBeCloseTo(mean, 3);
  });

  it('counts all non-zero taps when an FIR is not antisymmetric', () => {
    const taps = windowedHilbert(31);
    taps[0] = taps[0]! * 1.001;
    const net: FirNetwork = { ...blank, kind: 'fir', sampleRate: 48000, band: [3000, 21000], taps };
    expect(networkCost(net).multipliesPerSample).toBe(16);
    expect(networkCost({ ...net, taps: windowedHilbert(31) }).multipliesPerSample).toBe(8);
  });
});

describe('analyzeNetwork: range and options', () => {
  it('defaults to log spacing from a tenth of the low edge to Nyquist, figures over the band', () => {
    const net = allpassNet(48000, [300, 3000], 60);
    const an = analyzeNetwork(net);
    expect(an.frequencyHz.length).toBe(512);
    expect(an.frequencyHz[0]).toBeCloseTo(30, 9);
    expect(an.frequencyHz[511]).toBe(24000);
    expect(an.band).toEqual([300, 3000]);
    // Outside the band the suppression falls: at 30 Hz it is far below the in-band worst.
    expect(an.suppressionDb[0]!).toBeLessThan(an.worst.suppressionDb - 20);
    expect(an.worst.atHz).toBeGreaterThanOrEqual(300);
    expect(an.worst.atHz).toBeLessThanOrEqual(3000);
    for (const arr of [an.phaseErrorDeg, an.gainErrorDb, an.suppressionDb, an.groupDelayI, an.groupDelayQ]) {
      for (const v of arr) expect(Number.isFinite(v)).toBe(true);
    }
    const lin = analyzeNetwork(net, { scale: 'linear', points: 11 });
    expect(Array.from(lin.frequencyHz)).toEqual(Array.from({ length: 11 }, (_, k) => 2400 * k));
  });

  it('stays finite at DC and Nyquist for an FIR (zeros of the Q response)', () => {
    const net: FirNetwork = {
      ...blank,
      kind: 'fir',
      sampleRate: 48000,
      band: [2400, 21600],
      taps: windowedHilbert(31),
    };
    const an = analyzeNetwork(net, { scale: 'linear', points: 3 });
    for (const arr of [an.phaseErrorDeg, an.gainErrorDb, an.suppressionDb, an.groupDelayQ]) {
      for (const v of arr) expect(Number.isFinite(v)).toBe(true);
    }
  });

  it('rejects bad options naming the value', () => {
    const net = allpassNet(48000, [300, 3000], 40);
    const cases: [Record<string, unknown>, RegExp][] = [
      [{ points: 1 }, /points 1 must be a whole number from 2/],
      [{ fromHz: 0 }, /fromHz 0 must be above 0 Hz \(log scale\)/],
      [{ toHz: 30000 }, /toHz 30000 must be .* at most Nyquist 24000 Hz/],
      [{ scale: 'mel' }, /scale "mel" is not recognised/],
    ];
    for (const [opts, re] of cases)
      expectOrthotoneError(() => analyzeNetwork(net, opts), 'INVALID_ARGUMENT', re);
    expect(() => analyzeNetwork({ ...net, version: 2 } as unknown as Network)).toThrow(/version 2/);
  });
});
