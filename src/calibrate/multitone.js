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
 * Correction design: with trims zero, the corrected Q of a tone at ω has the phasor
 * `e^{jωD}·(−j·H_QQ(ω) + H_QI(ω))`, D = (L−1)/2, while the ideal correction is
 * `Q' = α(ω)·Q + β(ω)·I` with `α + jβ = G(ω)·e^{jφ(ω)}`. Taking `H_QQ = α·e^{−jωD}` and
 * `H_QI = β·e^{−jωD}` in the form `e^{−jωD}·(C(ω) − j·S(ω))` (cosine series from symmetric taps,
 * sine series from antisymmetric ones) and fitting α and β by least squares over the band gives
 * the pair: `α = C_QQ + S_QI`, `β = C_QI − S_QQ`. References: widely-linear frequency-selective I/Q correction, Anttila,
 * Valkama & Renfors, IEEE TCAS-II 55(4), Apr 2008; delay-based compensation of frequency-dependent
 * imbalance, Kiss & Prodanov, IEEE TCAS-I 51(6), 2004; least-squares FIR design on a frequency
 * grid, Parks & Burrus, Digital Filter Design (1987), ch. 3.
 */
import { OrthotoneError } from '../core/errors.js';
import { ZERO_TRIMS } from '../core/trims.js';
import { degToRad, radToDeg } from '../core/units.js';
import { requireFinite, requireInteger, requirePositive, requireSampleRate } from '../core/validate.js';
import { createNullSeeker } from './null-seeker.js';
import { fitNullSurface, linearPowerFit, surfaceDb } from './quadratic-fit.js';
import { functionSource, runSession } from './session.js';
import { SIDEBAND_CURVATURE, sidebandPoint, sidebandTrims } from './sideband.js';
import { weightedLeastSquares } from './small-linear.js';
/**
 * Evaluates an imbalance model: the gain and phase trim that nulls a tone at `hz` (Hz, > 0).
 * @returns `{ gainDb, phaseDeg }` in dB and degrees (non-finite at `hz` = 0).
 * @throws never
 */
export function evaluateImbalanceModel(m, hz) {
  const r = hz / m.f0;
  return {
    gainDb: m.gainDb[0] + m.gainDb[1] * r * r + m.gainDb[2] / (r * r),
    phaseDeg: radToDeg(m.phase[0] + m.phase[1] * hz + m.phase[2] / hz),
  };
}
/**
 * The gain and phase trim a correction (after `trims`) is equivalent to for a tone at `hz`: the
 * whole path at that one frequency, so a model that knows only scalar trims can evaluate it.
 * @param correction the FIR pair (or undefined for none).
 * @param trims the trims before it (gain and phase used).
 * @param hz tone frequency, Hz.
 * @param sampleRate Hz.
 * @returns trims with gainDb in dB and phaseDeg in degrees; the other trims as given.
 * Method: the correction's FIR pair evaluated at one frequency (see the file header).
 * @throws never (the correction is not re-validated: give one that passed `validateCorrection`).
 */
export function equivalentTrims(correction, trims, hz, sampleRate) {
  const t = { ...ZERO_TRIMS, ...trims };
  if (!correction) return t;
  const w = (2 * Math.PI * hz) / sampleRate;
  const g = 10 ** (t.gainDb / 20);
  const p = degToRad(t.phaseDeg);
  // Q' = a0·Q + b0·I; phasor of Q' = −j·a0 + b0 (I = cos, Q = sin).
  const a0 = g * Math.cos(p);
  const b0 = g * Math.sin(p);
  const d = (correction.qFromQ.length - 1) / 2;
  let hqRe = 0;
  let hqIm = 0;
  let hiRe = 0;
  let hiIm = 0;
  for (let k = 0; k < correction.qFromQ.length; k++) {
    const c = Math.cos(w * (k - d));
    const s = -Math.sin(w * (k - d));
    hqRe += correction.qFromQ[k] * c;
    hqIm += correction.qFromQ[k] * s;
    hiRe += correction.qFromI[k] * c;
    hiIm += correction.qFromI[k] * s;
  }
  // X = H_QQ·(b0 − j·a0) + H_QI (I' = I has phasor 1), delay D removed.
  const xRe = hqRe * b0 + hqIm * a0 + hiRe;
  const xIm = hqIm * b0 - hqRe * a0 + hiIm;
  const alpha = -xIm;
  const beta = xRe;
  return {
    ...t,
    gainDb: 20 * Math.log10(Math.hypot(alpha, beta)),
    phaseDeg: radToDeg(Math.atan2(beta, alpha)),
  };
}
/**
 * Fits the smooth model through per-tone nulls (weighted least squares; fewer terms for fewer tones).
 * @throws {OrthotoneError} INVALID_ARGUMENT for fewer than one tone.
 */
