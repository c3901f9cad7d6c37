/**
 * What the sideband and carrier calibrations share: options, result and history types, the mapping
 * between a pair of trims and the seeker's natural coordinates, and the run itself.
 */
import { OrthotoneError } from '../core/errors.js';
import { TRIM_LIMITS, type Trims, validateTrims, ZERO_TRIMS } from '../core/trims.js';
import { requireFinite, requireInteger, requirePositive } from '../core/validate.js';
import { type Diagnosis, diagnoseSeeker } from './diagnosis.js';
import {
  createNullSeeker,
  type NullSeeker,
  type NullSeekerOptions,
  type NullSeekerState,
  type ReadingRole,
  restoreNullSeeker,
  type SeekerModel,
  type StopReason,
} from './null-seeker.js';
import { functionSource, runSession, type SavedSeeker, type Seeker, type SessionStep } from './session.js';

/** One step of a calibration, as reported to `onReading` and kept in `history`. */
export interface CalibrationStep {
  /** 1-based reading number. */
  index: number;
  /** The trims the reading was taken with. */
  trims: Trims;
  /** The level read, dB (NaN when the reading failed). */
  levelDb: number;
  /** Why the setting was read: the start, a probe, or a jump to the fitted null. */
  role: ReadingRole;
  /** The best trims known after this reading. */
  bestTrims: Trims;
  /** The level at the best trims (fitted, or read), dB. */
  bestLevelDb: number;
  /** The error thrown by `measure`, when the reading failed. */
  error?: unknown;
}

/** The four trims a calibration moves. */
export type TrimName = 'gainDb' | 'phaseDeg' | 'dcI' | 'dcQ';

/**
 * Trims that act through hardware with quantised steps (a digital potentiometer, a DAC code):
 * every setting the calibration proposes, and the result, lies on the grid `k·step` of each trim,
 * in the trims' own units (dB, degrees, full scale).
 */
export interface HardwareTrimOptions {
  /** Step of each trim in its own units: gainDb in dB, phaseDeg in degrees, dcI/dcQ in full scale; 0 = continuous. */
  steps?: Partial<Record<TrimName, number>>;
  /** Allowed range [lo, hi] of each trim in its own units (within the trim limits). */
  bounds?: Partial<Record<TrimName, [number, number]>>;
}

/** Options shared by {@link calibrateSideband} and {@link calibrateCarrier} (DESIGN.md §5). */
export interface TrimCalibrationOptions extends HardwareTrimOptions {
  /** Reads the level with the given trims applied, dB (dBc preferred). May be async. */
  measure: (trims: Trims) => number | Promise<number>;
  /** Trims to begin from (default all zero); the trims not calibrated are passed through. */
  start?: Partial<Trims>;
  /** Standard deviation of one reading, dB. Default 0.5. */
  noiseDb?: number;
  /** Stop once the fit puts the level below −targetDb dB. Default: none (seek to the floor). */
  targetDb?: number;
  /** Hard budget: `measure` is never called more often. Default 16. */
  maxReadings?: number;
  /** Stops the run; the result then has `stopReason: 'aborted'` and the best trims so far. */
  signal?: AbortSignal;
  /** Called after every reading. */
  onReading?: (step: CalibrationStep) => void;
  /** The measurement floor, dB, when known (otherwise estimated from the readings). */
  floorDb?: number;
  /** Bowl model: default per quantity; `quadratic` when the trims act through hardware. */
  model?: SeekerModel;
  /** Down-weight outlying readings. Default true. */
  robust?: boolean;
  /** A state saved from an earlier, interrupted run (`result.state`): its readings are reused. */
  resume?: NullSeekerState;
}

