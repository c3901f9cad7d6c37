/**
 * Multi-tone calibration: when the imbalance changes with audio frequency (time skew between the
 * channels, mismatched coupling and anti-imaging corners), one pair of trims nulls one frequency
 * only. Here one probe sequence serves every tone: each reading returns the unwanted sideband of
 * each tone (a multi-tone capture, or the tones read in turn with the same trims), the per-tone
 * nulls are fitted from the shared readings, a smooth model of the required gain and phase versus
 * frequency is fitted through them (including the linear phase of a channel skew), and that model
 * is realised as a short widely-linear FIR pair inside the generator (`Correction`, DESIGN.md §4).
 *
 * Sequence: a null seeker on the mean image power of the tones (a bowl of the same curvature ¼
 * centred on the mean null) spends about 60% of the budget; then the per-tone fits, refined with the
 * rest of the budget by jumps and ring probes around the tone whose null is least certain.
 *
 * The correction FIR pair is designed in design/correction.ts (FIR design; references there).
 * Delay-based compensation of frequency-dependent imbalance: Kiss & Prodanov, IEEE TCAS-I 51(6), 2004.
 */
import { OrthotoneError } from '../core/errors.js';
import { weightedLeastSquares } from '../core/small-linear.js';
import type { Correction, Trims } from '../core/trims.js';
import { ZERO_TRIMS } from '../core/trims.js';
import { degToRad } from '../core/units.js';
import { requireFinite, requireInteger, requirePositive, requireSampleRate } from '../core/validate.js';
import {
  designCorrection,
  equivalentTrims,
  evaluateImbalanceModel,
  type ImbalanceModel,
} from '../design/correction.js';
import { createNullSeeker, type NullSeeker, type StopReason } from './null-seeker.js';
import {
  fitNullSurface,
  linearPowerFit,
  type NullSurface,
  type SurfacePoint,
  surfaceDb,
} from './quadratic-fit.js';
import {
  functionSource,
  type ReadingSource,
  runSession,
  type SavedSeeker,
  type Seeker,
  type TrimApplier,
} from './session.js';
import { SIDEBAND_CURVATURE, sidebandPoint, sidebandTrims } from './sideband.js';

// The correction's design and evaluation live in design/correction.ts (FIR design is design's job).
export { designCorrection, equivalentTrims, evaluateImbalanceModel, type ImbalanceModel };

/** Options of {@link calibrateMultitone}. */
export interface MultitoneOptions {
  /**
   * Reads the unwanted sideband of every tone (same order as `tonesHz`) with these trims, dBc. The
   * search calls it with the trims alone; the final verification passes the designed correction as
   * the second argument, which `measure` must apply (in the generator) for that reading.
   */
  measure: (trims: Trims, correction?: Correction) => readonly number[] | Promise<readonly number[]>;
  /** Tone frequencies, Hz (at least 2, distinct, positive). */
  tonesHz: readonly number[];
  /** Sample rate the correction filter will run at, Hz. */
  sampleRate: number;
  /** Band over which the correction is designed, Hz. Default: the span of the tones. */
  band?: [number, number];
  /** Correction length, taps (odd). Default 31. */
  taps?: number;
  /** Trims to begin from; gain and phase are searched, the others pass through. */
  start?: Partial<Trims>;
  /** Standard deviation of one reading, dB. Default 0.5. */
  noiseDb?: number;
  /** Hard budget of `measure` calls for the search. Default 24. */
  maxReadings?: number;
  /**
   * Confirming readings with the correction applied, taken after the search and NOT counted in
   * `maxReadings` (each is one `measure(trims, correction)` call reading every tone). Default 1;
   * 0 skips the verification.
   */
  verifyReadings?: number;
  signal?: AbortSignal;
  onReading?: (step: { index: number; trims: Trims; levelsDb: number[] }) => void;
  /**
   * Where the search's readings come from, instead of `measure` (a typed prompt or a command from
   * the CLI: it may answer retry, undo or stop). `measure` still serves the verification.
   */
  source?: ReadingSource<readonly number[]>;
  /** Sets the trims before each reading of the search (a device). Default: the source does. */
  applier?: TrimApplier;
  /** Time allowed for one reading of the search, seconds. Default: none. */
  timeoutSeconds?: number;
  /**
   * Called when a reading failed (before it is retried).
   * @throws anything: passed on as the calibration's rejection.
   */
  onFailure?: (error: unknown, index: number) => void;
}

