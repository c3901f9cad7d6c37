import { describe, expect, it } from 'vitest';
import {
  FRACTIONAL_DELAY_ACCURACY,
  FRACTIONAL_DELAY_TAPS,
  fractionalDelayTaps,
} from '../../src/generate/fractional-delay.js';

/** Worst complex error |H(e^{jω}) − e^{−jωd}| over 0…fmax (fraction of fs), computed directly. */
function worstError(taps: Float64Array, d: number, fmax: number): number {
  let e = 0;
  for (let k = 0; k <= 300; k++) {
    const w = 2 * Math.PI * fmax * (k / 300);
    let re = 0;
    let im = 0;
    for (let m = 0; m < taps.length; m++) {
      re += taps[m]! * Math.cos(w * m);
      im -= taps[m]! * Math.sin(w * m);
    }
    e = Math.max(e, Math.hypot(re - Math.cos(w * d), im + Math.sin(w * d)));
  }
  return e;
}

describe('fractional-delay interpolator', () => {
  const taps = new Float64Array(FRACTIONAL_DELAY_TAPS);
  it('meets its documented accuracy at every fractional delay (table interpolation included)', () => {
    let e25 = 0;
    let e40 = 0;
    // Off-grid fractions exercise the linear interpolation between table rows.
    for (let k = 0; k <= 64; k++) {
      const frac = k / 64 + (k % 3) * 0.00077;
      if (frac > 1) continue;
      fractionalDelayTaps(frac, taps);
      const d = FRACTIONAL_DELAY_TAPS / 2 - 1 + frac;
      e25 = Math.max(e25, worstError(taps, d, 0.25));
      e40 = Math.max(e40, worstError(taps, d, 0.4));
    }
    expect(20 * Math.log10(e25)).toBeLessThan(FRACTIONAL_DELAY_ACCURACY.errorDbTo025);
    expect(20 * Math.log10(e40)).toBeLessThan(FRACTIONAL_DELAY_ACCURACY.errorDbTo04);
  });
  it('whole-sample positions are exact unit impulses', () => {
    fractionalDelayTaps(0, taps);
    expect(Array.from(taps).filter((t) => t !== 0)).toEqual([1]);
    expect(taps[FRACTIONAL_DELAY_TAPS / 2 - 1]).toBe(1);
    fractionalDelayTaps(1, taps);
    expect(taps[FRACTIONAL_DELAY_TAPS / 2]).toBe(1);
    expect(Array.from(taps).filter((t) => t !== 0).length).toBe(1);
  });
  it('half-sample delay is symmetric and sums to 1 at DC', () => {
    fractionalDelayTaps(0.5, taps);
    for (let k = 0; k < FRACTIONAL_DELAY_TAPS; k++) {
      expect(taps[k]).toBeCloseTo(taps[FRACTIONAL_DELAY_TAPS - 1 - k]!, 12);
    }
    expect(taps.reduce((s, t) => s + t, 0)).toBeCloseTo(1, 4);
  });
});