/** Result of a trim calibration. */
export interface TrimCalibrationResult {
  /** The best trims found (always finite; the start when nothing better was found). */
  trims: Trims;
  /** Level at `trims`: the fit's prediction (floor included) or the reading there, dB. */
  levelDb: number;
  /** The level read at the start, dB. */
  startLevelDb: number;
  /** Number of `measure` calls (failed ones included), resumed readings included. */
  readings: number;
  history: CalibrationStep[];
  stopReason: StopReason;
  /** Findings about the trims and readings (TRIM_INACTIVE, CROSS_COUPLED, …). */
  diagnosis: Diagnosis[];
  /** Everything needed to resume this run later. */
  state: NullSeekerState;
  /** The fit at the end, when there was one. */
  fit?: {
    /** Fitted floor, dB. */
    floorDb: number;
    /** Level at the null from its remaining uncertainty alone (floor excluded), dB. */
    expectedTrueDb: number;
    /** Weighted RMS residual of the readings about the fit, dB. */
    rmsDb: number;
    /** Fitted curvature c (power ratio per squared natural unit). */
    curvature: number;
  };
  /** The last measurement error, when readings failed. */
  error?: unknown;
}

/** How a calibration maps its two trims to the seeker's natural coordinates. */
export interface TrimAxes {
  quantity: 'sideband' | 'carrier';
  names: [string, string];
  toPoint(t: Trims): [number, number];
  toTrims(p: readonly [number, number], base: Trims): Trims;
  seeker: Partial<NullSeekerOptions>;
}

/**
 * Validates shared options and merges start trims over zero.
 * @throws {OrthotoneError} INVALID_ARGUMENT for a bad option.
 */
export function resolveTrimOptions(o: TrimCalibrationOptions): {
  start: Trims;
  noiseDb: number;
  maxReadings: number;
} {
  if (!o || typeof o.measure !== 'function') {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      'measure must be a function (trims) => level in dB: pass the function that reads your analyzer',
    );
  }
  const start: Trims = { ...ZERO_TRIMS, ...validateTrims(o.start ?? {}) };
  validateHardware(o, start);
  const noiseDb = o.noiseDb === undefined ? 0.5 : requirePositive('noiseDb', o.noiseDb, 'dB');
  const maxReadings =
    o.maxReadings === undefined ? 16 : requireInteger('maxReadings', o.maxReadings, 1, 10_000);
  if (o.targetDb !== undefined) requireFinite('targetDb', o.targetDb, 'give a suppression in dB, e.g. 60');
  if (o.floorDb !== undefined) requireFinite('floorDb', o.floorDb, 'give the floor in dB, e.g. -70');
  return { start, noiseDb, maxReadings };
}

const LIMITS: Record<TrimName, number> = {
  gainDb: TRIM_LIMITS.gainDb,
  phaseDeg: TRIM_LIMITS.phaseDeg,
  dcI: TRIM_LIMITS.dc,
  dcQ: TRIM_LIMITS.dc,
};

/**
 * Validates hardware steps and bounds against the trim limits and the start.
 * @throws {OrthotoneError} INVALID_ARGUMENT naming the trim, the value and the fix.
 */
export function validateHardware(o: HardwareTrimOptions, start: Trims): void {
  for (const [k, v] of Object.entries(o.steps ?? {})) {
    if (!(k in LIMITS)) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        `steps.${k} is not a trim: use gainDb, phaseDeg, dcI or dcQ`,
      );
    }
    if (v === undefined) continue;
    if (!(Number.isFinite(v) && v >= 0 && v < LIMITS[k as TrimName])) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        `steps.${k} ${v} must be a step ≥ 0 (0 = continuous) below ${LIMITS[k as TrimName]}, in the trim's own units`,
        v,
      );
    }
  }
  for (const [k, b] of Object.entries(o.bounds ?? {})) {
    if (!(k in LIMITS)) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        `bounds.${k} is not a trim: use gainDb, phaseDeg, dcI or dcQ`,
      );
    }
    if (b === undefined) continue;
    const lim = LIMITS[k as TrimName];
    if (
      !Array.isArray(b) ||
      b.length !== 2 ||
      !b.every(Number.isFinite) ||
      !(b[0] < b[1]) ||
      b[0] < -lim ||
      b[1] > lim
    ) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        `bounds.${k} ${JSON.stringify(b).replace(',', ', ')} must be written [lo, hi] with lo < hi, within ±${lim}`,
        b,
      );
    }
    const x = start[k as TrimName];
    if (x < b[0] || x > b[1]) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        `start ${k} ${x} lies outside bounds.${k} [${b[0]}, ${b[1]}]: start inside the range`,
        x,
      );
    }
  }
}

