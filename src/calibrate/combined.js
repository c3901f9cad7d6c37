/**
 * Sideband and carrier together, when one reading returns both levels (an analyzer reading the
 * whole spectrum, or measureSideband on a capture): each reading is told to both seekers, so every
 * measurement serves both nulls. The sideband seeker moves gain and phase, the carrier seeker the
 * DC trims (which do not affect the sideband: DC is added last, DESIGN.md §4); a seeker that has
 * stopped holds its best setting while the other continues.
 */
import { OrthotoneError } from '../core/errors.js';
import { requireRange } from '../core/validate.js';
import { carrierAxes } from './carrier.js';
import { functionSource, runSession } from './session.js';
import { sidebandAxes } from './sideband.js';
import { resultOf, seekerFor } from './trim-calibration.js';
/**
 * Creates the ask/tell core of a combined sideband and carrier calibration.
 * @param options as {@link calibrateSidebandAndCarrier} (`measure` and `onReading` are not used).
 * @throws {OrthotoneError} INVALID_ARGUMENT for bad options.
 */
export function createCombinedSeeker(options) {
  if (options.toneAmplitude !== undefined) requireRange('toneAmplitude', options.toneAmplitude, 1e-6, 4);
  const cAxes = carrierAxes(options.toneAmplitude, options);
  const sAxes = sidebandAxes(options);
  const base = {
    ...options,
    measure: () => 0,
    onReading: undefined,
    resume: undefined,
  };
  const make = (resume) => {
    const sb = seekerFor(
      { ...base, ...(resume && options.resume ? { resume: options.resume.sideband } : {}) },
      sAxes,
    );
    const cr = seekerFor(
      {
        ...base,
        ...(resume && options.resume ? { resume: options.resume.carrier } : {}),
      },
      cAxes,
    );
    return { sb, cr };
  };
  let { sb, cr } = make(true);
  const start = { ...sb.start, dcI: cr.start.dcI, dcQ: cr.start.dcQ };
  const budget = sb.seeker.options.maxReadings;
  let hs = [];
  let hc = [];
  // Which seekers each reading was told to (a stopped seeker holds its best and is not told).
  let told = [];
  let count = Math.max(sb.seeker.count, cr.seeker.count);
  let stopped;
  let ps;
  let pc;
  const trimsAt = (a, b) => cAxes.toTrims(b, sAxes.toTrims(a, start));
  const done = () => stopped !== undefined || count >= budget || (sb.seeker.done && cr.seeker.done);
  const self = {
    next() {
      if (done()) return undefined;
      ps = sb.seeker.next() ?? sb.seeker.best().point;
      pc = cr.seeker.next() ?? cr.seeker.best().point;
      return trimsAt(ps, pc);
    },
    tell(trims, levels, error) {
      if (done()) {
        throw new OrthotoneError(
          'INVALID_ARGUMENT',
          'the calibration has stopped: read no more, take result()',
        );
      }
      const t0 = { ...start, ...trims };
      const s = levels && Number.isFinite(levels.sidebandDb) ? levels.sidebandDb : Number.NaN;
      const c = levels && Number.isFinite(levels.carrierDb) ? levels.carrierDb : Number.NaN;
      const t = [!sb.seeker.done, !cr.seeker.done];
      if (t[0]) sb.seeker.tell(sAxes.toPoint(t0), s);
      if (t[1]) cr.seeker.tell(cAxes.toPoint(t0), c);
      told.push(t);
      count++;
      ps = undefined;
      pc = undefined;
      const bs = sb.seeker.best();
      const bc = cr.seeker.best();
      const common = {
        index: count,
        trims: t0,
        role: 'probe',
        bestTrims: trimsAt(bs.point, bc.point),
        ...(error !== undefined ? { error } : {}),
      };
      hs.push({ ...common, levelDb: s, bestLevelDb: bs.levelDb });
      hc.push({ ...common, levelDb: c, bestLevelDb: bc.levelDb });
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
    get stopReason() {
      if (stopped) return stopped;
      if (!done()) return undefined;
      if (count >= budget && !(sb.seeker.done && cr.seeker.done)) return 'budget';
      return sb.seeker.stopReason ?? cr.seeker.stopReason;
    },
    best() {
      const bs = sb.seeker.best();
      const bc = cr.seeker.best();
      return {
        trims: trimsAt(bs.point, bc.point),
        levels: { sidebandDb: bs.levelDb, carrierDb: bc.levelDb },
      };
    },
    save() {
      return {
        format: 'orthotone-seeker-session',
        version: 1,
        kind: 'combined',
        readings: hs.map((h, k) => ({
          trims: h.trims,
          levels: {
            sidebandDb: Number.isFinite(h.levelDb) ? h.levelDb : null,
            carrierDb: Number.isFinite(hc[k].levelDb) ? hc[k].levelDb : null,
          },
        })),
      };
    },
    restore(state) {
      const st = state;
      if (
        st?.format !== 'orthotone-seeker-session' ||
        st.kind !== 'combined' ||
        !Array.isArray(st.readings)
      ) {
        throw new OrthotoneError(
          'INVALID_DOCUMENT',
          'saved session is not a combined sideband and carrier run: resume it with the calibration that saved it',
        );
      }
      ({ sb, cr } = make(false));
      hs = [];
      hc = [];
      told = [];
      count = 0;
      stopped = undefined;
      for (const r of st.readings) {
        if (done()) break;
        const l = r.levels;
        self.tell(r.trims, {
          sidebandDb: l?.sidebandDb ?? Number.NaN,
          carrierDb: l?.carrierDb ?? Number.NaN,
        });
      }
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
 * Calibrates gain/phase and DC from readings that return both levels at once: a
 * {@link createCombinedSeeker} driven by {@link runSession} (which honours the AbortSignal even
 * while a reading never settles).
 * @param options as {@link calibrateSideband}, with `measure` returning `{ sidebandDb, carrierDb }`.
 * @returns the combined trims and each calibration's result; `readings` counts `measure` calls,
 *   never more than `maxReadings`.
 * @throws {OrthotoneError} INVALID_ARGUMENT for bad options.
 */
export async function calibrateSidebandAndCarrier(options) {
  const core = createCombinedSeeker(options);
  const session = await runSession(core, functionSource(options.measure), {
    signal: options.signal,
    maxReadings: options.maxReadings,
    onReading: (h) => {
      options.onReading?.({
        index: h.index,
        trims: h.trims,
        role: 'probe',
        levelDb: h.levels?.sidebandDb ?? Number.NaN,
        carrierDb: h.levels?.carrierDb ?? Number.NaN,
        bestTrims: h.best.trims,
        bestLevelDb: h.best.levels.sidebandDb,
        ...(h.error !== undefined ? { error: h.error } : {}),
      });
    },
  });
  return core.result(session.lastError);
}
