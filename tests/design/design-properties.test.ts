import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { isOrthotoneError, type OrthotoneError } from '../../src/core/errors.js';
import { designAllpassPair } from '../../src/design/allpass-pair.js';
import { designNetwork, type NetworkSpec } from '../../src/design/design-network.js';
import { type Network, validateNetwork } from '../../src/design/network.js';
import { expectOrthotoneError } from '../support/errors.js';
import { ownWorstDb as worstOnGrid } from '../support/network-response.js';

const RATES = [8000, 16000, 22050, 44100, 48000, 96000, 192000];

/** Worst suppression over the band, own dense log + linear grid (tests/support; Schmidt, QEX 1994 §2). */
function ownWorstDb(net: Network, n = 4000): number {
  return worstOnGrid(net, n);
}

function allFinite(net: Network): boolean {
  const nums =
    net.kind === 'fir' ? net.taps : [...net.branches.i.sections, ...net.branches.q.sections].map((s) => s.a);
  return (
    nums.every(Number.isFinite) &&
    Number.isFinite(net.predicted.worstSuppressionDb) &&
    Number.isFinite(net.predicted.maxPhaseErrorDeg) &&
    Number.isFinite(net.predicted.maxGainErrorDb) &&
    Number.isFinite(net.cost.latencySamples)
  );
}

/** A valid spec: band edges as fractions of fs, low edge from 0.05% to 10% of fs. */
const validBand = fc
  .record({
    fs: fc.constantFrom(...RATES),
    loFrac: fc.double({ min: 0.0005, max: 0.1, noNaN: true }),
    widthFrac: fc.double({ min: 0.05, max: 1, noNaN: true }),
  })
  .map(({ fs, loFrac, widthFrac }) => {
    const lo = Math.round(fs * loFrac * 100) / 100;
    const top = 0.4995 * fs;
    const hi = Math.round((lo * 1.2 + (top - lo * 1.2) * widthFrac) * 100) / 100;
    return { fs, band: [lo, hi] as [number, number] };
  });

describe('property: random valid specs give designs that meet the target', () => {
  it('all-pass, both forms: target met by independent evaluation, fewest sections, finite coefficients', () => {
    // Source: the test's own evaluation loop (ownWorstDb); optimality of the closed form per size
    // (Darlington, BSTJ 29:94, 1950) means one fewer section must fail.
    fc.assert(
      fc.property(
        validBand,
        fc.double({ min: 20, max: 110, noNaN: true }),
        fc.constantFrom('first-order' as const, 'second-order' as const),
        ({ fs, band }, targetDb, allpassForm) => {
          const spec: NetworkSpec = { sampleRate: fs, band, method: 'allpass', targetDb, allpassForm };
          const net = designNetwork(spec);
          expect(validateNetwork(net)).toBe(net);
          expect(allFinite(net)).toBe(true);
          const own = ownWorstDb(net);
          expect(own).toBeGreaterThanOrEqual(targetDb);
          expect(Math.abs(own - net.predicted.worstSuppressionDb)).toBeLessThan(0.1);
          const n = net.cost.multipliesPerSample;
          if (n > 1) {
            const fewer = designAllpassPair({ sampleRate: fs, band, sections: n - 1, form: allpassForm });
            const fewerNet = { ...net, branches: fewer.branches };
            expect(ownWorstDb(fewerNet)).toBeLessThan(targetDb);
          }
        },
      ),
      { seed: 20260101, numRuns: 40 },
    );
  });

  it("method 'auto' and 'fir': target met by independent evaluation, finite figures", () => {
    // Bands kept away from DC (≥ 2% of fs) so FIR lengths stay modest on a shared 2-core machine.
    fc.assert(
      fc.property(
        fc.constantFrom(8000, 16000, 48000),
        fc.double({ min: 0.02, max: 0.1, noNaN: true }),
        fc.double({ min: 0.3, max: 0.48, noNaN: true }),
        fc.double({ min: 25, max: 70, noNaN: true }),
        fc.constantFrom('auto' as const, 'fir' as const),
        (fs, loFrac, hiFrac, targetDb, method) => {
          const band: [number, number] = [Math.round(fs * loFrac), Math.round(fs * hiFrac)];
          const net = designNetwork({ sampleRate: fs, band, method, targetDb });
          expect(allFinite(net)).toBe(true);
          const own = ownWorstDb(net, 1500);
          expect(own).toBeGreaterThanOrEqual(targetDb);
          expect(Math.abs(own - net.predicted.worstSuppressionDb)).toBeLessThan(0.1);
        },
      ),
      { seed: 7, numRuns: 12 },
    );
  });
});

