/**
 * The null seeker: finds the (x, y) setting of two trims that minimises a level read in dB, from a
 * handful of slow, noisy scalar readings (DESIGN.md §6). It is an ask/tell core (`next()` gives the
 * setting to try, `tell()` reports what was read there) so that a person typing analyzer readings,
 * a script or a page measuring automatically all drive it the same way; the async driver is in
 * `run-null-seeker.ts`.
 *
 * Method: every reading is a noisy sample of the bowl `P = c·q(x − x*) + N` (see quadratic-fit.ts).
 * The seeker reads the start, probes each axis (which also shows whether the trim acts at all),
 * then alternates a jump to the fitted null with a probe on a ring around it whose radius shrinks
 * with the fit's own uncertainty toward the floor radius √(N/c); every fit uses every reading
 * (robustly weighted). The seeker tests its model against the readings: it starts from the nominal
 * bowl (known or isotropic curvature), and once five readings are in, every fit is repeated with
 * scale, anisotropy and coupling free to move (`adaptive`); when that fit explains the readings
 * clearly better (a cost drop of about χ²₂ at 2%), the looser bowl is kept (trims whose real
 * effect differs from their nominal units, or that disturb each other). It stops when the fit says
 * the target is met, when the null is located well inside the floor radius and at least three
 * distinct settings read the floor's level within the noise (no further reading could show an
 * improvement; a bowl misread as flat leaves its readings scattered instead), at the resolution
 * of quantised trims, or at the reading budget. The best setting so far is always available, and
 * is never a setting that the evidence does not show to beat the start: a candidate must beat the
 * start in the robust fit and in readings the fit kept (see `best()`); when that evidence is
 * missing, the last reading of the budget confirms the candidate (or re-reads the start), and
 * failing that the start is returned. A calibration therefore never ends worse than it began, to
 * within what readings above the floor can show.
 * References: circle intersection from level readings, Hoppenstein, TI SLOA313 (2021); the fitted
 * bowl, its priors and stop rules are this library's own (DESIGN.md §6, docs/REFERENCES.md §6).
 */
import { OrthotoneError } from '../core/errors.js';
import { requireFinite, requireInteger, requirePositive, stripUndefined } from '../core/validate.js';
import type { NullSurface } from './quadratic-fit.js';
import { best } from './seeker-evidence.js';
import { estimate } from './seeker-fit.js';
import { checkStop, plan, record } from './seeker-plan.js';
import { createSeekerState, resetSeekerState } from './seeker-state.js';

/**
 * Shape of the bowl the seeker fits.
 * - `known-curvature`: isotropic with curvature given (sideband in natural units: ¼).
 * - `isotropic`: isotropic, curvature estimated (carrier with unknown tone level).
 * - `quadratic`: the general quadratic (trims acting through hardware: unequal, cross-coupled).
 */
export type SeekerModel = 'known-curvature' | 'isotropic' | 'quadratic';

/** Why a seeker stopped. */
export type StopReason =
  | 'target' // the fit says the target suppression is met at the estimate
  | 'floor' // the null is located well inside the floor radius: no reading can show more
  | 'resolution' // the null is located to within the step of quantised trims
  | 'budget' // maxReadings used
  | 'trim-inactive' // no trim moves the reading
  | 'measurement-failed' // readings failed repeatedly
  | 'aborted'; // stopped from outside

