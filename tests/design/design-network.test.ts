import { describe, expect, it } from 'vitest';
import { type DesignCandidate, designNetwork, type NetworkSpec } from '../../src/design/design-network.js';
import { type Network, validateNetwork } from '../../src/design/network.js';
import { expectOrthotoneError } from '../support/errors.js';
import { ownWorstDb as worstOnGrid } from '../support/network-response.js';

/**
 * Worst suppression over the band by the test's own dense evaluation (tests/support, independent of
 * src/): 20 001 log-spaced plus 20 001 linear points for an all-pass pair, 4 001 + 4 001 for a FIR.
 */
function ownWorstDb(net: Network): number {
  return worstOnGrid(net, net.kind === 'fir' ? 4000 : 20000);
}

const sectionsOf = (net: Network) =>
  net.kind === 'allpass' ? net.branches.i.sections.length + net.branches.q.sections.length : Number.NaN;

describe('designNetwork: the headline all-pass design', () => {
  it('48 kHz, 300–3000 Hz, 60 dB: meets 60 dB by independent evaluation with the fewest sections', () => {
    // Source: the test's own evaluation loop (ownWorstDb above); suppression per Schmidt, QEX Aug 1994 §2.
    const net = designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'allpass', targetDb: 60 });
    expect(validateNetwork(net)).toBe(net);
    expect(net.format).toBe('orthotone-network');
    expect(net.version).toBe(1);
    expect(net.kind).toBe('allpass');
    const own = ownWorstDb(net);
    expect(own).toBeGreaterThanOrEqual(60);
    expect(Math.abs(net.predicted.worstSuppressionDb - own)).toBeLessThan(0.1);
    expect(net.predicted.worstSuppressionDb).toBeLessThanOrEqual(own + 1e-9);
    const n = sectionsOf(net);
    expect(net.cost.multipliesPerSample).toBe(n);
    const fewer = designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'allpass', sections: n - 1 });
    expect(ownWorstDb(fewer)).toBeLessThan(60);
    expect(net.design).toMatchObject({
      sampleRate: 48000,
      band: [300, 3000],
      method: 'allpass',
      targetDb: 60,
      realised: { method: 'allpass', form: 'first-order', sections: n },
    });
    // A plain JSON document: survives a round trip unchanged.
    expect(JSON.parse(JSON.stringify(net))).toEqual(net);
  });

  it('meets other targets, rates and bands, in both all-pass forms, with the fewest sections', () => {
    const cases: NetworkSpec[] = [
      { sampleRate: 8000, band: [300, 3400], method: 'allpass', targetDb: 40 },
      { sampleRate: 44100, band: [100, 6000], method: 'allpass', targetDb: 80 },
      { sampleRate: 96000, band: [50, 20000], method: 'allpass', targetDb: 100 },
      { sampleRate: 48000, band: [200, 4000], method: 'allpass', targetDb: 70, allpassForm: 'second-order' },
      { sampleRate: 16000, band: [150, 7850], method: 'allpass', targetDb: 55, allpassForm: 'second-order' },
    ];
    for (const spec of cases) {
      const net = designNetwork(spec);
      const own = ownWorstDb(net);
      expect(own).toBeGreaterThanOrEqual(spec.targetDb!);
      expect(Math.abs(net.predicted.worstSuppressionDb - own)).toBeLessThan(0.1);
      const fewer = designNetwork({ ...spec, targetDb: undefined, sections: sectionsOf(net) - 1 });
      expect(ownWorstDb(fewer)).toBeLessThan(spec.targetDb!);
    }
  });

  it('defaults to 60 dB when neither a target nor a size is given, and honours a given size', () => {
    const net = designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'allpass' });
    expect(net.design.targetDb).toBe(60);
    expect(ownWorstDb(net)).toBeGreaterThanOrEqual(60);
    const four = designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'allpass', sections: 4 });
    expect(sectionsOf(four)).toBe(4);
    expect(four.design.targetDb).toBeUndefined();
    expect(Math.abs(four.predicted.worstSuppressionDb - ownWorstDb(four))).toBeLessThan(0.1);
  });
});

describe('designNetwork: Hilbert FIR', () => {
  it('meets the target by independent evaluation; predicted within 0.1 dB; cost exploits symmetry', () => {
    // Source: the test's own evaluation loop; antisymmetric taps need one multiply per tap pair
    // (Reilly, Frazer & Boashash 1994 for the type III structure).
    for (const spec of [
      { sampleRate: 8000, band: [300, 3400], method: 'fir', targetDb: 50 },
      { sampleRate: 48000, band: [1000, 20000], method: 'fir', targetDb: 70, firMethod: 'kaiser' },
    ] as NetworkSpec[]) {
      const net = designNetwork(spec);
      if (net.kind !== 'fir') throw new Error('expected an FIR');
      const own = ownWorstDb(net);
      expect(own).toBeGreaterThanOrEqual(spec.targetDb!);
      expect(Math.abs(net.predicted.worstSuppressionDb - own)).toBeLessThan(0.1);
      const nonzero = net.taps.filter((t) => t !== 0).length;
      expect(net.cost).toEqual({
        multipliesPerSample: nonzero / 2,
        latencySamples: (net.taps.length - 1) / 2,
      });
      expect(net.design).toMatchObject({ method: 'fir', realised: { method: 'fir', taps: net.taps.length } });
    }
  });

  it('designs a given length and reports a given length that falls short', () => {
    const net = designNetwork({ sampleRate: 48000, band: [2000, 22000], method: 'fir', taps: 31 });
    expect(net.kind === 'fir' && net.taps.length).toBe(31);
    expectOrthotoneError(
      () => designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'fir', taps: 31, targetDb: 60 }),
      'UNREACHABLE_TARGET',
      /taps 31 .* below targetDb 60 dB/,
    );
  });
});

