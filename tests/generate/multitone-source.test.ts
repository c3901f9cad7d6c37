/**
 * generate/'s multi-tone source (the one render, the worklet and the across-the-band calibration
 * play): with a level, each tone sits at levelDbfs − 20·log10(K) and the sum stays under that peak.
 * Checked against a sum of cosines written out here (Schroeder phases, IEEE Trans. Inf. Theory
 * 16(1):85–89, 1970; from memory).
 */
import { describe, expect, it } from 'vitest';
import { createMultitoneSource } from '../../src/generate/multitone-source.js';

const FS = 48000;
const TONES = [700, 1800, 1900]; // common practice, no source (two-tone and single test tones)

describe('createMultitoneSource', () => {
  it('scales every tone by the level and keeps the sum under its peak', () => {
    const levelDbfs = -6;
    const src = createMultitoneSource(TONES, FS, levelDbfs);
    const K = TONES.length;
    const amp = 10 ** (levelDbfs / 20) / K;
    expect(src.toneDbfs).toBeCloseTo(levelDbfs - 20 * Math.log10(K), 12);
    const x = new Float32Array(4800);
    src.fill(x.subarray(0, 1000));
    src.fill(x.subarray(1000));
    let err = 0;
    let peak = 0;
    for (let n = 0; n < x.length; n++) {
      let v = 0;
      for (let k = 0; k < K; k++)
        v += amp * Math.cos((2 * Math.PI * TONES[k]! * n) / FS - (Math.PI * k * k) / K);
      err = Math.max(err, Math.abs(x[n]! - v));
      peak = Math.max(peak, Math.abs(x[n]!));
    }
    expect(err).toBeLessThan(1e-6);
    expect(peak).toBeLessThanOrEqual(10 ** (levelDbfs / 20));
    src.reset();
    const y = new Float32Array(4800);
    src.fill(y);
    expect(y).toEqual(x);
  });
});