/**
 * `x` snapped to the grid of `step` (no change for step 0 or undefined): removes the rounding of unit
 * changes. `x` and `step` share a unit (dB, degrees, full scale).
 * @throws never
 */
export function snapToStep(x: number, step: number | undefined): number {
  if (!step) return x;
  const k = Math.round(x / step);
  // Multiply, then round to the step's own decimals, so 3 × 0.1 reads 0.3.
  const decimals = Math.max(0, Math.min(15, Math.ceil(-Math.log10(step)) + 6));
  return Number((k * step).toFixed(decimals));
}

/**
 * Creates (or resumes) the seeker for a calibration.
 * @throws {OrthotoneError} INVALID_ARGUMENT for a bad option (from {@link resolveTrimOptions} or the
 *   seeker), INVALID_DOCUMENT when `resume` is not a saved seeker state.
 */
export function seekerFor(o: TrimCalibrationOptions, axes: TrimAxes): { seeker: NullSeeker; start: Trims } {
  const { start, noiseDb, maxReadings } = resolveTrimOptions(o);
  const opts: Partial<NullSeekerOptions> = {
    ...axes.seeker,
    start: axes.toPoint(start),
    noiseDb,
    maxReadings,
    targetDb: o.targetDb,
    floorDb: o.floorDb,
    axisNames: axes.names,
    ...(o.model ? { model: o.model } : {}),
    ...(o.robust !== undefined ? { robust: o.robust } : {}),
  };
  if (o.resume) {
    const seeker = restoreNullSeeker({ ...o.resume, options: { ...o.resume.options, maxReadings } });
    return { seeker, start: axes.toTrims(seeker.options.start, start) };
  }
  return { seeker: createNullSeeker(opts), start };
}

/**
 * Builds the result of a finished seeker; trims fall back to `start` when the best point maps to a
 * non-finite trim.
 * @throws never
 */
export function resultOf(
  seeker: NullSeeker,
  axes: TrimAxes,
  start: Trims,
  history: CalibrationStep[],
  error: unknown,
): TrimCalibrationResult {
  const best = seeker.best();
  const e = seeker.estimate();
  const first = seeker.readings().find((r) => Number.isFinite(r.db));
  // The start exactly (no round trip through the coordinates) when nothing beat it.
  const trims = best.source === 'start' ? { ...start } : axes.toTrims(best.point, start);
  const finite = Object.values(trims).every(Number.isFinite);
  return {
    trims: finite ? trims : { ...start },
    levelDb: best.levelDb,
    startLevelDb: first ? first.db : Number.NaN,
    readings: seeker.count,
    history,
    stopReason: seeker.stopReason ?? 'budget',
    diagnosis: diagnoseSeeker(seeker, { quantity: axes.quantity, relativeToWanted: true }),
    state: seeker.save(),
    ...(e
      ? {
          fit: {
            floorDb: e.floorDb,
            expectedTrueDb: e.expectedTrueDb,
            rmsDb: e.rmsDb,
            curvature: Math.exp(e.surface.logC),
          },
        }
      : {}),
    ...(error !== undefined ? { error } : {}),
  };
}

/**
 * The one-null seeker in trims: a {@link NullSeeker} (natural coordinates) seen through a calibration's
 * axes, implementing the session {@link Seeker} interface. Trims the seeker does not move are taken
 * from `start`; a reading is told at the trims that were in force (mapped back to coordinates).
 * @param seeker the ask/tell core in natural coordinates.
 * @param axes the mapping between trims and coordinates.
 * @param start the trims the run began from.
 * @throws never
 */
