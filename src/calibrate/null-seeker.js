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
 * bowl, its priors and stop rules are this library's own (DESIGN.md §6, REFERENCES.md §6).
 */
import { OrthotoneError } from '../core/errors.js';
import { dbToPow } from '../core/units.js';
import { requireFinite, requireInteger, requirePositive } from '../core/validate.js';
import { circleCandidates, fitNullSurface, linearPowerFit, surfaceDb } from './quadratic-fit.js';

const DEFAULTS = Object.freeze({
  start: [0, 0],
  model: 'isotropic',
  curvature: 1,
  curvatureSpread: 0.15,
  noiseDb: 0.5,
  floorDb: undefined,
  targetDb: undefined,
  maxReadings: 16,
  step: [0, 0],
  bounds: [
    [-1, 1],
    [-1, 1],
  ],
  maxStep: [0.1, 0.1],
  axisNames: ['x', 'y'],
  robust: true,
  adaptive: true,
});
const LN10_10 = Math.LN10 / 10;
/**
 * Priors of the loosened bowl (see `adaptive`): ln c may move by ±0.5 (trims acting 0.6–1.6× their
 * nominal units), the aspect ln-ratio by ±0.45 and the cross term by ±0.3 (one standard deviation).
 */
const LOOSE = Object.freeze({ logC: 0.5, s: 0.45, k: 0.3 });
/** Cost drop (robust loss in σ² units) that makes the seeker keep the loosened bowl: about χ²₂ at p = 0.02. */
const LOOSEN_COST = 4;
/** Readings before the nominal bowl is first tested. */
const LOOSEN_MIN_READINGS = 5;
/**
 * Validates null-seeker options merged over the defaults.
 * @throws {OrthotoneError} INVALID_ARGUMENT naming the bad option.
 */