/** The fitted null of one tone. */
export interface ToneOptimum {
  frequencyHz: number;
  /** Gain and phase trims that null this tone alone. */
  gainDb: number;
  phaseDeg: number;
  /** Standard deviation of the null position, natural units (≈ fraction of gain, radians). */
  uncertainty: number;
  /** Fitted floor of this tone's readings, dBc. */
  floorDb: number;
}

/** Readings at the calibration tones with the designed correction applied. */
export interface MultitoneVerification {
  /** `measure` calls made for the verification (failed ones included), outside `maxReadings`. */
  readings: number;
  /** Unwanted sideband of each tone, power mean of the good readings, dBc (NaN when all failed). */
  levelsDb: number[];
  /** Measured suppression of each tone, dB (positive; NaN when all readings failed). */
  measuredDb: number[];
  /** The worst measured suppression over the tones, dB. */
  measuredWorstDb: number;
  /** The model's worst predicted suppression at the same tones, dB (min of `predictedDb`). */
  predictedWorstAtTonesDb: number;
  /**
   * Set when a tone measured more than 6 dB short of what the model allows (or of the lowest level
   * the search read at that tone): the correction may not have been applied by `measure`, or the
   * device changed.
   */
  warning?: string;
}

/** Result of {@link calibrateMultitone}. */
export interface MultitoneResult {
  tones: ToneOptimum[];
  model: ImbalanceModel;
  /** The correction filter for the generator (gain and phase trims then stay 0). */
  correction: Correction;
  /** Trims to use with the correction: the start's skew and DC, gain and phase 0. */
  trims: Trims;
  /**
   * The best single gain/phase setting for all tones without a correction: the centroid of the
   * per-tone nulls in natural units, which minimises the image power summed over the tones.
   */
  singleTrims: Trims;
  /** Predicted suppression of each tone with the correction (fit and design error only), dB. */
  predictedDb: number[];
  /** Worst predicted suppression over the band on a fine grid (model and design error), dB. */
  predictedWorstDb: number;
  /** `measure` calls of the search (at most `maxReadings`; the verification's are counted apart). */
  readings: number;
  history: { index: number; trims: Trims; levelsDb: number[] }[];
  stopReason: StopReason;
  /** Set when the search ended early: a person quit, the input ended, it was aborted or readings kept failing. */
  cutShort?: 'quit' | 'end-of-input' | 'aborted' | 'failed' | 'refused';
  /** The final check with the correction applied (absent when skipped or the run was aborted). */
  verification?: MultitoneVerification;
}

/**
 * Fits the smooth model through per-tone nulls (weighted least squares; fewer terms for fewer tones).
 * @throws {OrthotoneError} INVALID_ARGUMENT for fewer than one tone.
 */
export function fitImbalanceModel(tones: readonly ToneOptimum[]): ImbalanceModel {
  if (tones.length < 1) throw new OrthotoneError('INVALID_ARGUMENT', 'need at least one tone optimum');
  const f0 = Math.exp(tones.reduce((s, t) => s + Math.log(t.frequencyHz), 0) / tones.length);
  const nTerms = Math.min(3, tones.length);
  const w = tones.map((t) => 1 / (t.uncertainty ** 2 + 1e-10));
  const grow = (t: ToneOptimum): number[] => {
    const r = t.frequencyHz / f0;
    return [1, r * r, 1 / (r * r)].slice(0, nTerms);
  };
  const prow = (t: ToneOptimum): number[] => [1, t.frequencyHz / f0, f0 / t.frequencyHz].slice(0, nTerms);
  // Gain in natural units (fraction) ≈ dB·ln10/20: weight by the same uncertainty.
  const gs = weightedLeastSquares(
    tones.map(grow),
    tones.map((t) => t.gainDb),
    w,
    nTerms,
    1e-12,
  );
  const ps = weightedLeastSquares(
    tones.map(prow),
    tones.map((t) => degToRad(t.phaseDeg)),
    w,
    nTerms,
    1e-12,
  );
  const g = [gs?.[0] ?? 0, gs?.[1] ?? 0, gs?.[2] ?? 0] as [number, number, number];
  const p = [ps?.[0] ?? 0, (ps?.[1] ?? 0) / f0, (ps?.[2] ?? 0) * f0] as [number, number, number];
  return { gainDb: g, phase: p, f0, skewSeconds: p[1] / (2 * Math.PI) };
}