export function fitImbalanceModel(tones) {
  if (tones.length < 1) throw new OrthotoneError('INVALID_ARGUMENT', 'need at least one tone optimum');
  const f0 = Math.exp(tones.reduce((s, t) => s + Math.log(t.frequencyHz), 0) / tones.length);
  const nTerms = Math.min(3, tones.length);
  const w = tones.map((t) => 1 / (t.uncertainty ** 2 + 1e-10));
  const grow = (t) => {
    const r = t.frequencyHz / f0;
    return [1, r * r, 1 / (r * r)].slice(0, nTerms);
  };
  const prow = (t) => [1, t.frequencyHz / f0, f0 / t.frequencyHz].slice(0, nTerms);
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
  const g = [gs?.[0] ?? 0, gs?.[1] ?? 0, gs?.[2] ?? 0];
  const p = [ps?.[0] ?? 0, (ps?.[1] ?? 0) / f0, (ps?.[2] ?? 0) * f0];
  return { gainDb: g, phase: p, f0, skewSeconds: p[1] / (2 * Math.PI) };
}
/**
 * Designs the correction FIR pair realising a model over a band, by least squares on a grid.
 * @param model gain and phase versus frequency.
 * @param band [lo, hi] Hz.
 * @param sampleRate Hz.
 * @param taps odd length.
 * @throws {OrthotoneError} INVALID_ARGUMENT for an even or too short length or a bad band.
 */
