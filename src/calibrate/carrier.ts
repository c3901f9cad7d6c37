/**
 * Carrier calibration: nulls the carrier leak with the DC trims, which are added last so they never
 * scale (DESIGN.md §4). With a complex tone of peak amplitude A and DC (dI, dQ), the carrier
 * relative to the tone is `|d − d*|²/A²` (docs/REFERENCES.md §1): a bowl in (dcI, dcQ) of curvature 1/A².
 * Callers often do not know A, so unless `toneAmplitude` is given the curvature is estimated from
 * the readings (the first probes are sized for the largest possible tone, A = 1 full scale).
 */
import type { Trims } from '../core/trims.js';
import { requireRange } from '../core/validate.js';
import {
  type HardwareTrimOptions,
  runTrimCalibration,
  snapToStep,
  type TrimAxes,
  type TrimCalibrationOptions,
  type TrimCalibrationResult,
} from './trim-calibration.js';

/** Options of {@link calibrateCarrier}: the shared ones plus the tone amplitude when known. */
export interface CarrierCalibrationOptions extends TrimCalibrationOptions {
  /** Peak amplitude of the tone (full scale = 1), when known: fixes the bowl's curvature. */
  toneAmplitude?: number;
}

/**
 * Axes of the carrier calibration for a given curvature model and, optionally, hardware DC steps
 * and bounds (full-scale units: the seeker's own coordinates). `toneAmplitude` is the tone's peak in
 * full-scale units (curvature 1/A², docs/REFERENCES.md §1); without it the curvature is left to the fit.
 * @throws never: nothing is validated here ({@link calibrateCarrier} checks `toneAmplitude`; the
 *   seeker checks steps and bounds when it is created).
 */
export function carrierAxes(toneAmplitude?: number, hw: HardwareTrimOptions = {}): TrimAxes {
  const known = toneAmplitude !== undefined;
  const si = hw.steps?.dcI ?? 0;
  const sq = hw.steps?.dcQ ?? 0;
  const bounds: [[number, number], [number, number]] = [
    hw.bounds?.dcI ?? [-0.5, 0.5],
    hw.bounds?.dcQ ?? [-0.5, 0.5],
  ];
  return {
    quantity: 'carrier',
    names: ['dcI', 'dcQ'],
    toPoint: (t: Trims) => [t.dcI, t.dcQ],
    toTrims: (p: readonly [number, number], base: Trims) => ({
      ...base,
      dcI: snapToStep(p[0], si),
      dcQ: snapToStep(p[1], sq),
    }),
    seeker: {
      model: known ? 'known-curvature' : 'isotropic',
      curvature: known ? 1 / (toneAmplitude * toneAmplitude) : 1,
      curvatureSpread: 0.1,
      bounds,
      step: [si, sq],
      maxStep: [
        Math.min(0.1, (bounds[0][1] - bounds[0][0]) / 2),
        Math.min(0.1, (bounds[1][1] - bounds[1][0]) / 2),
      ],
    },
  };
}

/**
 * Calibrates the DC trims for the deepest carrier null, from level readings.
 * @param options as {@link calibrateSideband}, `measure(trims)` returning the carrier in dBc; plus
 *   `toneAmplitude` (peak, full scale 1) when known; hardware `steps` and `bounds` of dcI and dcQ
 *   in full-scale units.
 * @returns as {@link calibrateSideband}; `diagnosis` holds TRIM_INACTIVE when DC does not reach
 *   the output (AC coupling).
 * @throws {OrthotoneError} INVALID_ARGUMENT for bad options.
 * @example
 * ```ts
 * import { calibrateCarrier, createAnalyzer, createVirtualExciter, homebrewBenchDevice } from 'orthotone';
 *
 * // An invented bench: a virtual hand-built exciter read by a simulated analyzer (on a real bench,
 * // `measure` sets the trims on the exciter and reads a receiver or a spectrum analyzer).
 * const exciter = createVirtualExciter(homebrewBenchDevice(), { sampleRate: 48000, seed: 1 });
 * const analyzer = createAnalyzer(exciter, { seed: 2, noiseDb: 0.2 });
 * // A half-scale tone (peak 0.5): the carrier is read relative to it.
 * const r = await calibrateCarrier({ measure: (t) => analyzer.readCarrier(1000, t, 0.5), toneAmplitude: 0.5, maxReadings: 40 });
 * console.log(`carrier ${r.startLevelDb.toFixed(1)} -> ${r.levelDb.toFixed(1)} dBc, dcI ${r.trims.dcI.toFixed(5)}, dcQ ${r.trims.dcQ.toFixed(5)}`);
 * ```
 */
export async function calibrateCarrier(options: CarrierCalibrationOptions): Promise<TrimCalibrationResult> {
  if (options.toneAmplitude !== undefined) requireRange('toneAmplitude', options.toneAmplitude, 1e-6, 4);
  return runTrimCalibration(options, carrierAxes(options.toneAmplitude, options));
}
