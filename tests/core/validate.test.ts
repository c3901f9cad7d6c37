import { describe, expect, it } from 'vitest';
import { isOrthotoneError, OrthotoneError } from '../../src/core/errors.js';
import { validateTrims } from '../../src/core/trims.js';
import { imageRejectionDb } from '../../src/core/units.js';
import { requireBand, requireSampleRate } from '../../src/core/validate.js';

describe('requireBand', () => {
  it('accepts a band inside Nyquist', () => {
    expect(requireBand([300, 3000], 48000)).toEqual([300, 3000]);
  });
  it('names the edge, Nyquist and the rate when the upper edge is too high', () => {
    try {
      requireBand([300, 30000], 48000);
      expect.unreachable();
    } catch (e) {
      expect(isOrthotoneError(e, 'INVALID_BAND')).toBe(true);
      expect((e as OrthotoneError).message).toBe(
        'band upper edge 30000 Hz must be below Nyquist 24000 Hz for sampleRate 48000: lower the edge or raise the sample rate',
      );
    }
  });
  it('rejects reversed, zero and NaN edges', () => {
    expect(() => requireBand([3000, 300], 48000)).toThrow(
      /lower edge 3000 Hz must be below the upper edge 300/,
    );
    expect(() => requireBand([0, 3000], 48000)).toThrow(/above 0 Hz/);
    expect(() => requireBand([Number.NaN, 3000], 48000)).toThrow(/NaN/);
  });
  it('rejects an absurd sample rate', () => {
    expect(() => requireSampleRate(-1)).toThrow(OrthotoneError);
  });
});

describe('validateTrims', () => {
  it('rejects phase beyond 45° and NaN gain, naming the trim', () => {
    expect(() => validateTrims({ phaseDeg: 50 })).toThrow(/phaseDeg 50 degrees is out of range/);
    expect(() => validateTrims({ gainDb: Number.NaN })).toThrow(/gainDb NaN/);
  });
});

describe('imageRejectionDb', () => {
  // Values: shared docs/REFERENCES.md §1 [C], formula from K. Schmidt, QEX Aug 1994 §2.
  it.each([
    [1, 0.1, 61.183],
    [1, 1, 41.183],
    [1, 2, 35.162],
    [1, 5, 27.198],
  ])('g=%d, phase %d° gives %d dB', (g, deg, db) => {
    expect(imageRejectionDb(g, (deg * Math.PI) / 180)).toBeCloseTo(db, 3);
  });
  it.each([
    [0.01, 64.797],
    [0.1, 44.797],
    [1, 24.806],
  ])('gain error %d dB gives %d dB', (gdb, db) => {
    expect(imageRejectionDb(10 ** (gdb / 20), 0)).toBeCloseTo(db, 3);
  });
  it('combined 0.1 dB and 1° gives 39.614 dB (docs/REFERENCES.md §1 [C])', () => {
    expect(imageRejectionDb(10 ** (0.1 / 20), Math.PI / 180)).toBeCloseTo(39.614, 3);
  });
  it('35 dBc ↔ 2.0375° (Philips AN2003 eqs. 92–94)', () => {
    expect(imageRejectionDb(1, (2.0375 * Math.PI) / 180)).toBeCloseTo(35.0, 2);
  });
});