describe("designNetwork: method 'auto'", () => {
  it('keeps the candidate with the fewest multiplies per sample and explains the choice', () => {
    // Source: task contract — 'auto' picks the cheapest multiplies/sample meeting the target.
    const net = designNetwork({ sampleRate: 8000, band: [300, 3400], method: 'auto', targetDb: 50 });
    const cands = net.design.candidates as DesignCandidate[];
    expect(cands.map((c) => `${c.method}/${c.variant}`).sort()).toEqual([
      'allpass/first-order',
      'allpass/second-order',
      'fir/remez',
    ]);
    const made = cands.filter((c) => c.multipliesPerSample !== undefined);
    const least = Math.min(...made.map((c) => c.multipliesPerSample!));
    expect(net.cost.multipliesPerSample).toBe(least);
    expect(ownWorstDb(net)).toBeGreaterThanOrEqual(50);
    for (const c of made) expect(c.worstSuppressionDb!).toBeGreaterThanOrEqual(50);
    const reason = net.design.reason as string;
    expect(reason).toMatch(/^chose allpass \(second-order, \d+ sections\): \d+ multiplies\/sample, latency/);
    expect(reason).toMatch(/fir \(remez, \d+ taps\): \d+ multiplies\/sample, latency \d+\.\d samples/);
    expect(reason).toMatch(/allpass \(first-order, \d+ sections\)/);
  });

  it('respects maxLatencySamples, and says so when nothing fits', () => {
    const spec: NetworkSpec = { sampleRate: 8000, band: [300, 3400], method: 'auto', targetDb: 50 };
    const free = designNetwork(spec);
    const cands = free.design.candidates as DesignCandidate[];
    const second = cands.find((c) => c.variant === 'second-order')!;
    const first = cands.find((c) => c.variant === 'first-order')!;
    expect(second.latencySamples!).toBeGreaterThan(first.latencySamples!);
    const limit = (first.latencySamples! + second.latencySamples!) / 2;
    const net = designNetwork({ ...spec, maxLatencySamples: limit });
    expect(net.cost.latencySamples).toBeLessThanOrEqual(limit);
    expect(net.design.realised).toMatchObject({ method: 'allpass', form: 'first-order' });
    expect(net.design.reason).toMatch(/latency above maxLatencySamples/);
    expectOrthotoneError(
      () => designNetwork({ ...spec, maxLatencySamples: 0.5 }),
      'UNREACHABLE_TARGET',
      /no network meets targetDb 50 dB .* within maxLatencySamples 0.5/,
    );
  });

  it('defaults to 60 dB and produces a valid, evaluated document', () => {
    const net = designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'auto' });
    expect(net.design.targetDb).toBe(60);
    expect(ownWorstDb(net)).toBeGreaterThanOrEqual(60);
    expect(validateNetwork(net)).toBe(net);
  });
});

describe('designNetwork: bad specs', () => {
  it('names the value and the fix', () => {
    const base = { sampleRate: 48000, band: [300, 3000] as [number, number] };
    expectOrthotoneError(
      () => designNetwork({ ...base, method: 'iir' as 'fir' }),
      'INVALID_ARGUMENT',
      /method "iir"/,
    );
    expectOrthotoneError(
      () => designNetwork({ ...base, method: 'fir', taps: 64 }),
      'INVALID_ARGUMENT',
      /taps 64 must be odd .* use 63 or 65/,
    );
    expectOrthotoneError(
      () => designNetwork({ ...base, method: 'allpass', sections: 4, targetDb: 60 }),
      'UNREACHABLE_TARGET',
      /sections 4 give .* below targetDb 60 dB/,
    );
    expectOrthotoneError(
      () => designNetwork({ ...base, method: 'allpass', targetDb: 60, maxLatencySamples: 3 }),
      'UNREACHABLE_TARGET',
      /latency .* exceeds maxLatencySamples 3/,
    );
    expectOrthotoneError(
      () => designNetwork({ sampleRate: 48000, band: [3000, 300], method: 'allpass' }),
      'INVALID_BAND',
      /lower edge 3000 Hz must be below the upper edge 300 Hz/,
    );
    expectOrthotoneError(
      () => designNetwork({ ...base, method: 'allpass', targetDb: 500 }),
      'INVALID_ARGUMENT',
      /targetDb 500 dB is out of range/,
    );
  });
});