/**
 * Calibrates a frequency-dependent sideband correction from one probe sequence over several tones.
 * @param options measure (levels per tone, dBc; the correction as second argument for the
 *   verification), tones, sample rate, band, taps, budget (`maxReadings` for the search), noise,
 *   `verifyReadings` (default 1, outside the budget).
 * @returns per-tone nulls, the fitted model, the correction, its predicted suppression and the
 *   verification: measured worst-case suppression at the tones with the correction applied,
 *   beside the model's figure.
 * @throws {OrthotoneError} INVALID_ARGUMENT for bad options (a failed reading is retried once per
 *   setting; readings that keep failing end the run with `measurement-failed`).
 */
export async function calibrateMultitone(options: MultitoneOptions): Promise<MultitoneResult> {
  const o = options;
  if (typeof o?.measure !== 'function') {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      'measure must be a function (trims) => levels per tone, dBc',
    );
  }
  const fs = requireSampleRate(o.sampleRate);
  if (!Array.isArray(o.tonesHz) || o.tonesHz.length < 2) {
    throw new OrthotoneError('INVALID_ARGUMENT', 'tonesHz must list at least 2 tone frequencies in Hz');
  }
  o.tonesHz.forEach((f, i) => {
    requirePositive(`tonesHz[${i}]`, f, 'Hz');
    if (f >= fs / 2) throw new OrthotoneError('INVALID_ARGUMENT', `tonesHz[${i}] ${f} Hz must be below fs/2`);
  });
  const noiseDb = o.noiseDb === undefined ? 0.5 : requirePositive('noiseDb', o.noiseDb, 'dB');
  const maxReadings =
    o.maxReadings === undefined ? 24 : requireInteger('maxReadings', o.maxReadings, 4, 10_000);
  const verifyReadings =
    o.verifyReadings === undefined ? 1 : requireInteger('verifyReadings', o.verifyReadings, 0, 100);
  const taps = o.taps ?? 31;
  const band: [number, number] = o.band ?? [Math.min(...o.tonesHz), Math.max(...o.tonesHz)];
  for (const [i, b] of band.entries()) requireFinite(`band[${i}]`, b);
  const start: Trims = { ...ZERO_TRIMS, ...(o.start ?? {}) };
  const refiner = createMultitoneSeeker({ tonesCount: o.tonesHz.length, start, noiseDb, maxReadings });
  const session = await runSession(refiner, o.source ?? functionSource((t) => o.measure(t)), {
    signal: o.signal,
    applier: o.applier,
    timeoutSeconds: o.timeoutSeconds,
    onFailure: o.onFailure,
    maxReadings,
    onReading: (h) => {
      if (h.levels) o.onReading?.({ index: h.index, trims: h.trims, levelsDb: [...h.levels] });
    },
  });
  const history: MultitoneResult['history'] = session.history.map((h) => ({
    index: h.index,
    trims: h.trims,
    levelsDb: h.levels ? [...h.levels] : o.tonesHz.map(() => Number.NaN),
  }));
  const stopReason: StopReason =
    session.stopReason === 'aborted' || session.stopReason === 'measurement-failed'
      ? session.stopReason
      : 'budget';
  const K = o.tonesHz.length;
  const fits = refiner.fits();
  const pts = refiner.points();
  if (!fits) {
    throw new OrthotoneError(
      'MEASUREMENT_FAILED',
      `multi-tone calibration needs at least 3 good readings; got ${Math.min(...pts.map((s) => s.length))}`,
    );
  }

  const tones: ToneOptimum[] = fits.map((f, k) => {
    const t = sidebandTrims([f.cx, f.cy], start);
    return {
      frequencyHz: o.tonesHz[k]!,
      gainDb: t.gainDb,
      phaseDeg: t.phaseDeg,
      uncertainty: Math.sqrt(Math.max(f.cov[0] + f.cov[2], 1e-14)),
      floorDb: (10 * f.logN) / Math.LN10,
    };
  });
  const model = fitImbalanceModel(tones);
  const correction = designCorrection(model, band, fs, taps);
  const residualDb = (hz: number, target: { gainDb: number; phaseDeg: number }): number => {
    const eq = equivalentTrims(correction, {}, hz, fs);
    const [u1, v1] = sidebandPoint(eq);
    const [u0, v0] = sidebandPoint(target);
    return -10 * Math.log10(SIDEBAND_CURVATURE * ((u1 - u0) ** 2 + (v1 - v0) ** 2) + 1e-30);
  };
  const predictedDb = tones.map((t) => residualDb(t.frequencyHz, t));
  let predictedWorstDb = Number.POSITIVE_INFINITY;
  for (let i = 0; i < 64; i++) {
    const f = band[0] * (band[1] / band[0]) ** (i / 63);
    predictedWorstDb = Math.min(predictedWorstDb, residualDb(f, evaluateImbalanceModel(model, f)));
  }
  // The best single setting without a correction: with equal curvature at every tone, the total
  // image power Σ¼[(u−uₖ)² + (v−vₖ)²] is least at the centroid of the per-tone nulls (uₖ, vₖ).
  const single: [number, number] = [
    fits.reduce((acc, f) => acc + f.cx, 0) / K,
    fits.reduce((acc, f) => acc + f.cy, 0) / K,
  ];
  const trims: Trims = { ...start, gainDb: 0, phaseDeg: 0 };
  const verification =
    verifyReadings > 0 && stopReason !== 'aborted' && !o.signal?.aborted
      ? await verify(
          o,
          trims,
          correction,
          verifyReadings,
          predictedDb,
          pts.map((p) => Math.min(...p.map((q) => q.db))),
        )
      : undefined;
  return {
    tones,
    model,
    correction,
    trims,
    singleTrims: sidebandTrims(single, start),
    predictedDb,
    predictedWorstDb,
    readings: history.length,
    history,
    stopReason,
    ...(session.cutShort ? { cutShort: session.cutShort } : {}),
    ...(verification ? { verification } : {}),
  };
}

