/**
 * Sideband and carrier together, when one reading returns both levels (an analyzer reading the
 * whole spectrum, or measureSideband on a capture): each reading is told to both seekers, so every
 * measurement serves both nulls. The sideband seeker moves gain and phase, the carrier seeker the
 * DC trims (which do not affect the sideband: DC is added last, DESIGN.md §4); a seeker that has
 * stopped holds its best setting while the other continues.
 */
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

/**
 * Calibrates gain/phase and DC from readings that return both levels at once.
 * @param options as {@link calibrateSideband}, with `measure` returning `{ sidebandDb, carrierDb }`.
 * @returns the combined trims and each calibration's result; `readings` counts `measure` calls,
 *   never more than `maxReadings`.
 * @throws {OrthotoneError} INVALID_ARGUMENT for bad options.
 */
export async function calibrateSidebandAndCarrier(
  options: CombinedCalibrationOptions,
): Promise<CombinedCalibrationResult> {
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
  let count = Math.max(sb.seeker.count, cr.seeker.count);
  let lastError: unknown;
  const signal = options.signal;
  while (count < budget) {
    if (signal?.aborted) break;
    const ps = sb.seeker.next() ?? sb.seeker.best().point;
    const pc = cr.seeker.next() ?? cr.seeker.best().point;
    if (sb.seeker.done && cr.seeker.done) break;
    const trims = cAxes.toTrims(pc, sAxes.toTrims(ps, start));
    let levels: BothLevels | undefined;
    let error: unknown;
    try {
      levels = await options.measure(trims);
    } catch (e) {
      error = e;
      lastError = e;
    }
    count++;
    if (signal?.aborted) break;
    const s = levels && Number.isFinite(levels.sidebandDb) ? levels.sidebandDb : Number.NaN;
    const c = levels && Number.isFinite(levels.carrierDb) ? levels.carrierDb : Number.NaN;
    if (!sb.seeker.done) sb.seeker.tell(ps, s);
    if (!cr.seeker.done) cr.seeker.tell(pc, c);
    const bs = sb.seeker.best();
    const bc = cr.seeker.best();
    const bestTrims = cAxes.toTrims(bc.point, sAxes.toTrims(bs.point, start));
    const common = {
      index: count,
      trims,
      role: 'probe' as const,
      bestTrims,
      ...(error !== undefined ? { error } : {}),
    };
    hs.push({ ...common, levelDb: s, bestLevelDb: bs.levelDb });
    hc.push({ ...common, levelDb: c, bestLevelDb: bc.levelDb });
    options.onReading?.({ ...common, levelDb: s, bestLevelDb: bs.levelDb, carrierDb: c });
  }
  for (const k of [sb.seeker, cr.seeker]) if (!k.done) k.stop(signal?.aborted ? 'aborted' : 'budget');
  const sideband = resultOf(sb.seeker, sAxes, start, hs, lastError);
  const carrier = resultOf(cr.seeker, cAxes, start, hc, lastError);
  return {
    trims: { ...sideband.trims, dcI: carrier.trims.dcI, dcQ: carrier.trims.dcQ },
    sideband,
    carrier,
    readings: count,
  };
}
