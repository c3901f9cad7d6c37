/**
 * Unknown option keys are refused by the library, naming the nearest known key, instead of being
 * ignored while the default is used (issue 12).
 */
import { describe, expect, it } from 'vitest';
import { editDistance, nearestName, withDefaults } from '../../src/core/validate.js';
import { designNetwork } from '../../src/design/design-network.js';
import { createQuadratureGenerator } from '../../src/generate/quadrature-generator.js';

describe('unknown option keys', () => {
  it('edit distance counts insertions, deletions, substitutions and swaps', () => {
    // Worked examples: kitten → sitting is 3 (Levenshtein's classic example); a swap counts once.
    expect(editDistance('kitten', 'sitting')).toBe(3);
    expect(editDistance('tragetDb', 'targetDb')).toBe(1);
    expect(editDistance('', 'abc')).toBe(3);
    expect(editDistance('same', 'same')).toBe(0);
    expect(nearestName('tragetDb', ['taps', 'targetDb', 'sections'])).toBe('targetDb');
    expect(nearestName('qqqqqqq', ['taps', 'targetDb'])).toBeUndefined();
  });

  it('designNetwork refuses tragetDb and names targetDb', () => {
    expect(() =>
      designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'auto', tragetDb: 50 } as never),
    ).toThrow(/unknown option tragetDb in the network spec: did you mean targetDb\?/);
  });

  it('the generator (withDefaults) refuses a mistyped key', () => {
    const net = designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'allpass', targetDb: 40 });
    expect(() => createQuadratureGenerator(net, { sidebnd: 'lower' } as never)).toThrow(
      /unknown option sidebnd.*did you mean sideband\?/,
    );
    expect(() => withDefaults({ a: 1 }, { a: 2 })).not.toThrow();
  });

  it('a size that does not fit the method is refused, not ignored', () => {
    expect(() => designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'auto', taps: 63 })).toThrow(
      /taps 63 sets the length of a Hilbert FIR but method is 'auto'/,
    );
    expect(() => designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'fir', sections: 6 })).toThrow(
      /sections 6 sets the size of an all-pass pair/,
    );
  });

  it('one tap limit: a length the designer can make is accepted without maxTaps', () => {
    // 4097 taps lies above the target search's default cap (4095) but within what can be designed.
    const long = designNetwork({
      sampleRate: 48000,
      band: [300, 3000],
      method: 'fir',
      firMethod: 'kaiser',
      taps: 4097,
    });
    expect(long.kind === 'fir' && long.taps.length).toBe(4097);
    expect(() => designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'fir', taps: 70001 })).toThrow(
      /taps 70001 must be a whole number from 3 to 16383/,
    );
  });
});
