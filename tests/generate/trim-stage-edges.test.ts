// The trim stage's refusals, accessors, ramp overrides and output guard: the edges that the formula
// and block-size tests in trim-stage.test.ts never reach (found by mutation testing, tests/mutants.md).
import { describe, expect, it } from 'vitest';
import {
  INPUT_LIMIT,
  OUTPUT_LIMIT,
  TrimStage,
  validateTrimStageOptions,
} from '../../src/generate/trim-stage.js';
import { expectOrthotoneError } from '../support/errors.js';

const fs = 48000;

/** Runs `n` samples of constant I and Q through the stage; returns the last output pair. */
function run(stage: TrimStage, i: number, q: number, n = 256): [number, number] {
  const a = new Float32Array(n).fill(i);
  const b = new Float32Array(n).fill(q);
  const oi = new Float32Array(n);
  const oq = new Float32Array(n);
  stage.process(a, b, oi, oq);
  return [oi[n - 1]!, oq[n - 1]!];
}

describe('trim stage options: each refusal names the option and the fix', () => {
  it('refuses a bad sideband, ramp time, skew range and correction length', () => {
    expectOrthotoneError(
      () => new TrimStage(fs, { sideband: 'both' as never }),
      'INVALID_ARGUMENT',
      /sideband/,
    );
    expectOrthotoneError(() => new TrimStage(fs, { rampSeconds: 11 }), 'INVALID_ARGUMENT', /rampSeconds/);
    expectOrthotoneError(() => new TrimStage(fs, { rampSeconds: -1 }), 'INVALID_ARGUMENT', /rampSeconds/);
    expectOrthotoneError(
      () => new TrimStage(fs, { maxSkewSamples: 17 }),
      'INVALID_ARGUMENT',
      /maxSkewSamples/,
    );
    expectOrthotoneError(
      () => new TrimStage(fs, { maxCorrectionTaps: 64 }),
      'INVALID_ARGUMENT',
      /maxCorrectionTaps 64 must be 0 or an odd whole number \(e\.g\. 63\)/,
    );
    expectOrthotoneError(
      () => new TrimStage(fs, { maxCorrectionTaps: 62.5 }),
      'INVALID_ARGUMENT',
      /maxCorrectionTaps 62\.5 must be 0 or an odd whole number/,
    );
    expectOrthotoneError(
      () => new TrimStage(fs, { maxCorrectionTaps: 257 }),
      'INVALID_ARGUMENT',
      /maxCorrectionTaps/,
    );
    expectOrthotoneError(
      () => new TrimStage(fs, { maxSkewSamples: 2, trims: { skewSamples: 3 } }),
      'INVALID_ARGUMENT',
      /skewSamples/,
    );
  });

  it('accepts the edges of each range: 0 and odd correction lengths, 0 and 10 s ramps', () => {
    for (const m of [0, 1, 63, 255]) expect(() => new TrimStage(fs, { maxCorrectionTaps: m })).not.toThrow();
    for (const r of [0, 10]) expect(() => new TrimStage(fs, { rampSeconds: r })).not.toThrow();
    const o = validateTrimStageOptions({
      trims: {},
      sideband: 'lower',
      rampSeconds: 0,
      maxSkewSamples: 4,
      maxCorrectionTaps: 0,
      correction: null,
    });
    expect(o.sideband).toBe('lower');
  });
});