/** Options of {@link createNullSeeker}. Coordinates are in the trims' natural units. */
export interface NullSeekerOptions {
  /** Starting setting [x, y]. Default [0, 0]. */
  start: [number, number];
  /** Bowl shape. Default `isotropic`. */
  model: SeekerModel;
  /** Curvature c (power ratio per squared unit): exact for `known-curvature`, a guess otherwise. */
  curvature: number;
  /** Spread of the known curvature, as a standard deviation of ln c. Default 0.15. */
  curvatureSpread: number;
  /** Standard deviation of one reading, dB. Default 0.5. */
  noiseDb: number;
  /** Measurement floor, dB, when known; otherwise estimated from the readings. */
  floorDb: number | undefined;
  /** Stop when the fit puts the level at the estimate below −targetDb (dB). Default: no target. */
  targetDb: number | undefined;
  /** Hard budget of readings (failed ones count). Default 16. */
  maxReadings: number;
  /** Quantisation step of each trim (hardware trims), natural units; 0 = continuous. */
  step: [number, number];
  /** Allowed range of each trim, natural units. */
  bounds: [[number, number], [number, number]];
  /** Largest probe step when looking for a trim that acts, natural units, per axis. */
  maxStep: [number, number];
  /** Names of the axes, for messages. */
  axisNames: [string, string];
  /** Down-weight outlying readings. Default true. */
  robust: boolean;
  /**
   * Test the bowl's nominal shape against the readings and loosen it (scale, anisotropy and
   * coupling estimated) when a looser fit explains them clearly better. Default true.
   */
  adaptive: boolean;
}

const DEFAULTS: Readonly<NullSeekerOptions> = Object.freeze({
  start: [0, 0] as [number, number],
  model: 'isotropic' as SeekerModel,
  curvature: 1,
  curvatureSpread: 0.15,
  noiseDb: 0.5,
  floorDb: undefined,
  targetDb: undefined,
  maxReadings: 16,
  step: [0, 0] as [number, number],
  bounds: [
    [-1, 1],
    [-1, 1],
  ] as [[number, number], [number, number]],
  maxStep: [0.1, 0.1] as [number, number],
  axisNames: ['x', 'y'] as [string, string],
  robust: true,
  adaptive: true,
});

/** What a reading was taken for. */
export type ReadingRole = 'start' | 'probe' | 'jump';

/** One reading as the seeker recorded it. */
export interface SeekerReading {
  /** The setting read, natural units. */
  point: [number, number];
  /** The level read, dB; NaN when the reading failed. */
  db: number;
  role: ReadingRole;
  /** Robust weight in the latest fit (0 = treated as an outlier; undefined = not fitted). */
  weight?: number;
  /** Reading minus the latest fit there, dB (undefined = not fitted). */
  residualDb?: number;
}

/** Whether a trim axis was seen to move the reading. */
export type AxisStatus = 'unknown' | 'active' | 'inactive';

/** The seeker's current fit, in natural units. */
export interface SeekerEstimate {
  /** Fitted null. */
  centre: [number, number];
  /** Covariance of the null: [var x, cov xy, var y]. */
  centreCov: [number, number, number];
  /** Fitted surface (curvature, floor, anisotropy). */
  surface: NullSurface;
  /** Fitted floor, dB. */
  floorDb: number;
  /** Floor radius √(N/c), natural units. */
  floorRadius: number;
  /** Expected level at the null from its uncertainty alone, floor excluded, dB. */
  expectedTrueDb: number;
  /** Weighted RMS residual of the fit, dB. */
  rmsDb: number;
}

/**
 * The best setting so far: a setting the evidence shows to be better than the start (see
 * {@link NullSeeker.best}), or the start itself.
 */
export interface SeekerBest {
  point: [number, number];
  /**
   * Level there, dB: when `source` is `fit`, the fitted level (floor included) plus the excess the
   * null's remaining uncertainty is expected to add; `reading`: the reading there; `start`: the
   * start's level (its reading, or the fit's level there when that reading was rejected).
   */
  levelDb: number;
  /**
   * `fit`: the fitted null; `reading`: a setting that was read; `start`: nothing was shown to
   * beat the start.
   */
  source: 'fit' | 'reading' | 'start';
}

/** Saved seeker state (JSON-serialisable): the options and the readings. */
export interface NullSeekerState {
  format: 'orthotone-seeker';
  version: 1;
  options: NullSeekerOptions;
  readings: { point: [number, number]; db: number | null }[];
}