export function designCorrection(model, band, sampleRate, taps) {
  requireSampleRate(sampleRate);
  requireInteger('taps', taps, 1, 255);
  if (taps % 2 === 0) throw new OrthotoneError('INVALID_ARGUMENT', `taps ${taps} must be odd`, taps);
  const [lo, hi] = band;
  if (!(lo > 0 && hi > lo && hi < sampleRate / 2)) {
    throw new OrthotoneError('INVALID_ARGUMENT', `band [${lo}, ${hi}] Hz must satisfy 0 < lo < hi < fs/2`);
  }
  const m = (taps - 1) / 2;
  const grid = 128;
  const rows = [];
  const ya = [];
  const yb = [];
  for (let i = 0; i < grid; i++) {
    // Log-spaced grid: the band spans a decade and errors matter equally per octave.
    const f = lo * (hi / lo) ** (i / (grid - 1));
    const w = (2 * Math.PI * f) / sampleRate;
    const row = [];
    for (let k = 0; k <= m; k++) row.push(Math.cos(k * w));
    for (let k = 1; k <= m; k++) row.push(Math.sin(k * w));
    rows.push(row);
    const e = evaluateImbalanceModel(model, f);
    const G = 10 ** (e.gainDb / 20);
    const ph = degToRad(e.phaseDeg);
    ya.push(G * Math.cos(ph));
    yb.push(G * Math.sin(ph));
  }
  const ones = rows.map(() => 1);
  const n = 2 * m + 1;
  // α = A_c + B_s and β = B_c − A_s (cosine parts from symmetric taps, sine parts from
  // antisymmetric taps); a light ridge keeps the series bounded outside the band.
  const ca =
    weightedLeastSquares(rows, ya, ones, n, 1e-10) ?? Float64Array.from({ length: n }, (_, k) => +(k === 0));
  const cb = weightedLeastSquares(rows, yb, ones, n, 1e-10) ?? new Float64Array(n);
  const qFromQ = new Array(taps).fill(0);
  const qFromI = new Array(taps).fill(0);
  qFromQ[m] = ca[0];
  qFromI[m] = cb[0];
  for (let k = 1; k <= m; k++) {
    const aC = ca[k]; // A_c
    const bS = ca[m + k]; // B_s
    const bC = cb[k]; // B_c
    const aS = -cb[m + k]; // A_s
    qFromQ[m + k] = (aC + aS) / 2;
    qFromQ[m - k] = (aC - aS) / 2;
    qFromI[m + k] = (bC + bS) / 2;
    qFromI[m - k] = (bC - bS) / 2;
  }
  return { qFromQ, qFromI };
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
export async function calibrateMultitone(options) {
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
  const band = o.band ?? [Math.min(...o.tonesHz), Math.max(...o.tonesHz)];
  for (const [i, b] of band.entries()) requireFinite(`band[${i}]`, b);
  const start = { ...ZERO_TRIMS, ...(o.start ?? {}) };
  const refiner = createMultitoneSeeker({ tonesCount: o.tonesHz.length, start, noiseDb, maxReadings });
  const session = await runSession(
    refiner,
    functionSource((t) => o.measure(t)),
    {
      signal: o.signal,
      maxReadings,
      onReading: (h) => {
        if (h.levels) o.onReading?.({ index: h.index, trims: h.trims, levelsDb: [...h.levels] });
      },
    },
  );
  const history = session.history.map((h) => ({
    index: h.index,
    trims: h.trims,
    levelsDb: h.levels ? [...h.levels] : o.tonesHz.map(() => Number.NaN),
  }));
  const stopReason =
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
  const tones = fits.map((f, k) => {
    const t = sidebandTrims([f.cx, f.cy], start);
    return {
      frequencyHz: o.tonesHz[k],
      gainDb: t.gainDb,
      phaseDeg: t.phaseDeg,
      uncertainty: Math.sqrt(Math.max(f.cov[0] + f.cov[2], 1e-14)),
      floorDb: (10 * f.logN) / Math.LN10,
    };
  });
  const model = fitImbalanceModel(tones);
  const correction = designCorrection(model, band, fs, taps);
  const residualDb = (hz, target) => {
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
  const single = [fits.reduce((acc, f) => acc + f.cx, 0) / K, fits.reduce((acc, f) => acc + f.cy, 0) / K];
  const trims = { ...start, gainDb: 0, phaseDeg: 0 };
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
    ...(verification ? { verification } : {}),
  };
}
/**
 * Reads every tone `count` times with the correction applied and compares with the model: levels
 * are averaged in power per tone (failed readings skipped), and a tone more than 6 dB short of
 * what the model allows, or of the lowest level read at that tone during the search (readings
 * cannot show more than the analyzer's floor), raises a warning.
 */
async function verify(o, trims, correction, count, predictedDb, lowestReadDb) {
  const K = o.tonesHz.length;
  const sums = new Array(K).fill(0);
  const ns = new Array(K).fill(0);
  let readings = 0;
  for (let i = 0; i < count; i++) {
    if (o.signal?.aborted) break;
    readings++;
    try {
      const r = await o.measure(trims, correction);
      if (Array.isArray(r) && r.length === K) {
        r.forEach((db, k) => {
          if (!Number.isFinite(db)) return;
          sums[k] = sums[k] + 10 ** (db / 10);
          ns[k] = ns[k] + 1;
        });
      }
    } catch {
      // A failed verification reading leaves that reading out; the others still count.
    }
  }
  const levelsDb = sums.map((p, k) => (ns[k] > 0 ? 10 * Math.log10(p / ns[k]) : Number.NaN));
  const measuredDb = levelsDb.map((x) => -x);
  const finite = measuredDb.filter(Number.isFinite);
  const measuredWorstDb = finite.length > 0 ? Math.min(...finite) : Number.NaN;
  const predictedWorstAtTonesDb = Math.min(...predictedDb);
  const short = measuredDb
    .map((m, k) => ({ k, m, allowed: Math.min(predictedDb[k], -lowestReadDb[k]) }))
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
/**
 * The per-tone refiner (ask/tell): a null seeker on the mean image power of the tones spends about
 * 60% of the budget, then per-tone fits are refined by jumps and ring probes around the tone whose
 * null is least certain (see the file header).
 * @throws never: options are checked by {@link calibrateMultitone}.
 */
export function createMultitoneSeeker(o) {
  const K = o.tonesCount;
  const stage1Budget = Math.max(4, Math.round(0.6 * o.maxReadings));
  let stage1;
  let pts;
  let fits;
  let jumped;
  let probeSign;
  let failures;
  let stopped;
  let log;
  let pending;
  let pendingPlan;
  const reset = () => {
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
    jumped = new Array(K).fill(false);
    probeSign = 1;
    failures = 0;
    stopped = undefined;
    log = [];
    pending = undefined;
    pendingPlan = undefined;
  };
  reset();
  const fitTone = (k) => {
    const s = pts[k];
    const floorGuess = 10 ** ((Math.min(...s.map((q) => q.db)) - 10) / 10);
    const e = stage1.estimate();
    const starts = [];
    const base = { logC: Math.log(SIDEBAND_CURVATURE), logN: Math.log(floorGuess), s: 0, k: 0 };
    if (fits[k]) starts.push(fits[k]);
    if (e) starts.push({ ...base, cx: e.centre[0], cy: e.centre[1] });
    const lin = linearPowerFit(s, 'known-curvature', Math.log(SIDEBAND_CURVATURE), floorGuess);
    if (lin) starts.push({ ...lin, s: 0, k: 0 });
    if (starts.length === 0) starts.push({ ...base, cx: s[0].x, cy: s[0].y });
    const f = fitNullSurface(s, {
      noiseDb: o.noiseDb,
      robust: true,
      starts,
      priors: {
        cx: { mean: starts[0].cx, sd: 1 },
        cy: { mean: starts[0].cy, sd: 1 },
        logC: { mean: Math.log(SIDEBAND_CURVATURE), sd: 0.15 },
        logN: { mean: Math.log(floorGuess), sd: 3 },
        s: { mean: 0, sd: 0.05 },
        k: { mean: 0, sd: 0.05 },
      },
    });
    fits[k] = { ...f.surface, cov: f.centreCov };
  };
  const enough = () => pts.every((s) => s.length >= 3);
  const inStage2 = () => stage1.done && stage1.stopReason !== 'measurement-failed' && enough();
  const done = () =>
    stopped !== undefined || log.length >= o.maxReadings || failures >= 3 || (stage1.done && !inStage2());
  const planStage2 = () => {
    let worst = 0;
    let worstVar = -1;
    fits.forEach((f, k) => {
      const v = f.cov[0] + f.cov[2];
      if (v > worstVar) {
        worstVar = v;
        worst = k;
      }
    });
    const f = fits[worst];
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
  const self = {
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
        for (const [k, db] of levels.entries()) pts[k].push({ x: p[0], y: p[1], db });
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
      const single = f
        ? [f.reduce((acc, x) => acc + x.cx, 0) / K, f.reduce((acc, x) => acc + x.cy, 0) / K]
        : stage1.best().point;
      return {
        trims: sidebandTrims(single, o.start),
        levels: f
          ? f.map((x) => surfaceDb(x, single[0], single[1]))
          : new Array(K).fill(stage1.best().levelDb),
      };
    },
    save() {
      return {
        format: 'orthotone-seeker-session',
        version: 1,
        kind: 'multitone',
        readings: log.map((r) => ({ trims: r.trims, levels: r.levels ?? null })),
      };
    },
    restore(state) {
      const st = state;
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
        self.tell(r.trims, r.levels ?? undefined);
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