describe('property: invalid specs throw OrthotoneError with the right code and a helpful message', () => {
  const method = fc.constantFrom('fir' as const, 'allpass' as const, 'auto' as const);

  it('upper edge at or above Nyquist → INVALID_BAND naming the edge and Nyquist', () => {
    fc.assert(
      fc.property(
        fc.constantFrom(...RATES),
        fc.double({ min: 1, max: 3, noNaN: true }),
        method,
        (fs, k, m) => {
          const hi = (fs / 2) * k;
          expectOrthotoneError(
            () => designNetwork({ sampleRate: fs, band: [100, hi], method: m }),
            'INVALID_BAND',
            new RegExp(`upper edge ${hi} Hz must be below Nyquist ${fs / 2} Hz`),
          );
        },
      ),
      { seed: 1, numRuns: 30 },
    );
  });

  it('reversed, zero or negative band edges → INVALID_BAND', () => {
    fc.assert(
      fc.property(
        fc.constantFrom(...RATES),
        fc.double({ min: 0.001, max: 0.45, noNaN: true }),
        fc.double({ min: 0.001, max: 0.45, noNaN: true }),
        method,
        (fs, a, b, m) => {
          fc.pre(a !== b);
          const lo = Math.max(a, b) * fs;
          const hi = Math.min(a, b) * fs;
          expectOrthotoneError(
            () => designNetwork({ sampleRate: fs, band: [lo, hi], method: m }),
            'INVALID_BAND',
            /must be below the upper edge .*write the band as \[lo, hi\]/,
          );
          expectOrthotoneError(
            () => designNetwork({ sampleRate: fs, band: [-lo, hi], method: m }),
            'INVALID_BAND',
            /above 0 Hz/,
          );
          expectOrthotoneError(
            () => designNetwork({ sampleRate: fs, band: [0, hi], method: m }),
            'INVALID_BAND',
            /above 0 Hz/,
          );
        },
      ),
      { seed: 2, numRuns: 30 },
    );
  });

  it('NaN, zero or negative numbers → INVALID_ARGUMENT naming the field', () => {
    fc.assert(
      fc.property(
        fc.constantFrom(Number.NaN, 0, -1, -48000, Number.POSITIVE_INFINITY),
        fc.constantFrom('sampleRate', 'targetDb', 'sections', 'taps', 'maxLatencySamples'),
        method,
        (bad, field, m) => {
          const spec = { sampleRate: 48000, band: [300, 3000], method: m, [field]: bad } as NetworkSpec;
          expectOrthotoneError(() => designNetwork(spec), 'INVALID_ARGUMENT', new RegExp(`^${field} `));
        },
      ),
      { seed: 3, numRuns: 40 },
    );
  });

  it('a target beyond reach within the size limits → UNREACHABLE_TARGET saying what to change', () => {
    fc.assert(
      fc.property(
        validBand,
        fc.integer({ min: 1, max: 4 }),
        fc.constantFrom('first-order' as const, 'second-order' as const),
        ({ fs, band }, maxSections, form) => {
          // With at most 4 sections no band here reaches 150 dB (4qⁿ with q ≥ 0.1 gives < 70 dB).
          expectOrthotoneError(
            () => designAllpassPair({ sampleRate: fs, band, targetDb: 150, maxSections, form }),
            'UNREACHABLE_TARGET',
            new RegExp(`targetDb 150 dB needs more than maxSections ${maxSections}`),
            /lower targetDb, narrow the band, or raise maxSections/,
          );
        },
      ),
      { seed: 4, numRuns: 30 },
    );
  });

  it('extreme but valid specs never hang or give NaN: a design or a typed error', () => {
    // A hang would show as the test timeout (vitest.config.ts); no timing is asserted here.
    fc.assert(
      fc.property(
        fc.constantFrom(1000, 8000, 1_000_000),
        fc.double({ min: 1e-7, max: 0.4999, noNaN: true }),
        fc.double({ min: 1e-9, max: 1, noNaN: true }),
        fc.double({ min: 1, max: 200, noNaN: true }),
        fc.constantFrom('first-order' as const, 'second-order' as const),
        (fs, a, t, targetDb, form) => {
          const lo = fs * a * t;
          const hi = fs * a;
          fc.pre(lo > 0 && lo < hi);
          try {
            const d = designAllpassPair({ sampleRate: fs, band: [lo, hi], targetDb, form });
            const coeffs = [...d.branches.i.sections, ...d.branches.q.sections].map((s) => s.a);
            expect(coeffs.every((x) => Number.isFinite(x) && Math.abs(x) < 1)).toBe(true);
            expect(Number.isFinite(d.worstSuppressionDb)).toBe(true);
            expect(d.worstSuppressionDb).toBeGreaterThanOrEqual(targetDb);
          } catch (e) {
            expect(isOrthotoneError(e)).toBe(true);
            expect(['UNREACHABLE_TARGET', 'INVALID_BAND']).toContain((e as OrthotoneError).code);
          }
        },
      ),
      { seed: 5, numRuns: 40 },
    );
  });
});
