/**
 * Trims that do not act as their nominal units say: an analog potentiometer or a firmware step whose
 * dB or degrees per unit are known only roughly, trims that disturb each other, and a phase that
 * drifts while the calibration reads. {@link applyTrimMismatch} turns the trims a calibration asks
 * for into the trims that actually act on the virtual exciter. It is the rehearsal bench for
 * seekers that must tell from the readings which bench they are on (issue 9's mismatch bench).
 * Model (first order, common practice, no source): gain and phase trims scaled and coupled by a 2×2
 * matrix, DC trims scaled per channel and rotated, a phase offset growing by a fixed amount per
 * reading.
 */
import { OrthotoneError } from '../core/errors.js';
import { TRIM_LIMITS } from '../core/trims.js';
/** The ranges of issue 9's mismatch bench. */
export const MISMATCH_BENCH_RANGES = Object.freeze({
  gainScale: [0.65, 1.45],
  phaseScale: [0.65, 1.45],
  phaseToGainDbPerDeg: 0.03,
  gainToPhaseDegPerDb: 0.4,
  dcScale: [0.7, 1.4],
  dcRotationRad: 0.15,
  phaseDriftDegPerReading: 0.004,
});
/** Trims that act exactly as their units say. */
export const EXACT_TRIMS = Object.freeze({
  gainScale: 1,
  phaseScale: 1,
  phaseToGainDbPerDeg: 0,
  gainToPhaseDegPerDb: 0,
  dcScale: [1, 1],
  dcRotationRad: 0,
  phaseDriftDegPerReading: 0,
});
/**
 * Draws a trim mismatch uniformly from `ranges`.
 * @param rng seeded generator (createRng).
 * @param ranges default {@link MISMATCH_BENCH_RANGES}.
 * @throws {OrthotoneError} INVALID_ARGUMENT for a range that is not finite or not written [lo, hi].
 */
export function drawTrimMismatch(rng, ranges = MISMATCH_BENCH_RANGES) {
  const span = (name, r) => {
    if (!(Number.isFinite(r[0]) && Number.isFinite(r[1]) && r[0] <= r[1])) {
      throw new OrthotoneError('INVALID_ARGUMENT', `${name} [${r[0]}, ${r[1]}] must be written [lo, hi]`, r);
    }
    return r[0] + (r[1] - r[0]) * rng.uniform();
  };
  const sym = (name, x) => span(name, [-Math.abs(x), Math.abs(x)]);
  return {
    gainScale: span('gainScale', ranges.gainScale),
    phaseScale: span('phaseScale', ranges.phaseScale),
    phaseToGainDbPerDeg: sym('phaseToGainDbPerDeg', ranges.phaseToGainDbPerDeg),
    gainToPhaseDegPerDb: sym('gainToPhaseDegPerDb', ranges.gainToPhaseDegPerDb),
    dcScale: [span('dcScale', ranges.dcScale), span('dcScale', ranges.dcScale)],
    dcRotationRad: sym('dcRotationRad', ranges.dcRotationRad),
    phaseDriftDegPerReading: sym('phaseDriftDegPerReading', ranges.phaseDriftDegPerReading),
  };
}
/**
 * The trims that act when `trims` are asked for, after `readings` readings (the drift so far).
 * @param m the mismatch.
 * @param trims nominal trims (DESIGN.md §4 units).
 * @param readings readings taken so far (drift multiplier).
 * @returns the acting trims, each held within the trim limits (a real trim saturates).
 * @throws never
 */
export function applyTrimMismatch(m, trims, readings = 0) {
  const g = trims.gainDb ?? 0;
  const p = trims.phaseDeg ?? 0;
  const i = (trims.dcI ?? 0) * m.dcScale[0];
  const q = (trims.dcQ ?? 0) * m.dcScale[1];
  const c = Math.cos(m.dcRotationRad);
  const s = Math.sin(m.dcRotationRad);
  // A real trim saturates at the end of its range.
  const clip = (x, lim) => Math.max(-lim, Math.min(lim, x));
  return {
    gainDb: clip(m.gainScale * g + m.phaseToGainDbPerDeg * p, TRIM_LIMITS.gainDb),
    phaseDeg: clip(
      m.phaseScale * p + m.gainToPhaseDegPerDb * g + m.phaseDriftDegPerReading * readings,
      TRIM_LIMITS.phaseDeg,
    ),
    skewSamples: trims.skewSamples ?? 0,
    dcI: clip(c * i - s * q, TRIM_LIMITS.dc),
    dcQ: clip(s * i + c * q, TRIM_LIMITS.dc),
  };
}
