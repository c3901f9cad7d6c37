// Verify run: readings at the stored trims against the stored figures, power-added to the floor.
import { describe, expect, it } from 'vitest';
import { createProfile } from '../../src/calibrate/profile.js';
import { checkEmissions } from '../../src/emissions/check.js';
import { ruleSetName } from '../../src/emissions/limits.js';
import { validateOutputFilter } from '../../src/emissions/output-filter.js';
import { judgeDrift } from '../../src/emissions/verify.js';

const profile = createProfile({
  sampleRate: 48000,
  toneHz: 1000,
  trims: {},
  results: { sidebandDb: 82.7, carrierDb: 45 },
});

describe('judgeDrift', () => {
  it('worked numbers: 82.7 dB stored under a −70 dBc floor reads −69.77 dBc; a median of −69.9 holds', () => {
    // 10·log10(10^−8.27 + 10^−7) = 10·log10(1.0537e−7) = −69.773 dBc (incoherent power addition).
    const r = judgeDrift(
      profile,
      [
        { sidebandDbc: -69.5, carrierDbc: -45.2 },
        { sidebandDbc: -70.2, carrierDbc: -44.6 },
        { sidebandDbc: -69.9, carrierDbc: -45.1 },
      ],
      { floorDbc: -70 },
    );
    const sb = r.quantities.find((q) => q.quantity === 'sideband')!;
    expect(sb.expectedDbc).toBeCloseTo(-69.773, 3);
    expect(sb.medianDbc).toBe(-69.9);
    expect(sb.drifted).toBe(false);
    // Carrier: 45 dB stored, −70 floor adds 0.014 dB: expected −44.986; median −45.1 → holds.
    expect(r.quantities.find((q) => q.quantity === 'carrier')!.expectedDbc).toBeCloseTo(-44.986, 3);
    expect(r.recalibrate).toBe(false);
  });

  it('a carrier 4 dB worse than stored is drift beyond 3 dB: re-calibrate; 2.9 dB worse is not', () => {
    const at = (c: number) =>
      judgeDrift(profile, [{ sidebandDbc: -82.7, carrierDbc: c }], { toleranceDb: 3 }).recalibrate;
    expect(at(-41)).toBe(true);
    expect(at(-42.1)).toBe(false);
    expect(judgeDrift(profile, [{ sidebandDbc: -82.7, carrierDbc: -41 }]).lines.at(-1)).toMatch(
      /re-calibrate/,
    );
  });
});

describe('rule names and filter documents', () => {
  it('aliases resolve to the rule sets; duplicates are checked once', () => {
    expect(ruleSetName('FCC')).toBe('fcc-97.307');
    expect(ruleSetName('itu')).toBe('itu-sm329-amateur');
    expect(ruleSetName('nowhere')).toBeUndefined();
    const c = checkEmissions({
      products: [],
      carrierHz: 14.2e6,
      sideband: 'upper',
      highestAudioHz: 3000,
      rules: ['fcc', 'fcc-97.307'],
    });
    expect(c.limits).toHaveLength(1);
  });

  it('a hand-written filter with only elements is accepted (50 Ω); a wrong format is refused', () => {
    expect(validateOutputFilter({ elements: [{ kind: 'C', value: 1e-10 }] }).impedanceOhms).toBe(50);
    expect(() => validateOutputFilter({ format: 'other', elements: [{ kind: 'C', value: 1e-10 }] })).toThrow(
      /orthotone-output-filter/,
    );
    expect(() => validateOutputFilter({ elements: [{ kind: 'R', value: 50 }] })).toThrow(/"L" or "C"/);
  });
});