/**
 * Reads every tone `count` times with the correction applied and compares with the model: levels
 * are averaged in power per tone (failed readings skipped), and a tone more than 6 dB short of
 * what the model allows, or of the lowest level read at that tone during the search (readings
 * cannot show more than the analyzer's floor), raises a warning.
 */
async function verify(
  o: MultitoneOptions,
  trims: Trims,
  correction: Correction,
  count: number,
  predictedDb: readonly number[],
  lowestReadDb: readonly number[],
): Promise<MultitoneVerification> {
  const K = o.tonesHz.length;
  const sums = new Array<number>(K).fill(0);
  const ns = new Array<number>(K).fill(0);
  let readings = 0;
  for (let i = 0; i < count; i++) {
    if (o.signal?.aborted) break;
    readings++;
    try {
      const r = await o.measure(trims, correction);
      if (Array.isArray(r) && r.length === K) {
        r.forEach((db, k) => {
          if (!Number.isFinite(db)) return;
          sums[k] = sums[k]! + 10 ** (db / 10);
          ns[k] = ns[k]! + 1;
        });
      }
    } catch {
      // A failed verification reading leaves that reading out; the others still count.
    }
  }
  const levelsDb = sums.map((p, k) => (ns[k]! > 0 ? 10 * Math.log10(p / ns[k]!) : Number.NaN));
  const measuredDb = levelsDb.map((x) => -x);
  const finite = measuredDb.filter(Number.isFinite);
  const measuredWorstDb = finite.length > 0 ? Math.min(...finite) : Number.NaN;
  const predictedWorstAtTonesDb = Math.min(...predictedDb);
  const short = measuredDb
    .map((m, k) => ({ k, m, allowed: Math.min(predictedDb[k]!, -lowestReadDb[k]!) }))
    .filter((x) => Number.isFinite(x.m) && x.m < x.allowed - 6);
  const warning =
    short.length > 0
      ? `${short.map((x) => `${o.tonesHz[x.k]} Hz measured ${x.m.toFixed(1)} dB`).join(', ')} with the correction, more than 6 dB short of the model's ${short.map((x) => x.allowed.toFixed(1)).join(', ')} dB: check that measure applies the correction it is given (its second argument), and that the device has not changed`
      : undefined;
  return {
    readings,
    levelsDb,
    measuredDb,
    measuredWorstDb,
    predictedWorstAtTonesDb,
    ...(warning ? { warning } : {}),
  };
}

