/**
 * What the sideband and carrier calibrations share: options, result and history types, the mapping
 * between a pair of trims and the seeker's natural coordinates, and the run itself.
 */
import { OrthotoneError } from '../core/errors.js';
import { TRIM_LIMITS, validateTrims, ZERO_TRIMS } from '../core/trims.js';
import { requireFinite, requireInteger, requirePositive } from '../core/validate.js';
import { diagnoseSeeker } from './diagnosis.js';
import { createNullSeeker, restoreNullSeeker } from './null-seeker.js';
import { functionSource, runSession } from './session.js';
/**
 * Validates shared options and merges start trims over zero.
 * @throws {OrthotoneError} INVALID_ARGUMENT for a bad option.
 */
export function resolveTrimOptions(o) {
  if (!o || typeof o.measure !== 'function') {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      'measure must be a function (trims) => level in dB: pass the function that reads your analyzer',
    );
  }
  const start = { ...ZERO_TRIMS, ...validateTrims(o.start ?? {}) };
  validateHardware(o, start);
  const noiseDb = o.noiseDb === undefined ? 0.5 : requirePositive('noiseDb', o.noiseDb, 'dB');
  const maxReadings =
    o.maxReadings === undefined ? 16 : requireInteger('maxReadings', o.maxReadings, 1, 10_000);
  if (o.targetDb !== undefined) requireFinite('targetDb', o.targetDb, 'give a suppression in dB, e.g. 60');
  if (o.floorDb !== undefined) requireFinite('floorDb', o.floorDb, 'give the floor in dB, e.g. -70');
  return { start, noiseDb, maxReadings };
}
const LIMITS = {
  gainDb: TRIM_LIMITS.gainDb,
  phaseDeg: TRIM_LIMITS.phaseDeg,
  dcI: TRIM_LIMITS.dc,
  dcQ: TRIM_LIMITS.dc,
};
/**
 * Validates hardware steps and bounds against the trim limits and the start.
 * @throws {OrthotoneError} INVALID_ARGUMENT naming the trim, the value and the fix.
 */
export function validateHardware(o, start) {
  for (const [k, v] of Object.entries(o.steps ?? {})) {
    if (!(k in LIMITS)) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        `steps.${k} is not a trim: use gainDb, phaseDeg, dcI or dcQ`,
      );
    }
    if (v === undefined) continue;
    if (!(Number.isFinite(v) && v >= 0 && v < LIMITS[k])) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        `steps.${k} ${v} must be a step ≥ 0 (0 = continuous) below ${LIMITS[k]}, in the trim's own units`,
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
    const lim = LIMITS[k];
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
    const x = start[k];
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
export function snapToStep(x, step) {
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
export function seekerFor(o, axes) {
  const { start, noiseDb, maxReadings } = resolveTrimOptions(o);
  const opts = {
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
export function resultOf(seeker, axes, start, history, error) {
  const best = seeker.best();
  const e = seeker.estimate();
  const first = seeker.readings().find((r) => Number.isFinite(r.db));
  const trims = axes.toTrims(best.point, start);
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
export function createTrimSeeker(seeker, axes, start) {
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
    tell(trims, db) {
      inner.tell(axes.toPoint({ ...start, ...trims }), db === undefined ? Number.NaN : db);
    },
    undo() {
      inner.undo();
    },
    best() {
      const b = inner.best();
      return { trims: axes.toTrims(b.point, start), levels: b.levelDb };
    },
    save() {
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
    restore(state) {
      const s = state;
      if (s?.format !== 'orthotone-seeker-session' || s.kind !== 'null' || s.quantity !== axes.quantity) {
        throw new OrthotoneError(
          'INVALID_DOCUMENT',
          `saved session is not a ${axes.quantity} null: resume it with the calibration that saved it`,
        );
      }
      inner = restoreNullSeeker(s.seeker);
    },
    stop(reason) {
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
export function stepsOf(seeker, history) {
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
export async function runTrimCalibration(o, axes) {
  const { seeker, start } = seekerFor(o, axes);
  const ts = createTrimSeeker(seeker, axes, start);
  const resumed = seeker.readings().map((r, i) => ({
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
