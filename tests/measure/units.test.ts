/**
 * Narrow checks of single functions of the measuring layer on hand-made inputs, added from the
 * mutation runs: each names the behaviour it pins and where the expectation comes from.
 */
import { describe, expect, it } from 'vitest';
import {
  ENVELOPE_MONOTONE_BEYOND_BINS,
  leakageNear,
  strongestPeaks,
  windowLeakageEnvelope,
} from '../../src/measure/leakage.js';
import { DEFAULT_SPECTRUM_OPTIONS, planFrames, type Spectrum } from '../../src/measure/spectrum.js';

const fs = 48000;
const spectrum = (power: number[], complex: boolean): Spectrum => ({
  ...planFrames(4096, fs, complex, { ...DEFAULT_SPECTRUM_OPTIONS, window: 'hann', frameLength: 4096 }),
  power: Float64Array.from(power),
});

describe('strongestPeaks: ties', () => {
  it('of equal peaks competing for the last place, the lower frequency is kept', () => {
    // Peaks 7 (bin 6), 5 (bin 0), 4 (bin 10), then 3 at bins 3 and 4 (a plateau).
    const s = spectrum([5, 1, 0, 3, 3, 2, 7, 1, 0, 0, 4], false);
    expect(strongestPeaks(s, 4).map((p) => Math.round(p.hz / s.binHz))).toEqual([6, 0, 10, 3]);
    // A later, stronger peak still takes the last place.
    const t = spectrum([5, 1, 0, 3, 3, 2, 7, 1, 0, 3.5, 0], false);
    expect(strongestPeaks(t, 3).map((p) => Math.round(p.hz / t.binHz))).toEqual([6, 0, 9]);
  });
});

describe('leakageNear: far components and the main-lobe edge', () => {
  const n = 4096;
  const res = fs / n;
  const bh = (): Spectrum => ({
    ...planFrames(n, fs, true, { ...DEFAULT_SPECTRUM_OPTIONS, window: 'blackman-harris', frameLength: n }),
    power: new Float64Array(0),
  });
  it('beyond the distance where the envelope only falls, the bound is the envelope at the near end of the span', () => {
    // Blackman–Harris: monotone beyond 40 bins (leakage.test.ts checks it). Slack: the span plus half
    // an FFT bin (the peak bin is within half a bin of the component).
    const s = bh();
    for (const d of [ENVELOPE_MONOTONE_BEYOND_BINS['blackman-harris'] + 5, 300, 1500]) {
      for (const spanBins of [0, 2]) {
        const near = d - spanBins - 0.5;
        const b = leakageNear(s, [{ hz: 0, power: 0.5 }], d * res, spanBins * res, 0);
        expect(b / (0.5 * windowLeakageEnvelope('blackman-harris', n, near))).toBeCloseTo(1, 9);
      }
    }
  });
  it('just outside the main lobe only the sidelobes leak, not the whole component', () => {
    // 4.5 bins away with a half-bin slack: the span starts at the main-lobe edge (4 bins).
    const s = bh();
    const b = leakageNear(s, [{ hz: 0, power: 1 }], 4.5 * res, 0, 0);
    expect(b).toBeLessThan(1);
    // Still at least the envelope at 4.5 bins.
    expect(b).toBeGreaterThanOrEqual(windowLeakageEnvelope('blackman-harris', n, 4.5));
    // A hair closer, the span reaches into the main lobe: the whole power.
    expect(leakageNear(s, [{ hz: 0, power: 1 }], 4.49 * res, 0, 0)).toBe(1);
  });
});
