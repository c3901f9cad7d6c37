/**
 * Sideband and carrier together, when one reading returns both levels (an analyzer reading the
 * whole spectrum, or measureSideband on a capture): each reading is told to both seekers, so every
 * measurement serves both nulls. The sideband seeker moves gain and phase, the carrier seeker the
 * DC trims (which do not affect the sideband: DC is added last, DESIGN.md §4); a seeker that has
 * stopped holds its best setting while the other continues.
 */
import { OrthotoneError } from '../core/errors.js';
import type { Trims } from '../core/trims.js';
import { requireRange } from '../core/validate.js';
import { type CarrierCalibrationOptions, carrierAxes } from './carrier.js';
import type { NullSeekerState } from './null-seeker.js';
import { sidebandAxes } from './sideband.js';
import {
  type CalibrationStep,
  resultOf,
  seekerFor,
  type TrimCalibrationOptions,
  type TrimCalibrationResult,
} from './trim-calibration.js';

/** Both levels from one reading, dB (dBc preferred). */
export interface BothLevels {
  sidebandDb: number;
  carrierDb: number;
}

/** Options of {@link calibrateSidebandAndCarrier}. */
export interface CombinedCalibrationOptions
  extends Omit<TrimCalibrationOptions, 'measure' | 'onReading' | 'resume'> {
  /** Reads both levels with the given trims applied. */
  measure: (trims: Trims) => BothLevels | Promise<BothLevels>;
  /** Peak tone amplitude (full scale 1), when known. */
  toneAmplitude?: number;
  /** Called after every reading with both levels and the best trims so far. */
  onReading?: (step: CalibrationStep & { carrierDb: number }) => void;
  /** States saved from an interrupted run. */
  resume?: { sideband: NullSeekerState; carrier: NullSeekerState };
}

/** Result of {@link calibrateSidebandAndCarrier}. */
export interface CombinedCalibrationResult {
  /** Best gain, phase, dcI and dcQ together. */
  trims: Trims;
  sideband: TrimCalibrationResult;
  carrier: TrimCalibrationResult;
  /** `measure` calls (each served both). */
  readings: number;
}

/** A step of a combined run, as kept in each calibration's history. */
type CombinedStep = CalibrationStep & { carrierDb: number };

/**
 * The ask/tell core of {@link calibrateSidebandAndCarrier}, for drivers that cannot hand over a
 * `measure` function (a person typing both levels off one analyzer display, with undo).
 */
export interface CombinedSeeker {
  /** The trims to read next (all four), or undefined when both nulls are done or the budget is used. */
  next(): Trims | undefined;
  /**
   * Reports both levels read with the trims `next()` gave; a non-finite level records a failed
   * reading of that quantity. `error` is kept in the history. Levels in dB (dBc).
   * @throws {OrthotoneError} INVALID_ARGUMENT when the calibration has stopped (both nulls done, the
   *   budget used, or `stop()` called).
   */
  tell(levels: BothLevels, error?: unknown): CombinedStep;
  /**
   * Removes the last reading from both calibrations (a person mistyped it); undoes a stop.
   * @throws never in normal use (as `NullSeeker.undo`).
   */
  undo(): void;
  /**
   * Stops both (e.g. a person quits); the results keep the best trims so far.
   * @throws never
   */
  stop(reason: 'aborted' | 'budget'): void;
  /** Readings taken, resumed ones included. */
  readonly count: number;
  readonly done: boolean;
  /** The best trims so far, and the level at each null (dB). */
  best(): { trims: Trims; sidebandDb: number; carrierDb: number };
  /**
   * The results so far (each calibration's, and the combined trims). Stops any seeker still running.
   * @throws never
   */
  result(lastError?: unknown): CombinedCalibrationResult;
}

/**
 * Creates the ask/tell core of a combined sideband and carrier calibration.
 * @param options as {@link calibrateSidebandAndCarrier} (`measure` and `onReading` are not used).
 * @throws {OrthotoneError} INVALID_ARGUMENT for bad options.
 */
