/**
 * Opposite-sideband calibration: nulls the unwanted sideband with the gain and phase trims.
 *
 * Coordinates: the gain and phase trim make `Q' = G·cos φ·Q + G·sin φ·I` (DESIGN.md §4), so the
 * seeker works in `u = G·cos φ − 1`, `v = G·sin φ`, in which the unwanted-sideband amplitude is
 * exactly affine; to first order u = 10^(gainDb/20) − 1 and v = φ in radians (the natural units
 * of DESIGN.md §6). The image power relative to the wanted tone is then
 * `P ≈ ¼·[(u − u*)² + (v − v*)²] + N`: a bowl of known curvature ¼.
 * Reference: K. Schmidt, "Phase-Shift Network Analysis and Optimization", QEX Aug 1994, §2
 * (IRR ≈ 4/(ε² + φ²) for small errors).
 */
import type { Trims } from '../core/trims.js';
import { degToRad, radToDeg } from '../core/units.js';
import {
  type HardwareTrimOptions,
  runTrimCalibration,
  snapToStep,
  type TrimAxes,
  type TrimCalibrationOptions,
  type TrimCalibrationResult,
} from './trim-calibration.js';

/** Curvature of the sideband bowl in (u, v): image/wanted power per squared unit. */
export const SIDEBAND_CURVATURE = 0.25;

/**
 * Gain and phase trims (dB, degrees) to the sideband seeker's coordinates (u, v) = (G·cos φ − 1,
 * G·sin φ), dimensionless (see the file header; K. Schmidt, QEX Aug 1994 §2).
 * @throws never
 */
export function sidebandPoint(t: Pick<Trims, 'gainDb' | 'phaseDeg'>): [number, number] {
  const g = 10 ** (t.gainDb / 20);
  const p = degToRad(t.phaseDeg);
  return [g * Math.cos(p) - 1, g * Math.sin(p)];
}

/**
 * The sideband seeker's coordinates (u, v) back to trims (gainDb in dB, phaseDeg in degrees), other
 * trims taken from `base`. Inverse of {@link sidebandPoint}.
 * @throws never
 */
export function sidebandTrims(p: readonly [number, number], base: Trims): Trims {
  const g = Math.hypot(1 + p[0], p[1]);
  return { ...base, gainDb: 20 * Math.log10(g), phaseDeg: radToDeg(Math.atan2(p[1], 1 + p[0])) };
}

/** Axes of the sideband calibration. */
export const SIDEBAND_AXES: TrimAxes = Object.freeze({
  quantity: 'sideband' as const,
  names: ['gain', 'phase'] as [string, string],
  toPoint: (t: Trims) => sidebandPoint(t),
  toTrims: sidebandTrims,
  seeker: {
    model: 'known-curvature' as const,
    curvature: SIDEBAND_CURVATURE,
    // (u, v) box inside the trim limits: gain −5.2…+5.7 dB, phase within ±42°.
    bounds: [
      [-0.45, 0.85],
      [-0.5, 0.5],
    ] as [[number, number], [number, number]],
    maxStep: [0.3, 0.3] as [number, number],
  },
});

const NEPER_PER_DB = Math.LN10 / 20;

/**
 * Axes of the sideband calibration for the given hardware steps and bounds. Without either, the
 * exact affine coordinates (u, v) of {@link SIDEBAND_AXES}. With them, the log-polar coordinates
 * `x = ln G = gainDb·ln10/20`, `y = φ` (radians): equal to (u, v) to first order at the null (so the
 * bowl keeps its curvature ¼ there, to within the gain factor G², inside the curvature spread), and
 * a grid of dB and degree steps is a grid of the seeker's own axes. Steps and bounds are in dB
 * (gain) and degrees (phase).
 * @throws never: steps and bounds are checked by the seeker when it is created.
 */
export function sidebandAxes(hw: HardwareTrimOptions = {}): TrimAxes {
  const sg = hw.steps?.gainDb ?? 0;
  const sp = hw.steps?.phaseDeg ?? 0;
  const bg = hw.bounds?.gainDb;
  const bp = hw.bounds?.phaseDeg;
  if (!sg && !sp && !bg && !bp) return SIDEBAND_AXES;
  const gb: [number, number] = bg ?? [-5, 5];
  const pb: [number, number] = bp ?? [-40, 40];
  const bounds: [[number, number], [number, number]] = [
    [gb[0] * NEPER_PER_DB, gb[1] * NEPER_PER_DB],
    [degToRad(pb[0]), degToRad(pb[1])],
  ];
  return {
    quantity: 'sideband',
    names: ['gain', 'phase'],
    toPoint: (t: Trims) => [t.gainDb * NEPER_PER_DB, degToRad(t.phaseDeg)],
    toTrims: (p: readonly [number, number], base: Trims) => ({
      ...base,
      gainDb: snapToStep(p[0] / NEPER_PER_DB, sg),
      phaseDeg: snapToStep(radToDeg(p[1]), sp),
    }),
    seeker: {
      model: 'known-curvature',
      curvature: SIDEBAND_CURVATURE,
      bounds,
      step: [sg * NEPER_PER_DB, degToRad(sp)],
      maxStep: [
        Math.min(0.3, (bounds[0][1] - bounds[0][0]) / 2),
        Math.min(0.3, (bounds[1][1] - bounds[1][0]) / 2),
      ],
    },
  };
}

/**
 * Calibrates the gain and phase trims for the deepest opposite-sideband null, from level readings.
 * @param options `measure(trims)` returns the unwanted sideband in dBc (any repeatable dB scale
 *   works if `model: 'isotropic'` is chosen; the known curvature ¼ assumes dBc); `start`,
 *   `noiseDb` (0.5), `targetDb`, `maxReadings` (16), `signal`, `onReading`, `floorDb`, `resume`;
 *   for hardware trims, `steps` (`{ gainDb: 0.05, phaseDeg: 0.1 }`: every setting and the result
 *   lie on that grid) and `bounds` (`{ gainDb: [-1, 1] }`), in dB and degrees.
 * @returns the best trims (always finite), the level there, readings used, history, stop reason,
 *   diagnosis and a state to resume from.
 * @throws {OrthotoneError} INVALID_ARGUMENT for bad options (never for a failed reading or an
 *   abort: those end the run with `stopReason` `measurement-failed` or `aborted`).
 * @example
 * ```ts
 * import { calibrateSideband, createAnalyzer, createVirtualExciter, homebrewBenchDevice } from 'orthotone';
 *
 * // An invented bench: a virtual hand-built exciter read by a simulated analyzer (on a real bench,
 * // `measure` sets the trims on the exciter and reads a receiver or a spectrum analyzer).
 * const exciter = createVirtualExciter(homebrewBenchDevice(), { sampleRate: 48000, seed: 1 });
 * const analyzer = createAnalyzer(exciter, { seed: 2, noiseDb: 0.2 });
 * const r = await calibrateSideband({ measure: (t) => analyzer.readSideband(1000, t), maxReadings: 40 });
 * console.log(`unwanted sideband ${r.startLevelDb.toFixed(1)} -> ${r.levelDb.toFixed(1)} dBc in ${r.readings} readings`);
 * // then run the generator with r.trims (gainDb, phaseDeg)
 * ```
 */
export function calibrateSideband(options: TrimCalibrationOptions): Promise<TrimCalibrationResult> {
  return runTrimCalibration(options, sidebandAxes(options ?? {}));
}