/** Options of {@link createMultitoneSeeker}. */
export interface MultitoneSeekerOptions {
  /** Number of tones each reading returns. */
  tonesCount: number;
  /** Trims to begin from; gain and phase are searched. */
  start: Trims;
  /** Standard deviation of one reading, dB. */
  noiseDb: number;
  /** Budget of readings. */
  maxReadings: number;
}

/** A fitted per-tone null with the covariance of its centre. */
export type ToneFit = NullSurface & { cov: [number, number, number] };

/** The per-tone refiner: the session seeker of {@link calibrateMultitone}. */
export interface MultitoneSeeker extends Seeker<readonly number[]> {
  /**
   * The per-tone fits, or undefined while some tone has fewer than 3 good readings.
   * @throws never
   */
  fits(): ToneFit[] | undefined;
  /**
   * The good readings of each tone, natural units.
   * @throws never
   */
  points(): SurfacePoint[][];
}

/**
 * The per-tone refiner (ask/tell): a null seeker on the mean image power of the tones spends about
 * 60% of the budget, then per-tone fits are refined by jumps and ring probes around the tone whose
 * null is least certain (see the file header).
 * @throws never: options are checked by {@link calibrateMultitone}.
 */
export function createMultitoneSeeker(o: MultitoneSeekerOptions): MultitoneSeeker {
  const K = o.tonesCount;
  const stage1Budget = Math.max(4, Math.round(0.6 * o.maxReadings));
  let stage1: NullSeeker;
  let pts: SurfacePoint[][];
  let fits: ToneFit[];
  let jumped: boolean[];
  let probeSign: number;
  let failures: number;
  let stopped: StopReason | undefined;
  let log: { trims: Trims; levels: readonly number[] | undefined }[];
  let pending: [number, number] | undefined;
  let pendingPlan: (() => void) | undefined;

  const reset = (): void => {
    stage1 = createNullSeeker({
      model: 'known-curvature',
      curvature: SIDEBAND_CURVATURE,
      start: sidebandPoint(o.start),
      noiseDb: o.noiseDb / Math.sqrt(K),
      maxReadings: stage1Budget,
      bounds: [
        [-0.45, 0.85],
        [-0.5, 0.5],
      ],
      maxStep: [0.3, 0.3],
      axisNames: ['gain', 'phase'],
    });
    pts = Array.from({ length: K }, () => []);
    fits = [];
    jumped = new Array<boolean>(K).fill(false);
    probeSign = 1;
    failures = 0;
    stopped = undefined;
    log = [];
    pending = undefined;
    pendingPlan = undefined;
  };
  reset();

  const fitTone = (k: number): void => {
    const s = pts[k]!;
    const floorGuess = 10 ** ((Math.min(...s.map((q) => q.db)) - 10) / 10);
    const e = stage1.estimate();
    const starts: NullSurface[] = [];
    const base = { logC: Math.log(SIDEBAND_CURVATURE), logN: Math.log(floorGuess), s: 0, k: 0 };
    if (fits[k]) starts.push(fits[k]!);
    if (e) starts.push({ ...base, cx: e.centre[0], cy: e.centre[1] });
    const lin = linearPowerFit(s, 'known-curvature', Math.log(SIDEBAND_CURVATURE), floorGuess);
    if (lin) starts.push({ ...lin, s: 0, k: 0 });
    if (starts.length === 0) starts.push({ ...base, cx: s[0]!.x, cy: s[0]!.y });
    const f = fitNullSurface(s, {
      noiseDb: o.noiseDb,
      robust: true,
      starts,
      priors: {
        cx: { mean: starts[0]!.cx, sd: 1 },
        cy: { mean: starts[0]!.cy, sd: 1 },
        logC: { mean: Math.log(SIDEBAND_CURVATURE), sd: 0.15 },
        logN: { mean: Math.log(floorGuess), sd: 3 },
        s: { mean: 0, sd: 0.05 },
        k: { mean: 0, sd: 0.05 },
      },
    });
    fits[k] = { ...f.surface, cov: f.centreCov };
  };
  const enough = (): boolean => pts.every((s) => s.length >= 3);
  const inStage2 = (): boolean => stage1.done && stage1.stopReason !== 'measurement-failed' && enough();
  const done = (): boolean =>
    stopped !== undefined || log.length >= o.maxReadings || failures >= 3 || (stage1.done && !inStage2());

  const planStage2 = (): void => {
    let worst = 0;
    let worstVar = -1;
    fits.forEach((f, k) => {
      const v = f.cov[0] + f.cov[2];
      if (v > worstVar) {
        worstVar = v;
        worst = k;
      }
    });
    const f = fits[worst]!;
    const rf = Math.sqrt(Math.exp(f.logN) / Math.exp(f.logC));
    if (!jumped[worst]) {
      pending = [f.cx, f.cy];
      pendingPlan = () => {
        jumped[worst] = true;
      };
    } else {
      const [a, b, c] = f.cov;
      const angle = 0.5 * Math.atan2(2 * b, a - c);
      const r = Math.max(rf, 2 * Math.sqrt(Math.max(a + c, 0)));
      pending = [f.cx + probeSign * r * Math.cos(angle), f.cy + probeSign * r * Math.sin(angle)];
      pendingPlan = () => {
        probeSign = -probeSign;
        jumped[worst] = false;
      };
    }
  };

  const self: MultitoneSeeker = {
    next() {
      if (done()) return undefined;
      if (!pending) {
        if (!stage1.done) {
          const p = stage1.next();
          if (p) pending = p;
        }
        if (!pending && inStage2()) {
          if (fits.length === 0) for (let k = 0; k < K; k++) fitTone(k);
          planStage2();
        }
      }
      return pending ? sidebandTrims(pending, o.start) : undefined;
    },
    tell(trims, levels) {
      if (done()) {
        throw new OrthotoneError('INVALID_ARGUMENT', 'the multi-tone search has stopped: read no more');
      }
      if (!pending) self.next();
      const p = sidebandPoint({ ...o.start, ...trims });
      const ok = levels !== undefined && levels.length === K && levels.every((x) => Number.isFinite(x));
      log.push({ trims: { ...o.start, ...trims }, levels: ok ? [...levels] : undefined });
      if (ok) {
        failures = 0;
        for (const [k, db] of levels.entries()) pts[k]!.push({ x: p[0], y: p[1], db });
      } else failures++;
      if (!stage1.done) {
        const mean = ok
          ? 10 * Math.log10(levels.reduce((acc, db) => acc + 10 ** (db / 10), 0) / K)
          : Number.NaN;
        stage1.tell(p, mean);
      } else {
        pendingPlan?.();
        if (ok) for (let k = 0; k < K; k++) fitTone(k);
      }
      pending = undefined;
      pendingPlan = undefined;
    },
    undo() {
      const keep = log.slice(0, -1);
      reset();
      for (const r of keep) self.tell(r.trims, r.levels);
    },
    best() {
      const f = enough() && fits.length === K ? fits : undefined;
      const single: [number, number] = f
        ? [f.reduce((acc, x) => acc + x.cx, 0) / K, f.reduce((acc, x) => acc + x.cy, 0) / K]
        : stage1.best().point;
      return {
        trims: sidebandTrims(single, o.start),
        levels: f
          ? f.map((x) => surfaceDb(x, single[0], single[1]))
          : new Array<number>(K).fill(stage1.best().levelDb),
      };
    },
    save(): SavedSeeker {
      return {
        format: 'orthotone-seeker-session',
        version: 1,
        kind: 'multitone',
        readings: log.map((r) => ({ trims: r.trims, levels: r.levels ?? null })),
      };
    },
    restore(state) {
      const st = state as SavedSeeker;
      if (
        st?.format !== 'orthotone-seeker-session' ||
        st.kind !== 'multitone' ||
        !Array.isArray(st.readings)
      ) {
        throw new OrthotoneError(
          'INVALID_DOCUMENT',
          'saved session is not a multi-tone run: resume it with the calibration that saved it',
        );
      }
      reset();
      for (const r of st.readings) {
        if (done()) break;
        self.tell(r.trims, (r.levels as number[] | null) ?? undefined);
      }
    },
    stop(reason) {
      stopped ??= reason;
      pending = undefined;
    },
    get done() {
      return done();
    },
    get stopReason() {
      if (stopped) return stopped;
      if (failures >= 3 || stage1.stopReason === 'measurement-failed') return 'measurement-failed';
      return done() ? 'budget' : undefined;
    },
    get count() {
      return log.length;
    },
    fits() {
      if (!enough()) return undefined;
      if (fits.length < K) for (let k = 0; k < K; k++) fitTone(k);
      return fits;
    },
    points: () => pts,
  };
  return self;
}
