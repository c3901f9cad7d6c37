/**
 * The processor's `multitone` test source: K equal tones of peak 1/K with Schroeder's phases,
 * checked sample by sample against the sum of cosines written out here, block-length invariant,
 * never above full scale, and refused with a typed error when the spec is bad.
 */
import { describe, expect, it } from 'vitest';
import { OrthotoneError } from '../../src/core/errors.js';
import { createBlockSource } from '../../src/webaudio/test-source.js';

const FS = 48000;
const TONES = [300, 530, 940, 1700, 3000];

/**
 * The expected signal: Σ (1/K)·cos(2π·f_k·n/fs − π·k²/K), k = 0…K−1. Phases after M. R. Schroeder,
 * IEEE Trans. Inf. Theory 16(1):85–89, 1970 (low-peak-factor multitone; from memory).
 */
function expected(n: number): number {
  const K = TONES.length;
  let v = 0;
  for (let k = 0; k < K; k++) v += Math.cos((2 * Math.PI * TONES[k]! * n) / FS - (Math.PI * k * k) / K) / K;
  return v;
}

function render(blocks: number[]): Float32Array {
  const src = createBlockSource({ kind: 'multitone', frequenciesHz: TONES }, FS);
  const total = blocks.reduce((s, b) => s + b, 0);
  const out = new Float32Array(total);
  let at = 0;
  for (const b of blocks) {
    src.fill(out.subarray(at, at + b), undefined);
    at += b;
  }
  return out;
}

describe('multitone test source', () => {
  it('is the sum of K equal cosines with Schroeder phases, each of peak 1/K', () => {
    const x = render(Array.from({ length: 200 }, () => 128));
    let err = 0;
    let peak = 0;
    for (let n = 0; n < x.length; n++) {
      err = Math.max(err, Math.abs(x[n]! - expected(n)));
      peak = Math.max(peak, Math.abs(x[n]!));
    }
    // Float32 output: a few units in the last place of values below 1.
    expect(err).toBeLessThan(1e-6);
    expect(peak).toBeLessThanOrEqual(1);
  });

  it('gives the same samples whatever the block lengths (a block longer than 128 included)', () => {
    const a = render([128, 128, 128, 128, 128, 128, 128, 128]);
    const b = render([1, 127, 300, 5, 400, 191]);
    expect(b).toEqual(a);
  });

  it('refuses fewer than two tones, a repeated tone and a tone beyond Nyquist, naming the value', () => {
    const bad = (f: number[]) => () => createBlockSource({ kind: 'multitone', frequenciesHz: f }, FS);
    expect(bad([1000])).toThrow(/2 to 32 frequencies/);
    expect(bad([1000, 1000])).toThrow(/must differ/);
    expect(bad([1000, 30000])).toThrow(/frequenciesHz\[1\].*30000/);
    expect(bad([1000, 30000])).toThrow(OrthotoneError);
  });
});
