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
import type { Rng } from '../core/rng.js';
import { TRIM_LIMITS, type Trims } from '../core/trims.js';

/** How the real trims differ from their nominal units. */
export interface TrimMismatch {
  /** Real gain change per nominal dB of the gain trim (1 = exact). */
  gainScale: number;
  /** Real phase change per nominal degree of the phase trim. */
  phaseScale: number;
  /** Gain change per degree of the phase trim, dB/°. */
  phaseToGainDbPerDeg: number;
  /** Phase change per dB of the gain trim, °/dB. */
  gainToPhaseDegPerDb: number;
  /** Real DC per nominal unit on I and Q. */
  dcScale: [number, number];
  /** Rotation of the DC trims in the I/Q plane, radians. */
  dcRotationRad: number;
  /** Phase drift per reading, degrees. */
  phaseDriftDegPerReading: number;
}

/** Ranges a {@link TrimMismatch} is drawn from (uniform). */
export interface TrimMismatchRanges {
  gainScale: [number, number];
  phaseScale: [number, number];
  /** Largest |phase→gain| leak, dB/°. */
  phaseToGainDbPerDeg: number;
  /** Largest |gain→phase| leak, °/dB. */
  gainToPhaseDegPerDb: number;
  dcScale: [number, number];
  /** Largest |rotation| of the DC trims, radians. */
  dcRotationRad: number;
  /** Largest |drift|, degrees per reading. */
  phaseDriftDegPerReading: number;
}

/** The ranges of issue 9's mismatch bench. */
export const MISMATCH_BENCH_RANGES: Readonly<TrimMismatchRanges> = Object.freeze({
  gainScale: [0.65, 1.45] as [number, number],
  phaseScale: [0.65, 1.45] as [number, number],
  phaseToGainDbPerDeg: 0.03,
  gainToPhaseDegPerDb: 0.4,
  dcScale: [0.7, 1.4] as [number, number],
  dcRotationRad: 0.15,
  phaseDriftDegPerReading: 0.004,
});

/** Trims that act exactly as their units say. */
export const EXACT_TRIMS: Readonly<TrimMismatch> = Object.freeze({
  gainScale: 1,
  phaseScale: 1,
  phaseToGainDbPerDeg: 0,
  gainToPhaseDegPerDb: 0,
  dcScale: [1, 1] as [number, number],
  dcRotationRad: 0,
  phaseDriftDegPerReading: 0,
});

/**
 * Draws a trim mismatch uniformly from `ranges`.
 * @param rng seeded generator (createRng).
 * @param ranges default {@link MISMATCH_BENCH_RANGES}.
 * @throws {OrthotoneError} INVALID_ARGUMENT for a range that is not finite or not written [lo, hi].
 */
export function drawTrimMismatch(rng: Rng, ranges: TrimMismatchRanges = MISMATCH_BENCH_RANGES): TrimMismatch {
  const span = (name: string, r: [number, number]): number => {
    if (!(Number.isFinite(r[0]) && Number.isFinite(r[1]) && r[0] <= r[1])) {
      throw new OrthotoneError('INVALID_ARGUMENT', `${name} [${r[0]}, ${r[1]}] must be written [lo, hi]`, r);
    }
    return r[0] + (r[1] - r[0]) * rng.uniform();
  };
  const sym = (name: string, x: number): number => span(name, [-Math.abs(x), Math.abs(x)]);
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
export function applyTrimMismatch(m: TrimMismatch, trims: Partial<Trims>, readings = 0): Trims {
  const g = trims.gainDb ?? 0;
  const p = trims.phaseDeg ?? 0;
  const i = (trims.dcI ?? 0) * m.dcScale[0];
  const q = (trims.dcQ ?? 0) * m.dcScale[1];
  const c = Math.cos(m.dcRotationRad);
  const s = Math.sin(m.dcRotationRad);
  // A real trim saturates at the end of its range.
  const clip = (x: number, lim: number): number => Math.max(-lim, Math.min(lim, x));
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