/** The ask/tell seeker. */
export interface NullSeeker {
  /**
   * The setting to read next, or undefined when stopped. Repeated calls give the same setting.
   * @throws never
   */
  next(): [number, number] | undefined;
  /**
   * Reports the level read at `point` (which may differ from what `next()` proposed, e.g. after
   * rounding by hardware). A non-finite `db` records a failed reading.
   * @throws {OrthotoneError} INVALID_ARGUMENT when the seeker has stopped, or when a coordinate of
   *   `point` is not finite.
   */
  tell(point: readonly [number, number], db: number): void;
  /**
   * Removes the last reading (a person mistyped it) by replaying the others from the start.
   * @throws never in normal use: it replays readings the seeker accepted before.
   */
  undo(): void;
  /**
   * Stops the seeker (e.g. on abort); `best()` stays valid. The first reason given is kept.
   * @throws never
   */
  stop(reason: StopReason): void;
  /** True once stopped. */
  readonly done: boolean;
  readonly stopReason: StopReason | undefined;
  /** Number of readings taken (failed ones included). */
  readonly count: number;
  /**
   * The best setting so far. A setting other than the start is returned only when the evidence
   * shows it beats the start (the seeker's guarantee that a calibration never ends worse than it
   * began): the fitted level there is below the fitted level at the start by 3σ, and readings that
   * the fit did not reject bound its true level below the start's — each reading r at distance d
   * bounds the true amplitude there by `√P_r + √c·d` (the image or carrier amplitude is a norm of
   * the offset from the null; c the bowl's largest curvature), read 2σ high, against the start
   * read 2σ low less the floor. Two such readings, or one that the over-determined fit agrees
   * with, are enough; otherwise the start is returned (and the seeker spends its last reading to
   * confirm the candidate).
   */
  best(): SeekerBest;
  estimate(): SeekerEstimate | undefined;
  readings(): readonly SeekerReading[];
  axes(): readonly [AxisStatus, AxisStatus];
  /**
   * Saves the state for a later {@link restoreNullSeeker} (plain JSON data; failed readings as null).
   * @throws never
   */
  save(): NullSeekerState;
  readonly options: Readonly<NullSeekerOptions>;
}

/**
 * Validates null-seeker options merged over the defaults.
 * @throws {OrthotoneError} INVALID_ARGUMENT naming the bad option.
 */
export function resolveSeekerOptions(partial: Partial<NullSeekerOptions>): NullSeekerOptions {
  const o: NullSeekerOptions = { ...DEFAULTS, ...stripUndefined(partial) };
  requireFinite('start[0]', o.start[0]);
  requireFinite('start[1]', o.start[1]);
  if (!['known-curvature', 'isotropic', 'quadratic'].includes(o.model)) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `model ${JSON.stringify(o.model)} is not recognised: use 'known-curvature', 'isotropic' or 'quadratic'`,
      o.model,
    );
  }
  requirePositive('curvature', o.curvature);
  requirePositive('curvatureSpread', o.curvatureSpread);
  requirePositive('noiseDb', o.noiseDb, 'dB');
  if (o.floorDb !== undefined) requireFinite('floorDb', o.floorDb, 'give the floor in dB, e.g. -70');
  if (o.targetDb !== undefined) requireFinite('targetDb', o.targetDb, 'give the suppression in dB, e.g. 60');
  requireInteger('maxReadings', o.maxReadings, 1, 10_000);
  for (const j of [0, 1] as const) {
    const [lo, hi] = o.bounds[j];
    requireFinite(`bounds[${j}][0]`, lo);
    requireFinite(`bounds[${j}][1]`, hi);
    if (!(lo < hi)) {
      throw new OrthotoneError('INVALID_ARGUMENT', `bounds[${j}] [${lo}, ${hi}] must be written [lo, hi]`);
    }
    if (!(o.start[j] >= lo && o.start[j] <= hi)) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        `start ${o.axisNames[j]} ${o.start[j]} lies outside its range [${lo}, ${hi}]: start inside the range`,
        o.start[j],
      );
    }
    requireFinite(`step[${j}]`, o.step[j]);
    if (o.step[j] < 0) throw new OrthotoneError('INVALID_ARGUMENT', `step[${j}] ${o.step[j]} must be ≥ 0`);
    requirePositive(`maxStep[${j}]`, o.maxStep[j]);
  }
  return o;
}

