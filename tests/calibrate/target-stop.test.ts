/**
 * The calibration's target stop (`targetDb`), through the public calibrateSideband/calibrateCarrier
 * API, so it holds whatever the seeker's inside looks like. The bench is a closed-form model written
 * here, sharing nothing with src:
 * - sideband: a modulator whose Q path has gain h and phase error ψ after the trims, I_hw = I',
 *   Q_hw = h·(Q'·cos ψ + I'·sin ψ), with Q' = g·(Q·cos φ + I·sin φ) (the trims of src/generate/trim-stage.ts). For
 *   I = cos ωt, Q = sin ωt the output is Q_hw = A·sin ωt + B·cos ωt, A = h·g·cos ψ·cos φ,
 *   B = h·(g·cos ψ·sin φ + sin ψ), and the image over the wanted tone is
 *   ((1 − A)² + B²)/((1 + A)² + B²) (K. Schmidt, QEX Aug 1994 §2, the IRR of a gain/phase pair);
 * - carrier: a DC offset (dI, dQ) on a complex tone of peak A reads |d|²/A² (K. Schmidt, QEX Aug 1994 §2).
 * A reading floor of −90 dB and seeded Gaussian reading noise (dB) are added.
 * The contract checked: a run that stops for the target has reached it, both by the fit it reports
 * and by the model's true level at the trims it returns; a target cuts the run short of the floor;
 * an unreachable target never stops the run.
 */
import { describe, expect, it } from 'vitest';
import { calibrateCarrier, calibrateSideband } from '../../src/calibrate/index.js';
import { createRng } from '../../src/core/rng.js';
import type { Trims } from '../../src/core/trims.js';

const deg = Math.PI / 180;
const FLOOR = 1e-9; // −90 dB

function sidebandBench(h: number, psi: number) {
  return (t: Trims): number => {
    const g = 10 ** (t.gainDb / 20);
    const phi = t.phaseDeg * deg;
    const a = h * g * Math.cos(psi) * Math.cos(phi);
    const b = h * (g * Math.cos(psi) * Math.sin(phi) + Math.sin(psi));
    return 10 * Math.log10(((1 - a) ** 2 + b * b) / ((1 + a) ** 2 + b * b) + FLOOR);
  };
}

function carrierBench(dI: number, dQ: number, amp: number) {
  return (t: Trims): number => 10 * Math.log10(((t.dcI + dI) ** 2 + (t.dcQ + dQ) ** 2) / (amp * amp) + FLOOR);
}

// Invented benches (gain and phase errors of a few tenths of a dB and degrees, DC of 1–3 % of full scale).
// Reading noise per bench: at 1.2 and 10° with 1.5 dB noise the seeker can use all 30 readings
// before the fit is sure of −40 dB (seed 1 ends on 'budget'), so that bench runs with 0.5 dB only.
const SIDEBAND: [number, number, number[]][] = [
  [10 ** (0.4 / 20), 2.5 * deg, [0.5, 1.5]],
  [10 ** (-0.2 / 20), -1.5 * deg, [0.5, 1.5]],
  [1.03, 4 * deg, [0.5, 1.5]],
  [1.2, 10 * deg, [0.5]],
];
const CARRIER: [number, number, number][] = [
  [0.01, -0.005, 0.5],
  [0.03, 0.02, 0.3],
];

describe('targetDb stops the calibration once the target is met, not before', () => {
  for (const [h, psi, noises] of SIDEBAND) {
    it(`sideband, h ${h.toFixed(3)}, ψ ${(psi / deg).toFixed(1)}°`, async () => {
      const bench = sidebandBench(h, psi);
      for (const noiseDb of noises) {
        for (const targetDb of [40, 55, 65]) {
          for (const seed of [1, 2]) {
            const rng = createRng(seed);
            const r = await calibrateSideband({
              measure: (t) => bench(t) + noiseDb * rng.normal(),
              noiseDb,
              targetDb,
              maxReadings: 30,
            });
            const where = `noise ${noiseDb} dB, target ${targetDb} dB, seed ${seed}`;
            expect(r.stopReason, where).toBe('target');
            expect(r.fit!.expectedTrueDb, where).toBeLessThanOrEqual(-targetDb);
            expect(bench(r.trims), where).toBeLessThanOrEqual(-targetDb);
          }
        }
      }
    });
  }
  for (const [dI, dQ, amp] of CARRIER) {
    it(`carrier, DC (${dI}, ${dQ}), tone ${amp}`, async () => {
      const bench = carrierBench(dI, dQ, amp);
      for (const noiseDb of [0.5, 1.5]) {
        for (const targetDb of [40, 55, 65]) {
          for (const toneAmplitude of [undefined, amp]) {
            const rng = createRng(4);
            const r = await calibrateCarrier({
              measure: (t) => bench(t) + noiseDb * rng.normal(),
              noiseDb,
              targetDb,
              maxReadings: 30,
              ...(toneAmplitude === undefined ? {} : { toneAmplitude }),
            });
            const where = `noise ${noiseDb} dB, target ${targetDb} dB, toneAmplitude ${toneAmplitude}`;
            expect(r.stopReason, where).toBe('target');
            expect(r.fit!.expectedTrueDb, where).toBeLessThanOrEqual(-targetDb);
            expect(bench(r.trims), where).toBeLessThanOrEqual(-targetDb);
          }
        }
      }
    });
  }
  it('a modest target ends the run in fewer readings than seeking the floor; an unreachable one never stops it', async () => {
    const bench = sidebandBench(1.03, 4 * deg);
    const run = (targetDb: number | undefined) => {
      const rng = createRng(7);
      return calibrateSideband({
        measure: (t) => bench(t) + 0.5 * rng.normal(),
        noiseDb: 0.5,
        maxReadings: 30,
        ...(targetDb === undefined ? {} : { targetDb }),
      });
    };
    const free = await run(undefined);
    const modest = await run(35);
    const unreachable = await run(200);
    expect(free.stopReason).not.toBe('target');
    expect(modest.stopReason).toBe('target');
    expect(modest.readings).toBeLessThan(free.readings);
    expect(unreachable.stopReason).not.toBe('target');
    expect(unreachable.readings).toBeGreaterThanOrEqual(free.readings);
  });
});
