import { describe, expect, it } from 'vitest';
import { isOrthotoneError } from '../../src/core/errors.js';
import { createAnalyzer } from '../../src/simulate/analyzer.js';
import { createVirtualExciter } from '../../src/simulate/exciter.js';
import { homebrewBenchDevice, IDEAL_MODEL } from '../../src/simulate/model.js';

const fs = 48000;

describe('createAnalyzer', () => {
  const ex = createVirtualExciter(homebrewBenchDevice(), { sampleRate: fs, seed: 1 });
  it('noise-free readings equal the response power-added to the floor', () => {
    const an = createAnalyzer(ex, { seed: 1, noiseDb: 0, floorDbc: -70 });
    const r = ex.response(1000, {});
    const expected = 10 * Math.log10(10 ** (r.unwantedDbc / 10) + 1e-7);
    expect(an.readSideband(1000, {})).toBeCloseTo(expected, 10);
    // An ideal device reads the floor.
    const ideal = createAnalyzer(createVirtualExciter(IDEAL_MODEL, { sampleRate: fs, seed: 1 }), {
      seed: 1,
      noiseDb: 0,
    });
    expect(ideal.readCarrier(1000, {})).toBeCloseTo(-70, 6);
    expect(an.readings).toBe(1);
  });
  it('reading noise has the stated σ and is reproducible from the seed', () => {
    const a = createAnalyzer(ex, { seed: 7, noiseDb: 0.5 });
    const b = createAnalyzer(ex, { seed: 7, noiseDb: 0.5 });
    const xs = Array.from({ length: 4000 }, () => a.readCarrier(1000, {}));
    expect(b.readCarrier(1000, {})).toBe(xs[0]);
    const mean = xs.reduce((s, x) => s + x, 0) / xs.length;
    const sd = Math.sqrt(xs.reduce((s, x) => s + (x - mean) ** 2, 0) / (xs.length - 1));
    expect(Math.abs(sd - 0.5)).toBeLessThan(0.03);
    expect(a.readings).toBe(4000);
  });
  it('outliers and failures at the stated rates; a failed reading throws MEASUREMENT_FAILED', () => {
    const a = createAnalyzer(ex, { seed: 3, noiseDb: 0, outlierRate: 0.1, outlierDb: 12, failureRate: 0.05 });
    const base = 10 * Math.log10(10 ** (ex.response(1000, {}).carrierDbc / 10) + 1e-7);
    let fails = 0;
    let outliers = 0;
    for (let k = 0; k < 4000; k++) {
      try {
        if (Math.abs(a.readCarrier(1000, {}) - base) > 11) outliers++;
      } catch (e) {
        expect(isOrthotoneError(e, 'MEASUREMENT_FAILED')).toBe(true);
        fails++;
      }
    }
    expect(fails / 4000).toBeGreaterThan(0.035);
    expect(fails / 4000).toBeLessThan(0.065);
    expect(outliers / 3800).toBeGreaterThan(0.08);
    expect(outliers / 3800).toBeLessThan(0.12);
  });
});