export function resolveSeekerOptions(partial) {
  const o = { ...DEFAULTS, ...stripUndefined(partial) };
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
  for (const j of [0, 1]) {
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
function stripUndefined(p) {
  const out = {};
  for (const k of Object.keys(p)) if (p[k] !== undefined) out[k] = p[k];
  return out;
}
/**
 * Creates a null seeker.
 * @param options partial options merged over the defaults (start [0,0], isotropic, noise 0.5 dB,
 *   16 readings).
 * @throws {OrthotoneError} INVALID_ARGUMENT for a bad option.
 */
export function createNullSeeker(options = {}) {
  const o = resolveSeekerOptions(options);
  const sigma = o.noiseDb;
  const readings = [];
  let status = ['unknown', 'unknown'];
  let stepNow = [0, 0];
  let queue = [];
  let startDb = Number.NaN;
  let fit;
  let lastJump;
  let sinceJump = 0;
  let jumpsInRow = 0;
  let wideProbes = 0;
  let probeIndex = 0;
  let failures = 0;
  let loose = false;
  let stopReason;
  let pending;
  let pendingRole = 'start';
  let pendingProbe;
  const threshold = Math.max(3 * sigma, 1.5);
  const clampAxis = (j, v) => {
    const [lo, hi] = o.bounds[j];
    let x = Math.min(hi, Math.max(lo, v));
    const q = o.step[j];
    if (q > 0) {
      x = Math.round(x / q) * q;
      if (x > hi) x -= q;
      if (x < lo) x += q;
    }
    return x;
  };
  const floorPrior = () =>
    o.floorDb !== undefined
      ? { mean: o.floorDb * LN10_10, sd: 0.35 }
      : { mean: (startDb - 40) * LN10_10, sd: 3 };
  const okReadings = () => readings.filter((r) => Number.isFinite(r.db));
  /** Readings used in fits: with one axis inactive, only those with that axis at its start. */
  const fitPoints = () => {
    const src = okReadings().filter((r) =>
      status.every((s, j) => s !== 'inactive' || r.point[j] === o.start[j]),
    );
    return { pts: src.map((r) => ({ x: r.point[0], y: r.point[1], db: r.db })), src };
  };
  const priors = () => {
    const span = 10 * Math.max(o.maxStep[0], o.maxStep[1]);
    const oneD = status.includes('inactive');
    const lc = Math.log(o.curvature);
    const free = o.model === 'quadratic' && !oneD;
    return {
      cx: status[0] === 'inactive' ? { mean: o.start[0], sd: 0 } : { mean: o.start[0], sd: span },
      cy: status[1] === 'inactive' ? { mean: o.start[1], sd: 0 } : { mean: o.start[1], sd: span },
      logC: {
        mean: lc,
        sd:
          o.model === 'known-curvature'
            ? loose
              ? Math.max(o.curvatureSpread, LOOSE.logC)
              : o.curvatureSpread
            : 5,
      },
      logN: floorPrior(),
      s: oneD ? { mean: 0, sd: 0 } : { mean: 0, sd: free ? 3 : loose ? LOOSE.s : 0.05 },
      k: oneD ? { mean: 0, sd: 0 } : { mean: 0, sd: free ? 1 : loose ? LOOSE.k : 0.05 },
    };
  };
  const refit = () => {
    const { pts, src } = fitPoints();
    if (pts.length < 2) {
      fit = undefined;
      return;
    }
    const pr = priors();
    const floor = Math.exp(pr.logN.mean);
    const starts = [];
    const base = {
      logC: pr.logC.mean,
      logN: pr.logN.mean,
      s: 0,
      k: 0,
    };
    if (fit) starts.push(fit.surface);
    const cNow = fit ? Math.exp(fit.surface.logC) : Math.exp(pr.logC.mean);
    const cs = fit ? [cNow] : o.model === 'known-curvature' ? [cNow] : [cNow, cNow * 30, cNow / 30];
    for (const c of cs) {
      const lin = linearPowerFit(pts, 'known-curvature', Math.log(c), floor);
      if (lin) starts.push({ ...lin, s: 0, k: 0, logC: Math.log(c) });
    }
    if (o.model !== 'known-curvature') {
      const lin = linearPowerFit(pts, 'isotropic', 0, floor);
      if (lin) starts.push({ ...lin, s: 0, k: 0 });
    }
    if (o.model === 'quadratic') {
      const lin = linearPowerFit(pts, 'quadratic', 0, floor);
      if (lin) starts.push(lin);
    }
    // Circle intersections from the two lowest readings, for the under-determined early fits.
    const sorted = [...pts].sort((a, b) => a.db - b.db);
    if (sorted.length >= 2 && pts.length <= 4) {
      for (const c of cs) {
        for (const cand of circleCandidates(sorted[0], sorted[1], c, floor)) {
          starts.push({ ...base, logC: Math.log(c), cx: cand.x, cy: cand.y });
        }
      }
    }
    if (starts.length === 0) starts.push({ ...base, cx: sorted[0].x, cy: sorted[0].y });
    for (const s of starts) {
      if (status[0] === 'inactive') s.cx = o.start[0];
      if (status[1] === 'inactive') s.cy = o.start[1];
    }
    fit = fitNullSurface(pts, { noiseDb: sigma, priors: pr, robust: o.robust, starts });
    if (!loose && o.model !== 'quadratic' && o.adaptive && pts.length >= LOOSEN_MIN_READINGS) {
      // Test the model against the readings: refit with the shape and scale free to move off the
      // nominal bowl; when that explains the readings clearly better, keep the looser model.
      loose = true;
      const wide = fitNullSurface(pts, {
        noiseDb: sigma,
        priors: priors(),
        robust: o.robust,
        starts: [fit.surface, ...starts],
      });
      if (fit.cost - wide.cost > LOOSEN_COST) fit = wide;
      else loose = false;
    }
    src.forEach((r, i) => {
      r.weight = fit.weights[i];
      r.residualDb = fit.residualsDb[i];
    });
  };
  const estimate = () => {
    if (!fit) return undefined;
    const s = fit.surface;
    const [vxx, vxy, vyy] = fit.centreCov;
    const c = Math.exp(s.logC);
    const es = Math.exp(s.s);
    const cEff = c * (status[0] === 'inactive' ? 1 / es : status[1] === 'inactive' ? es : (es + 1 / es) / 2);
    const excess = c * (es * vxx + 2 * s.k * vxy + vyy / es);
    return {
      centre: [s.cx, s.cy],
      centreCov: [vxx, vxy, vyy],
      surface: s,
      floorDb: s.logN / LN10_10,
      floorRadius: Math.sqrt(Math.exp(s.logN) / cEff),
      expectedTrueDb: 10 * Math.log10(Math.max(excess, 1e-30)),
      rmsDb: fit.rmsDb,
    };
  };
  /** Whether the fitted null is trusted as the best setting. */
  const trusted = () => {
    const e = estimate();
    if (!e || !fit) return false;
    const { pts } = fitPoints();
    if (pts.length < fit.freeParameters - 1 || pts.length < 3) return false;
    if (!(e.rmsDb <= Math.max(3 * sigma, 1.5))) return false;
    if (!inBounds(e.centre)) return false;
    // A fitted floor within 10 dB of the start explains the readings by a flat misfit more often
    // than it describes the device (see plan()): such a fit says nothing reliable about the start.
    if (e.floorDb > startLevel() - 10) return false;
    // No wild extrapolation: the null must lie within the distance the lowest reading implies.
    // (A reading the fit rejected, high or low, is no evidence either way.)
    const { pts: all } = fitPoints();
    const kept = all.filter((_, i) => fit.weights[i] > 0);
    const lowest = (kept.length > 0 ? kept : all).sort((a, b) => a.db - b.db)[0];
    const d = Math.hypot(e.centre[0] - lowest.x, e.centre[1] - lowest.y);
    const implied = Math.sqrt(Math.max(dbToPow(lowest.db + 3 * sigma), 0) / Math.exp(e.surface.logC));
    const spread = Math.sqrt(e.centreCov[0] + e.centreCov[2]);
    if (d > 2 * implied + 3 * spread + o.step[0] + o.step[1]) return false;
    // The prediction at the null must not be worse than the lowest kept reading (allowing for that
    // being the lowest of several noisy readings at the floor), and must be clearly better than
    // the start (otherwise the start, or the lowest reading, is the safer answer).
    const predicted = surfaceDb(e.surface, e.centre[0], e.centre[1]);
    return predicted <= lowest.db + 3 * sigma && predicted <= startLevel() - 3 * sigma;
  };
  const inBounds = (p) =>
    p[0] >= o.bounds[0][0] && p[0] <= o.bounds[0][1] && p[1] >= o.bounds[1][0] && p[1] <= o.bounds[1][1];
  const samePoint = (a, b) => a[0] === b[0] && a[1] === b[1];
  /**
   * The start's level, dB: the lowest of its readings that the fit kept (the cautious choice when
   * a repeat disagrees); the fit's level there when the fit rejected them all (a start read 10 dB
   * high would otherwise make anything look better).
   */
  const startLevel = () => {
    const at = okReadings().filter((r) => samePoint(r.point, o.start));
    const kept = at.filter((r) => (r.weight ?? 1) > 0);
    if (kept.length > 0) return Math.min(...kept.map((r) => r.db));
    if (fit) return surfaceDb(fit.surface, o.start[0], o.start[1]);
    return at.length > 0 ? Math.min(...at.map((r) => r.db)) : startDb;
  };
  /** The floor power to discount from the start's level: the larger of the given and fitted floors. */
  const floorPower = () => {
    const given = o.floorDb !== undefined ? dbToPow(o.floorDb) : 0;
    return Math.max(given, fit ? Math.exp(fit.surface.logN) : 0);
  };
  /**
   * An upper bound on the bowl's curvature along any direction: the fitted form's largest
   * eigenvalue, with the known curvature's spread (two standard deviations) or, when the
   * curvature is estimated, a factor 2. Infinite before a fit of unknown curvature.
   */
  const curvatureBound = () => {
    const known = o.model === 'known-curvature';
    if (!fit) return known ? o.curvature * Math.exp(2 * o.curvatureSpread) : Number.POSITIVE_INFINITY;
    const sf = fit.surface;
    const lmax = Math.cosh(sf.s) + Math.sqrt(Math.sinh(sf.s) ** 2 + sf.k * sf.k);
    const c = Math.exp(sf.logC) * lmax;
    return known ? Math.max(c, o.curvature) * Math.exp(2 * o.curvatureSpread) : 2 * c;
  };
  /** Whether the evidence shows `c` beats the start (see {@link NullSeeker.best}). */
  const confirmed = (c) => {
    if (samePoint(c, o.start)) return true;
    const low = dbToPow(startLevel() - 2 * sigma) - floorPower();
    if (!(low > 0)) return false;
    const useFit = fit !== undefined && trusted();
    if (useFit) {
      const s0 = surfaceDb(fit.surface, o.start[0], o.start[1]);
      if (!(surfaceDb(fit.surface, c[0], c[1]) <= s0 - 3 * sigma)) return false;
    }
    const support = supportOf(c, low);
    // Without a trusted fit the start's level rests on its reading alone: an outlier there would
    // make anything look better, so a second reading of the start must agree.
    if (!useFit && startReadsKept() < 2) return false;
    // One supporting reading is enough when the start's own reading stands and an over-determined
    // fit agrees; otherwise two.
    return support >= 2 || (support >= 1 && useFit && startReadsKept() >= 1 && overDetermined());
  };
  /** Whether the data over-determine the fit (two readings more than its loosely held parameters). */
  const overDetermined = () => {
    if (!fit) return false;
    const pr = priors();
    const loose = [pr.cx, pr.cy, pr.logC, pr.logN, pr.s, pr.k].filter((q) => q.sd > 0.5).length;
    return fitPoints().pts.length >= loose + 2;
  };
  /**
   * How many kept readings bound the true level at `c` below `low` (power): reading r at distance
   * d bounds the amplitude there by √P_r + √c_max·d (P_r read 2σ high).
   */
  const supportOf = (c, low) => {
    const root = Math.sqrt(curvatureBound());
    let support = 0;
    for (const r of okReadings()) {
      if (samePoint(r.point, o.start)) continue;
      if ((r.weight ?? 1) < 0.5) continue; // rejected or down-weighted by the fit
      if (r.residualDb !== undefined && r.residualDb < -3 * sigma) continue; // implausibly low
      const d = Math.hypot(r.point[0] - c[0], r.point[1] - c[1]);
      const bound = Math.sqrt(dbToPow(r.db + 2 * sigma)) + (d > 0 ? root * d : 0);
      if (bound * bound <= low) support++;
    }
    return support;
  };
  /** Number of the start's readings the fit kept. */
  const startReadsKept = () =>
    okReadings().filter((r) => samePoint(r.point, o.start) && (r.weight ?? 1) > 0).length;
  /** The setting the plan works around: the trusted fitted null, else the lowest kept reading. */
  const provisional = () => {
    const ok = okReadings();
    if (ok.length === 0) return { point: [...o.start], levelDb: Number.NaN, source: 'start' };
    if (trusted()) {
      const e = estimate();
      const p = [clampAxis(0, e.centre[0]), clampAxis(1, e.centre[1])];
      // The fitted level there plus what the null's remaining uncertainty is expected to add.
      const levelDb = 10 * Math.log10(dbToPow(surfaceDb(e.surface, p[0], p[1])) + dbToPow(e.expectedTrueDb));
      return { point: p, levelDb, source: 'fit' };
    }
    // The lowest reading, but only if it beats the start by more than the noise: otherwise the
    // start is kept (a lucky reading is no reason to move).
    let b = ok[0];
    for (const r of ok) if (r.db < b.db && (r.weight ?? 1) > 0) b = r;
    if (b.db > ok[0].db - 2 * sigma) b = ok[0];
    return samePoint(b.point, o.start)
      ? { point: [...o.start], levelDb: startLevel(), source: 'start' }
      : { point: [...b.point], levelDb: b.db, source: 'reading' };
  };
  const best = () => {
    const ok = okReadings();
    if (ok.length === 0) return { point: [...o.start], levelDb: Number.NaN, source: 'start' };
    const p = provisional();
    if (p.source !== 'start' && confirmed(p.point)) return p;
    // The provisional choice is not shown to beat the start: the lowest kept readings that are.
    const kept = ok
      .filter((r) => (r.weight ?? 1) > 0 && !samePoint(r.point, o.start) && !samePoint(r.point, p.point))
      .sort((a, b) => a.db - b.db)
      .slice(0, 4);
    for (const r of kept)
      if (confirmed(r.point)) return { point: [...r.point], levelDb: r.db, source: 'reading' };
    return { point: [...o.start], levelDb: startLevel(), source: 'start' };
  };
  const rounded = (p) => [clampAxis(0, p[0]), clampAxis(1, p[1])];
  const nearestRead = (p) => {
    let d = Number.POSITIVE_INFINITY;
    for (const r of okReadings()) d = Math.min(d, Math.hypot(r.point[0] - p[0], r.point[1] - p[1]));
    return d;
  };
  /**
   * The floor is only believed when the last few readings include a ring probe (a reading on the
   * bowl's wall, which separates "near the null over a floor" from "on a flat misfit") and all of
   * them agree with the fit.
   */
  const recentFitConsistent = () => {
    const recent = okReadings().slice(-3);
    if (!recent.some((r) => r.role === 'probe') || !fit) return false;
    return recent.every(
      (r) => Math.abs(r.db - surfaceDb(fit.surface, r.point[0], r.point[1])) <= 2.5 * sigma,
    );
  };
  /**
   * Evidence of a floor: several distinct settings, kept by the fit, reading the fitted floor's level
   * within the noise (a bowl misread as flat puts its readings at scattered levels instead).
   */
  const floorEvidence = (floorDb) => {
    const e = estimate();
    if (!e) return false;
    const tol = Math.max(2 * sigma, 1);
    const at = [];
    for (const r of okReadings()) {
      if ((r.weight ?? 1) < 0.5 || Math.abs(r.db - floorDb) > tol) continue;
      if (!at.some((p) => samePoint(p, r.point))) at.push(r.point);
    }
    if (at.length < 3) return false;
    // The wall must have been read around the null in two independent directions: probes on one
    // line leave a null off that line unseen (a skewed bowl then looks like a floor).
    const reach = 2.5 * Math.max(e.floorRadius, Math.sqrt(e.centreCov[0] + e.centreCov[2]));
    const dirs = [];
    for (const r of okReadings()) {
      if ((r.weight ?? 1) < 0.5) continue;
      const dx = r.point[0] - e.centre[0];
      const dy = r.point[1] - e.centre[1];
      const d = Math.hypot(dx, dy);
      if (d > 0.2 * e.floorRadius && d <= reach) dirs.push([dx / d, dy / d]);
    }
    let spread2d = false;
    for (let i = 0; i < dirs.length && !spread2d; i++)
      for (let j = i + 1; j < dirs.length; j++)
        if (Math.abs(dirs[i][0] * dirs[j][1] - dirs[i][1] * dirs[j][0]) >= 0.5) spread2d = true;
    if (!spread2d || !fit) return false;
    // No fit with the bowl's shape and scale left free may put the floor 6 dB deeper.
    const { pts } = fitPoints();
    const pr = priors();
    const free = fitNullSurface(pts, {
      noiseDb: sigma,
      robust: o.robust,
      starts: [fit.surface],
      priors: {
        ...pr,
        logC: { mean: pr.logC.mean, sd: Math.max(pr.logC.sd, 5) },
        s: pr.s.sd === 0 ? pr.s : { mean: 0, sd: 3 },
        k: pr.k.sd === 0 ? pr.k : { mean: 0, sd: 1 },
      },
    });
    return !(free.surface.logN / LN10_10 <= floorDb - 6 && free.rmsDb <= Math.max(3 * sigma, 1.5));
  };
  const checkStop = () => {
    if (stopReason) return;
    if (readings.length >= o.maxReadings) {
      stopReason = 'budget';
      return;
    }
    if (failures >= 3) {
      stopReason = 'measurement-failed';
      return;
    }
    if (status[0] === 'inactive' && status[1] === 'inactive') {
      stopReason = 'trim-inactive';
      return;
    }
    if (queue.length > 0 || status.includes('unknown')) return;
    const e = estimate();
    if (!e || !trusted() || !lastJump) return;
    const b = best().point;
    const spread = Math.sqrt(e.centreCov[0] + e.centreCov[2]);
    const atBest = Math.hypot(b[0] - lastJump[0], b[1] - lastJump[1]) <= Math.max(0.5 * spread, 1e-15);
    if (!atBest) return;
    if (o.targetDb !== undefined && e.expectedTrueDb + 5 <= -o.targetDb) {
      stopReason = 'target';
      return;
    }
    // A floor that high above the start's level is more likely a misfit than a result: keep reading.
    if (
      e.expectedTrueDb <= e.floorDb - 10 &&
      sinceJump === 0 &&
      e.floorDb <= startDb - 10 &&
      recentFitConsistent() &&
      floorEvidence(e.floorDb)
    ) {
      stopReason = 'floor';
      return;
    }
    // Quantised trims: stop once the null is located to a fraction of each axis's own step (the
    // finer axis sets the pace), so rounding it picks the best grid point.
    const [q0, q1] = o.step;
    // A null near the middle between two grid points is read on until its side is clear.
    const axisDone = (q, v, j) => {
      if (status[j] === 'inactive') return true;
      const sd = Math.sqrt(v);
      const frac = e.centre[j] / q - Math.floor(e.centre[j] / q);
      return q > 0 && sd < 0.3 * q && Math.abs(frac - 0.5) * q > 1.5 * sd;
    };
    if ((q0 > 0 || q1 > 0) && axisDone(q0, e.centreCov[0], 0) && axisDone(q1, e.centreCov[2], 1)) {
      stopReason = 'resolution';
    }
  };
  const plan = () => {
    pending = undefined;
    pendingProbe = undefined;
    if (stopReason) return;
    if (readings.length === 0 || okReadings().length === 0) {
      pending = [...o.start];
      pendingRole = 'start';
      return;
    }
    const last = readings[readings.length - 1];
    if (!Number.isFinite(last.db)) {
      // Retry the setting whose reading failed.
      pending = [...last.point];
      pendingRole = last.role;
      pendingProbe = lastProbe;
      return;
    }
    if (o.maxReadings - readings.length === 1 && confirmLast()) return;
    const p0 = o.start;
    if (queue.length > 0) {
      const pr = queue[0];
      const p = [...p0];
      p[pr.axis] = p0[pr.axis] + pr.sign * pr.step;
      let r = rounded(p);
      if (r[pr.axis] === p0[pr.axis]) {
        // Pushed back onto the start by rounding or a bound: step the other way, or one quantum.
        p[pr.axis] = p0[pr.axis] - pr.sign * pr.step;
        r = rounded(p);
        if (r[pr.axis] === p0[pr.axis] && o.step[pr.axis] > 0) {
          p[pr.axis] = p0[pr.axis] + pr.sign * o.step[pr.axis];
          r = rounded(p);
        }
      }
      pending = r;
      pendingRole = 'probe';
      pendingProbe = pr;
      return;
    }
    const e = estimate();
    const centre = e && trusted() ? e.centre : provisional().point;
    const target = rounded([centre[0], centre[1]]);
    const remaining = o.maxReadings - readings.length;
    const spread = e ? Math.sqrt(e.centreCov[0] + e.centreCov[2]) : 0;
    const moved =
      lastJump === undefined || Math.hypot(target[0] - lastJump[0], target[1] - lastJump[1]) > 0.5 * spread;
    const unread = nearestRead(target) > Math.max(0.25 * spread, 1e-15);
    if (unread && (remaining === 1 || sinceJump > 0 || (moved && jumpsInRow < 2))) {
      pending = target;
      pendingRole = 'jump';
      return;
    }
    // A probe on the ring: along the direction the null is least certain, alternating sides.
    let radius;
    let dir;
    if (e) {
      const [a, b, c] = e.centreCov;
      const tr = a + c;
      const disc = Math.sqrt(Math.max(0, ((a - c) / 2) ** 2 + b * b));
      const lmax = tr / 2 + disc;
      const angle = 0.5 * Math.atan2(2 * b, a - c) + (probeIndex % 4 >= 2 ? Math.PI / 2 : 0);
      dir = [Math.cos(angle), Math.sin(angle)];
      radius = Math.max(e.floorRadius, 2 * Math.sqrt(Math.max(lmax, 0)));
    } else {
      dir = [1, 0];
      radius = stepNow[0] || o.maxStep[0];
    }
    if (e && e.floorDb > startDb - 10) {
      // The fit explains the readings by a floor close to the start's level: either the start is
      // already at the floor or the bowl was misread (e.g. an outlier fixed its curvature).
      // Look wider, doubling each time, until the wall of the bowl shows again.
      wideProbes++;
      radius = Math.max(radius, radius * 2 ** (wideProbes - 1));
    }
    if (status[0] === 'inactive') dir = [0, 1];
    if (status[1] === 'inactive') dir = [1, 0];
    const sgn = probeIndex % 2 === 0 ? 1 : -1;
    radius = Math.min(radius, Math.max(o.maxStep[0], o.maxStep[1]));
    let p = rounded([centre[0] + sgn * radius * dir[0], centre[1] + sgn * radius * dir[1]]);
    for (let grow = 0; grow < 4 && nearestRead(p) === 0; grow++) {
      // Quantised trims: push the probe out until it reaches an unread setting.
      radius += Math.max(o.step[0], o.step[1]);
      p = rounded([centre[0] + sgn * radius * dir[0], centre[1] + sgn * radius * dir[1]]);
    }
    pending = p;
    pendingRole = 'probe';
  };
  /**
   * The last reading is spent where it decides the result when the candidate is not yet shown to
   * beat the start: on the candidate itself or, without a trusted fit, when readings already
   * support it, on the start again (its single reading is then all that says how good it was).
   * @returns true when it planned that reading.
   */
  const confirmLast = () => {
    const e = estimate();
    const useFit = e !== undefined && trusted();
    const centre = useFit ? e.centre : provisional().point;
    const target = rounded([centre[0], centre[1]]);
    if (samePoint(target, o.start) || confirmed(target)) return false;
    const low = dbToPow(startLevel() - 2 * sigma) - floorPower();
    const needStart = !useFit && startReadsKept() < 2 && low > 0 && supportOf(target, low) >= 2;
    pending = needStart ? [...o.start] : target;
    pendingRole = needStart ? 'probe' : 'jump';
    return true;
  };
  let lastProbe;
  const afterStart = (db) => {
    startDb = db;
    const P0 = dbToPow(db);
    const floor = o.floorDb !== undefined ? dbToPow(o.floorDb) : 0;
    const d0 = Math.sqrt(Math.max(P0 - floor, P0 * 0.05) / o.curvature);
    for (const j of [0, 1]) {
      stepNow[j] = Math.min(o.maxStep[j], Math.max(d0, o.step[j]));
    }
    queue = [
      { axis: 0, sign: 1, step: stepNow[0] },
      { axis: 1, sign: 1, step: stepNow[1] },
    ];
  };
  const afterProbe = (pr, db) => {
    queue.shift();
    const moved = Math.abs(db - startDb) > threshold;
    if (moved) {
      status[pr.axis] = 'active';
      if (pr.axis === 0 && o.model !== 'known-curvature' && queue[0]?.axis === 1 && queue[0].sign === 1) {
        // Unknown curvature: a probe far beyond the null reads ρ = P1/P0 ≫ 1, and the distance to
        // the null is then about step/√ρ; size the second axis's probe to match.
        const rho = dbToPow(db - startDb);
        if (rho > 4) {
          const s = Math.max(pr.step / Math.sqrt(rho), o.step[1], 1e-12);
          queue[0] = { ...queue[0], step: Math.min(s, o.maxStep[1]) };
          stepNow[1] = queue[0].step;
        }
      }
      return;
    }
    if (pr.sign === 1) {
      queue.push({ axis: pr.axis, sign: -1, step: pr.step });
      return;
    }
    if (pr.step >= o.maxStep[pr.axis]) {
      status[pr.axis] = 'inactive';
      return;
    }
    const s = Math.min(pr.step * 4, o.maxStep[pr.axis]);
    stepNow[pr.axis] = s;
    queue.push({ axis: pr.axis, sign: 1, step: s });
  };
  const record = (point, db) => {
    // A setting the seeker did not propose (another seeker's, in a shared sequence) is an extra
    // probe: it feeds the fit but advances no plan. A person's small deviation from the proposal
    // (rounding on a dial) still counts as the proposed reading.
    const proposed =
      pending !== undefined &&
      Math.abs(point[0] - pending[0]) <= 0.05 * (Math.abs(pending[0] - o.start[0]) + stepNow[0]) + 1e-15 &&
      Math.abs(point[1] - pending[1]) <= 0.05 * (Math.abs(pending[1] - o.start[1]) + stepNow[1]) + 1e-15;
    const role = readings.length === 0 || Number.isNaN(startDb) ? 'start' : proposed ? pendingRole : 'probe';
    const pr = proposed ? pendingProbe : undefined;
    readings.push({ point: [point[0], point[1]], db, role });
    if (!Number.isFinite(db)) {
      failures++;
      lastProbe = pr;
      return;
    }
    failures = 0;
    if (role === 'start' && Number.isNaN(startDb)) afterStart(db);
    else if (pr && queue[0] === pr) afterProbe(pr, db);
    if (role === 'jump') {
      lastJump = [point[0], point[1]];
      sinceJump = 0;
      jumpsInRow++;
    } else if (role === 'probe' && !pr) {
      sinceJump++;
      probeIndex++;
      jumpsInRow = 0;
    }
    if (queue.length === 0 && !status.includes('unknown')) refit();
    else if (queue.length === 0) refit();
  };
  const seeker = {
    next() {
      if (stopReason) return undefined;
      if (!pending) plan();
      return pending ? [pending[0], pending[1]] : undefined;
    },
    tell(point, db) {
      if (stopReason) {
        throw new OrthotoneError(
          'INVALID_ARGUMENT',
          `the seeker has stopped (${stopReason}): read no more settings, take best()`,
        );
      }
      requireFinite('point[0]', point[0]);
      requireFinite('point[1]', point[1]);
      if (!pending) plan();
      record(point, db);
      checkStop();
      plan();
    },
    undo() {
      if (readings.length === 0) return;
      const keep = readings.slice(0, -1).map((r) => ({ point: r.point, db: r.db }));
      reset();
      for (const r of keep) seeker.tell(r.point, r.db);
    },
    stop(reason) {
      if (!stopReason) stopReason = reason;
      pending = undefined;
    },
    get done() {
      return stopReason !== undefined;
    },
    get stopReason() {
      return stopReason;
    },
    get count() {
      return readings.length;
    },
    best,
    estimate,
    readings: () => readings,
    axes: () => [status[0], status[1]],
    save: () => ({
      format: 'orthotone-seeker',
      version: 1,
      options: { ...o },
      readings: readings.map((r) => ({
        point: [r.point[0], r.point[1]],
        db: Number.isFinite(r.db) ? r.db : null,
      })),
    }),
    options: o,
  };
  function reset() {
    readings.length = 0;
    status = ['unknown', 'unknown'];
    stepNow = [0, 0];
    queue = [];
    startDb = Number.NaN;
    fit = undefined;
    lastJump = undefined;
    sinceJump = 0;
    jumpsInRow = 0;
    wideProbes = 0;
    probeIndex = 0;
    failures = 0;
    loose = false;
    stopReason = undefined;
    pending = undefined;
    pendingProbe = undefined;
    lastProbe = undefined;
  }
  return seeker;
}
/**
 * Recreates a seeker from {@link NullSeeker.save} output by replaying its readings (the seeker is
 * deterministic given its readings).
 * @throws {OrthotoneError} INVALID_DOCUMENT when the state is not a saved seeker.
 */
export function restoreNullSeeker(state) {
  const s = state;
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