export function createCombinedSeeker(
  options: Omit<CombinedCalibrationOptions, 'measure' | 'onReading' | 'signal'>,
): CombinedSeeker {
  if (options.toneAmplitude !== undefined) requireRange('toneAmplitude', options.toneAmplitude, 1e-6, 4);
  const cAxes = carrierAxes(options.toneAmplitude, options);
  const sAxes = sidebandAxes(options);
  const base: TrimCalibrationOptions = {
    ...options,
    measure: () => 0,
    onReading: undefined,
    resume: undefined,
  };
  const sb = seekerFor({ ...base, ...(options.resume ? { resume: options.resume.sideband } : {}) }, sAxes);
  const cr = seekerFor(
    { ...(base as CarrierCalibrationOptions), ...(options.resume ? { resume: options.resume.carrier } : {}) },
    cAxes,
  );
  const start: Trims = { ...sb.start, dcI: cr.start.dcI, dcQ: cr.start.dcQ };
  const budget = sb.seeker.options.maxReadings;
  const hs: CalibrationStep[] = [];
  const hc: CalibrationStep[] = [];
  // Which seekers each reading was told to (a stopped seeker holds its best and is not told).
  const told: [boolean, boolean][] = [];
  let count = Math.max(sb.seeker.count, cr.seeker.count);
  let stopped: 'aborted' | 'budget' | undefined;
  let ps: [number, number] | undefined;
  let pc: [number, number] | undefined;

  const trimsAt = (a: readonly [number, number], b: readonly [number, number]): Trims =>
    cAxes.toTrims(b, sAxes.toTrims(a, start));
  const done = (): boolean => stopped !== undefined || count >= budget || (sb.seeker.done && cr.seeker.done);

  const self: CombinedSeeker = {
    next() {
      if (done()) return undefined;
      ps = sb.seeker.next() ?? sb.seeker.best().point;
      pc = cr.seeker.next() ?? cr.seeker.best().point;
      return trimsAt(ps, pc);
    },
    tell(levels, error) {
      if (!ps || !pc) self.next();
      if (!ps || !pc) {
        throw new OrthotoneError(
          'INVALID_ARGUMENT',
          'the calibration has stopped: read no more, take result()',
        );
      }
      const trims = trimsAt(ps, pc);
      const s = levels && Number.isFinite(levels.sidebandDb) ? levels.sidebandDb : Number.NaN;
      const c = levels && Number.isFinite(levels.carrierDb) ? levels.carrierDb : Number.NaN;
      const t: [boolean, boolean] = [!sb.seeker.done, !cr.seeker.done];
      if (t[0]) sb.seeker.tell(ps, s);
      if (t[1]) cr.seeker.tell(pc, c);
      told.push(t);
      count++;
      ps = undefined;
      pc = undefined;
      const bs = sb.seeker.best();
      const bc = cr.seeker.best();
      const common = {
        index: count,
        trims,
        role: 'probe' as const,
        bestTrims: trimsAt(bs.point, bc.point),
        ...(error !== undefined ? { error } : {}),
      };
      hs.push({ ...common, levelDb: s, bestLevelDb: bs.levelDb });
      hc.push({ ...common, levelDb: c, bestLevelDb: bc.levelDb });
      return { ...common, levelDb: s, bestLevelDb: bs.levelDb, carrierDb: c };
    },
    undo() {
      const t = told.pop();
      if (!t) return;
      if (t[0]) sb.seeker.undo();
      if (t[1]) cr.seeker.undo();
      hs.pop();
      hc.pop();
      count--;
      stopped = undefined;
      ps = undefined;
      pc = undefined;
    },
    stop(reason) {
      stopped ??= reason;
      ps = undefined;
      pc = undefined;
    },
    get count() {
      return count;
    },
    get done() {
      return done();
    },
    best() {
      const bs = sb.seeker.best();
      const bc = cr.seeker.best();
      return { trims: trimsAt(bs.point, bc.point), sidebandDb: bs.levelDb, carrierDb: bc.levelDb };
    },
    result(lastError) {
      for (const k of [sb.seeker, cr.seeker]) if (!k.done) k.stop(stopped ?? 'budget');
      const sideband = resultOf(sb.seeker, sAxes, start, hs, lastError);
      const carrier = resultOf(cr.seeker, cAxes, start, hc, lastError);
      return {
        trims: { ...sideband.trims, dcI: carrier.trims.dcI, dcQ: carrier.trims.dcQ },
        sideband,
        carrier,
        readings: count,
      };
    },
  };
  return self;
}

/**
 * Calibrates gain/phase and DC from readings that return both levels at once.
 * @param options as {@link calibrateSideband}, with `measure` returning `{ sidebandDb, carrierDb }`.
 * @returns the combined trims and each calibration's result; `readings` counts `measure` calls,
 *   never more than `maxReadings`.
 * @throws {OrthotoneError} INVALID_ARGUMENT for bad options.
 * @example
 * ```ts
 * import { calibrateSidebandAndCarrier, createAnalyzer, createVirtualExciter, homebrewBenchDevice } from 'orthotone';
 *
 * // An invented bench: a virtual hand-built exciter read by a simulated analyzer (on a real bench,
 * // `measure` sets the trims on the exciter and reads a receiver or a spectrum analyzer).
 * const exciter = createVirtualExciter(homebrewBenchDevice(), { sampleRate: 48000, seed: 1 });
 * const analyzer = createAnalyzer(exciter, { seed: 2, noiseDb: 0.2 });
 * const r = await calibrateSidebandAndCarrier({
 *   measure: (t) => {
 *     const { sidebandDbc, carrierDbc } = analyzer.readBoth(1000, t, 0.5);
 *     return { sidebandDb: sidebandDbc, carrierDb: carrierDbc };
 *   },
 *   toneAmplitude: 0.5,
 *   maxReadings: 80,
 * });
 * console.log(r.trims, `${r.readings} readings`);
 * ```
 */
export async function calibrateSidebandAndCarrier(
  options: CombinedCalibrationOptions,
): Promise<CombinedCalibrationResult> {
  const core = createCombinedSeeker(options);
  let lastError: unknown;
  const signal = options.signal;
  for (;;) {
    if (signal?.aborted) break;
    const trims = core.next();
    if (!trims) break;
    let levels: BothLevels | undefined;
    let error: unknown;
    try {
      levels = await options.measure(trims);
    } catch (e) {
      error = e;
      lastError = e;
    }
    if (signal?.aborted) break;
    const step = core.tell(levels ?? { sidebandDb: Number.NaN, carrierDb: Number.NaN }, error);
    options.onReading?.(step);
  }
  if (signal?.aborted) core.stop('aborted');
  return core.result(lastError);
}
