import { requireRange } from '../core/validate.js';
import { runTrimCalibration, snapToStep } from './trim-calibration.js';
/**
 * Axes of the carrier calibration for a given curvature model and, optionally, hardware DC steps
 * and bounds (full-scale units: the seeker's own coordinates). `toneAmplitude` is the tone's peak in
 * full-scale units (curvature 1/A², REFERENCES.md §1); without it the curvature is left to the fit.
 * @throws never: nothing is validated here ({@link calibrateCarrier} checks `toneAmplitude`; the
 *   seeker checks steps and bounds when it is created).
 */
export function carrierAxes(toneAmplitude, hw = {}) {
  const known = toneAmplitude !== undefined;
  const si = hw.steps?.dcI ?? 0;
  const sq = hw.steps?.dcQ ?? 0;
  const bounds = [hw.bounds?.dcI ?? [-0.5, 0.5], hw.bounds?.dcQ ?? [-0.5, 0.5]];
  return {
    quantity: 'carrier',
    names: ['dcI', 'dcQ'],
    toPoint: (t) => [t.dcI, t.dcQ],
    toTrims: (p, base) => ({
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
 */
export async function calibrateCarrier(options) {
  if (options.toneAmplitude !== undefined) requireRange('toneAmplitude', options.toneAmplitude, 1e-6, 4);
  return runTrimCalibration(options, carrierAxes(options.toneAmplitude, options));
}