export function createTrimSeeker(
  seeker: NullSeeker,
  axes: TrimAxes,
  start: Trims,
): Seeker<number> & { readonly core: NullSeeker; readonly axes: TrimAxes; readonly start: Trims } {
  let inner = seeker;
  const self = {
    get core() {
      return inner;
    },
    axes,
    start,
    next() {
      const p = inner.next();
      return p ? axes.toTrims(p, start) : undefined;
    },
    tell(trims: Trims, db: number | undefined) {
      inner.tell(axes.toPoint({ ...start, ...trims }), db === undefined ? Number.NaN : db);
    },
    undo() {
      inner.undo();
    },
    best() {
      const b = inner.best();
      return { trims: b.source === 'start' ? { ...start } : axes.toTrims(b.point, start), levels: b.levelDb };
    },
    save(): SavedSeeker {
      const st = inner.save();
      return {
        format: 'orthotone-seeker-session',
        version: 1,
        kind: 'null',
        quantity: axes.quantity,
        start,
        readings: st.readings.map((r) => ({ trims: axes.toTrims(r.point, start), levels: r.db })),
        seeker: st,
      };
    },
    restore(state: unknown) {
      const s = state as SavedSeeker;
      if (s?.format !== 'orthotone-seeker-session' || s.kind !== 'null' || s.quantity !== axes.quantity) {
        throw new OrthotoneError(
          'INVALID_DOCUMENT',
          `saved session is not a ${axes.quantity} null: resume it with the calibration that saved it`,
        );
      }
      inner = restoreNullSeeker(s.seeker);
    },
    stop(reason: StopReason) {
      inner.stop(reason);
    },
    get done() {
      return inner.done;
    },
    get stopReason() {
      return inner.stopReason;
    },
    get count() {
      return inner.count;
    },
  };
  return self;
}

/**
 * A session history as the calibration history (levels, roles and best trims per reading).
 * @throws never
 */
export function stepsOf(seeker: NullSeeker, history: readonly SessionStep<number>[]): CalibrationStep[] {
  const rs = seeker.readings();
  return history.map((h, i) => ({
    index: h.index,
    trims: h.trims,
    levelDb: h.levels ?? Number.NaN,
    role: rs[i]?.role ?? 'probe',
    bestTrims: h.best.trims,
    bestLevelDb: h.best.levels,
    ...(h.error !== undefined ? { error: h.error } : {}),
  }));
}

/**
 * Runs a two-trim calibration end to end (the fitting method of DESIGN.md §6): a {@link createTrimSeeker}
 * driven by {@link runSession} over `o.measure`.
 * @throws {OrthotoneError} INVALID_ARGUMENT / INVALID_DOCUMENT as {@link seekerFor}, before the first
 *   reading. A failed reading or an abort never rejects: it ends the run with `stopReason`
 *   `measurement-failed` or `aborted`. An exception thrown by `onReading` is passed on.
 */
export async function runTrimCalibration(
  o: TrimCalibrationOptions,
  axes: TrimAxes,
): Promise<TrimCalibrationResult> {
  const { seeker, start } = seekerFor(o, axes);
  const ts = createTrimSeeker(seeker, axes, start);
  const resumed: SessionStep<number>[] = seeker.readings().map((r, i) => ({
    index: i + 1,
    trims: axes.toTrims(r.point, start),
    levels: Number.isFinite(r.db) ? r.db : undefined,
    best: { trims: axes.toTrims(r.point, start), levels: r.db },
  }));
  const session = await runSession(ts, functionSource(o.measure), {
    signal: o.signal,
    history: resumed,
    maxReadings: seeker.options.maxReadings,
    onReading: (h) => {
      const rs = seeker.readings();
      o.onReading?.({
        index: h.index,
        trims: h.trims,
        levelDb: h.levels ?? Number.NaN,
        role: rs[rs.length - 1]?.role ?? 'probe',
        bestTrims: h.best.trims,
        bestLevelDb: h.best.levels,
        ...(h.error !== undefined ? { error: h.error } : {}),
      });
    },
  });
  return resultOf(seeker, axes, start, stepsOf(seeker, session.history), session.lastError);
}