/**
 * Creates a null seeker.
 * @param options partial options merged over the defaults (start [0,0], isotropic, noise 0.5 dB,
 *   16 readings).
 * @throws {OrthotoneError} INVALID_ARGUMENT for a bad option.
 */
export function createNullSeeker(options: Partial<NullSeekerOptions> = {}): NullSeeker {
  const st = createSeekerState(resolveSeekerOptions(options));
  const seeker: NullSeeker = {
    next() {
      if (st.stopReason) return undefined;
      if (!st.pending) plan(st);
      return st.pending ? [st.pending[0], st.pending[1]] : undefined;
    },
    tell(point, db) {
      if (st.stopReason) {
        throw new OrthotoneError(
          'INVALID_ARGUMENT',
          `the seeker has stopped (${st.stopReason}): read no more settings, take best()`,
        );
      }
      requireFinite('point[0]', point[0]);
      requireFinite('point[1]', point[1]);
      if (!st.pending) plan(st);
      record(st, point, db);
      checkStop(st);
      plan(st);
    },
    undo() {
      if (st.readings.length === 0) return;
      const keep = st.readings.slice(0, -1).map((r) => ({ point: r.point, db: r.db }));
      resetSeekerState(st);
      for (const r of keep) seeker.tell(r.point, r.db);
    },
    stop(reason) {
      if (!st.stopReason) st.stopReason = reason;
      st.pending = undefined;
    },
    get done() {
      return st.stopReason !== undefined;
    },
    get stopReason() {
      return st.stopReason;
    },
    get count() {
      return st.readings.length;
    },
    best: () => best(st),
    estimate: () => estimate(st),
    readings: () => st.readings,
    axes: () => [st.status[0], st.status[1]],
    save: () => ({
      format: 'orthotone-seeker',
      version: 1,
      options: { ...st.o },
      readings: st.readings.map((r) => ({
        point: [r.point[0], r.point[1]],
        db: Number.isFinite(r.db) ? r.db : null,
      })),
    }),
    options: st.o,
  };
  return seeker;
}

/**
 * Recreates a seeker from {@link NullSeeker.save} output by replaying its readings (the seeker is
 * deterministic given its readings).
 * @throws {OrthotoneError} INVALID_DOCUMENT when the state is not a saved seeker.
 */
export function restoreNullSeeker(state: unknown): NullSeeker {
  const s = state as NullSeekerState;
  if (
    !s ||
    typeof s !== 'object' ||
    s.format !== 'orthotone-seeker' ||
    s.version !== 1 ||
    !Array.isArray(s.readings) ||
    typeof s.options !== 'object'
  ) {
    throw new OrthotoneError(
      'INVALID_DOCUMENT',
      'saved seeker state must be an object with format "orthotone-seeker", version 1, options and readings: pass what save() returned',
      state,
    );
  }
  const seeker = createNullSeeker(s.options);
  for (const r of s.readings) {
    if (
      !Array.isArray(r.point) ||
      r.point.length !== 2 ||
      !(r.db === null || (typeof r.db === 'number' && Number.isFinite(r.db)))
    ) {
      throw new OrthotoneError('INVALID_DOCUMENT', `saved reading ${JSON.stringify(r)} is malformed`, r);
    }
    if (seeker.done) break;
    seeker.tell([r.point[0], r.point[1]], r.db ?? Number.NaN);
  }
  return seeker;
}