describe('trim stage at run time', () => {
  it('refuses a skew beyond its range and a correction when created without room, changing nothing', () => {
    const s = new TrimStage(fs, { maxSkewSamples: 2, maxCorrectionTaps: 0, rampSeconds: 0 });
    s.setTrims({ gainDb: 1 });
    expectOrthotoneError(
      () => s.setTrims({ skewSamples: 3, gainDb: 2 }),
      'INVALID_ARGUMENT',
      /skewSamples 3 exceeds maxSkewSamples 2: create the generator with a larger maxSkewSamples \(up to 16\)/,
    );
    expect(s.trims.gainDb).toBe(1);
    expectOrthotoneError(
      () => s.setCorrection({ qFromQ: [1], qFromI: [0] }),
      'INVALID_ARGUMENT',
      /maxCorrectionTaps 0: create it with an odd maxCorrectionTaps/,
    );
    expect(s.correction).toBeNull();
    expectOrthotoneError(
      () => s.setTrims({ gainDb: 0 }, { rampSeconds: 11 }),
      'INVALID_ARGUMENT',
      /rampSeconds/,
    );
    expectOrthotoneError(
      () => s.setSideband('lower', { rampSeconds: -1 }),
      'INVALID_ARGUMENT',
      /rampSeconds/,
    );
    expectOrthotoneError(() => s.setSideband('left' as never), 'INVALID_ARGUMENT', /sideband/);
    expect(s.sideband).toBe('upper');
  });

  it('a ramp override of 0 s applies at once; the default ramp runs its length in samples', () => {
    const s = new TrimStage(fs, { rampSeconds: 0.01, maxSkewSamples: 0, maxCorrectionTaps: 0 });
    expect(s.latencySamples).toBe(0);
    // DC trims reach the output unscaled (DESIGN.md §4 step 3).
    s.setTrims({ dcI: 0.25, dcQ: -0.125 }, { rampSeconds: 0 });
    expect(s.ramping).toBe(false);
    expect(run(s, 0, 0, 8)).toEqual([0.25, -0.125]);
    s.setTrims({ dcI: 0.5 });
    expect(s.ramping).toBe(true);
    expect(s.trims.dcI).toBe(0.5);
    run(s, 0, 0, 479); // 0.01 s at 48 kHz is 480 samples: one short
    expect(s.ramping).toBe(true);
    expect(run(s, 0, 0, 1)[0]).toBeCloseTo(0.5, 6);
    expect(s.ramping).toBe(false);
    // The sideband ramps like a trim, then negates Q (DESIGN.md §2).
    s.setSideband('lower', { rampSeconds: 0 });
    expect(s.sideband).toBe('lower');
    s.setTrims({ dcI: 0, dcQ: 0 }, { rampSeconds: 0 });
    expect(run(s, 0.5, 0.25, 8)).toEqual([0.5, -0.25]);
  });

  it('keeps a copy of the correction, and null removes it', () => {
    const s = new TrimStage(fs, { maxCorrectionTaps: 3, rampSeconds: 0 });
    const c = { qFromQ: [0, 1, 0], qFromI: [0, 0, 0] };
    s.setCorrection(c);
    c.qFromQ[1] = 5;
    expect(s.correction).toEqual({ qFromQ: [0, 1, 0], qFromI: [0, 0, 0] });
    expectOrthotoneError(
      () => s.setCorrection({ qFromQ: [0, 1, 0, 0, 0], qFromI: [0, 0, 0, 0, 0] }),
      'INVALID_ARGUMENT',
    );
    s.setCorrection(null);
    expect(s.correction).toBeNull();
  });

  it('clamps huge inputs to INPUT_LIMIT with their sign, counts them and the over-full-scale outputs, flushes tiny ones', () => {
    // The output limit (OUTPUT_LIMIT) sits far above anything a clamped input can reach through the
    // trims (+6 dB at most): it guards against a future path, so only the input clamp is reachable.
    expect(OUTPUT_LIMIT).toBeGreaterThan(INPUT_LIMIT * 2 * 16);
    const s = new TrimStage(fs, { rampSeconds: 0, maxSkewSamples: 0, maxCorrectionTaps: 0 });
    const [pi, pq] = run(s, 3e38, -3e38, 4);
    expect(pi).toBe(INPUT_LIMIT);
    expect(pq).toBe(-INPUT_LIMIT);
    expect(s.stats.clampedInputs).toBe(8);
    expect(s.stats.overFullScale).toBe(8);
    const [ti, tq] = run(s, 1e-38, -1e-38, 4);
    expect(ti === 0 && tq === 0).toBe(true);
    expect(s.stats.overFullScale).toBe(8);
  });

  it('refuses buffers of different lengths, naming all four', () => {
    const s = new TrimStage(fs);
    const a = new Float32Array(8);
    expectOrthotoneError(
      () => s.process(a, new Float32Array(7), a, a),
      'BUFFER_MISMATCH',
      /inI 8, inQ 7, outI 8, outQ 8/,
    );
  });
});
