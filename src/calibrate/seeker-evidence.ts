/**
 * The null seeker's evidence rules: when the fitted null is trusted, when a setting is shown to
 * beat the start (so a calibration never ends worse than it began), and when the readings show a
 * floor (several settings at the floor's level, the wall read in two directions, and no free fit
 * putting the floor 6 dB deeper). See NullSeeker.best for the bound used (DESIGN.md §6).
 */
import { dbToPow } from '../core/units.js';
import type { SeekerBest } from './null-seeker.js';
import { fitNullSurface, surfaceDb } from './quadratic-fit.js';
import { estimate, fitPoints, priors } from './seeker-fit.js';
import { clampAxis, inBounds, okReadings, type SeekerState, samePoint } from './seeker-state.js';

const LN10_10 = Math.LN10 / 10;

/**
 * Whether the fitted null is trusted as the best setting.
 * @throws never
 */
export function trusted(st: SeekerState): boolean {
  const e = estimate(st);
  if (!e || !st.fit) return false;
  const { pts } = fitPoints(st);
  if (pts.length < st.fit.freeParameters - 1 || pts.length < 3) return false;
  if (!(e.rmsDb <= Math.max(3 * st.sigma, 1.5))) return false;
  if (!inBounds(st, e.centre)) return false;
  // A fitted floor within 10 dB of the start explains the readings by a flat misfit more often
  // than it describes the device (see plan()): such a fit says nothing reliable about the start.
  if (e.floorDb > startLevel(st) - 10) return false;
  // No wild extrapolation: the null must lie within the distance the lowest reading implies.
  // (A reading the fit rejected, high or low, is no evidence either way.)
  const { pts: all } = fitPoints(st);
  const kept = all.filter((_, i) => st.fit!.weights[i]! > 0);
  const lowest = (kept.length > 0 ? kept : all).sort((a, b) => a.db - b.db)[0]!;
  const d = Math.hypot(e.centre[0] - lowest.x, e.centre[1] - lowest.y);
  const implied = Math.sqrt(Math.max(dbToPow(lowest.db + 3 * st.sigma), 0) / Math.exp(e.surface.logC));
  const spread = Math.sqrt(e.centreCov[0] + e.centreCov[2]);
  if (d > 2 * implied + 3 * spread + st.o.step[0] + st.o.step[1]) return false;
  // The prediction at the null must not be worse than the lowest kept reading (allowing for that
  // being the lowest of several noisy readings at the floor), and must be clearly better than
  // the start (otherwise the start, or the lowest reading, is the safer answer).
  const predicted = surfaceDb(e.surface, e.centre[0], e.centre[1]);
  return predicted <= lowest.db + 3 * st.sigma && predicted <= startLevel(st) - 3 * st.sigma;
}

/**
 * The start's level, dB: the lowest of its readings that the fit kept (the cautious choice when
 * a repeat disagrees); the fit's level there when the fit rejected them all (a start read 10 dB
 * high would otherwise make anything look better).
 * @throws never
 */
export function startLevel(st: SeekerState): number {
  const at = okReadings(st).filter((r) => samePoint(r.point, st.o.start));
  const kept = at.filter((r) => (r.weight ?? 1) > 0);
  if (kept.length > 0) return Math.min(...kept.map((r) => r.db));
  if (st.fit) return surfaceDb(st.fit.surface, st.o.start[0], st.o.start[1]);
  // No fit: no reading has a weight yet, so every reading of the start was kept (above); none was read.
  return st.startDb;
}

/**
 * The floor power to discount from the start's level: the larger of the given and fitted floors.
 * @throws never
 */
export function floorPower(st: SeekerState): number {
  const given = st.o.floorDb !== undefined ? dbToPow(st.o.floorDb) : 0;
  return Math.max(given, st.fit ? Math.exp(st.fit.surface.logN) : 0);
}

/**
 * An upper bound on the bowl's curvature along any direction: the fitted form's largest
 * eigenvalue, with the known curvature's spread (two standard deviations) or, when the
 * curvature is estimated, a factor 2. Infinite before a fit of unknown curvature.
 * @throws never
 */
export function curvatureBound(st: SeekerState): number {
  const known = st.o.model === 'known-curvature';
  if (!st.fit) return known ? st.o.curvature * Math.exp(2 * st.o.curvatureSpread) : Number.POSITIVE_INFINITY;
  const sf = st.fit.surface;
  const lmax = Math.cosh(sf.s) + Math.sqrt(Math.sinh(sf.s) ** 2 + sf.k * sf.k);
  const c = Math.exp(sf.logC) * lmax;
  return known ? Math.max(c, st.o.curvature) * Math.exp(2 * st.o.curvatureSpread) : 2 * c;
}

/**
 * Whether the evidence shows `c` beats the start (see {@link NullSeeker.best}).
 * @throws never
 */
export function confirmed(st: SeekerState, c: readonly [number, number]): boolean {
  if (samePoint(c, st.o.start)) return true;
  // A start at or below the floor leaves low ≤ 0, which no reading can bound (support stays 0 below).
  const low = dbToPow(startLevel(st) - 2 * st.sigma) - floorPower(st);
  const useFit = trusted(st); // never without a fit
  if (useFit) {
    const s0 = surfaceDb(st.fit!.surface, st.o.start[0], st.o.start[1]);
    if (!(surfaceDb(st.fit!.surface, c[0], c[1]) <= s0 - 3 * st.sigma)) return false;
  }
  const support = supportOf(st, c, low);
  // Without a trusted fit the start's level rests on its reading alone: an outlier there would
  // make anything look better, so a second reading of the start must agree.
  if (!useFit && startReadsKept(st) < 2) return false;
  // One supporting reading is enough when the start's own reading stands and an over-determined
  // fit agrees; otherwise two.
  return support >= 2 || (support >= 1 && useFit && startReadsKept(st) >= 1 && overDetermined(st));
}

/**
 * Whether the data over-determine the fit (two readings more than its loosely held parameters).
 * @throws never
 */
export function overDetermined(st: SeekerState): boolean {
  if (!st.fit) return false;
  const pr = priors(st);
  const loose = [pr.cx, pr.cy, pr.logC, pr.logN, pr.s, pr.k].filter((q) => q.sd > 0.5).length;
  return fitPoints(st).pts.length >= loose + 2;
}

/**
 * How many kept readings bound the true level at `c` below `low` (power): reading r at distance
 * d bounds the amplitude there by √P_r + √c_max·d (P_r read 2σ high).
 * @throws never
 */
export function supportOf(st: SeekerState, c: readonly [number, number], low: number): number {
  const root = Math.sqrt(curvatureBound(st));
  let support = 0;
  for (const r of okReadings(st)) {
    if (samePoint(r.point, st.o.start)) continue;
    if ((r.weight ?? 1) < 0.5) continue; // rejected or down-weighted by the fit
    if ((r.residualDb ?? 0) < -3 * st.sigma) continue; // implausibly low
    const d = Math.hypot(r.point[0] - c[0], r.point[1] - c[1]);
    const bound = Math.sqrt(dbToPow(r.db + 2 * st.sigma)) + (d > 0 ? root * d : 0);
    if (bound * bound <= low) support++;
  }
  return support;
}

/**
 * Number of the start's readings the fit kept.
 * @throws never
 */
export function startReadsKept(st: SeekerState): number {
  return okReadings(st).filter((r) => samePoint(r.point, st.o.start) && (r.weight ?? 1) > 0).length;
}

/**
 * The setting the plan works around: the trusted fitted null, else the lowest kept reading.
 * @throws never
 */
export function provisional(st: SeekerState): SeekerBest {
  const ok = okReadings(st);
  if (ok.length === 0) return { point: [...st.o.start], levelDb: Number.NaN, source: 'start' };
  if (trusted(st)) {
    const e = estimate(st)!;
    const p: [number, number] = [clampAxis(st, 0, e.centre[0]), clampAxis(st, 1, e.centre[1])];
    // The fitted level there plus what the null's remaining uncertainty is expected to add.
    const levelDb = 10 * Math.log10(dbToPow(surfaceDb(e.surface, p[0], p[1])) + dbToPow(e.expectedTrueDb));
    return { point: p, levelDb, source: 'fit' };
  }
  // The lowest reading, but only if it beats the start by more than the noise: otherwise the
  // start is kept (a lucky reading is no reason to move).
  let b = ok[0]!;
  for (const r of ok) if (r.db < b.db && (r.weight ?? 1) > 0) b = r;
  if (b.db > ok[0]!.db - 2 * st.sigma) b = ok[0]!;
  return samePoint(b.point, st.o.start)
    ? { point: [...st.o.start], levelDb: startLevel(st), source: 'start' }
    : { point: [...b.point], levelDb: b.db, source: 'reading' };
}

/**
 * The best setting so far (see NullSeeker.best).
 * @throws never
 */
export function best(st: SeekerState): SeekerBest {
  // With no reading this ends on the start at an unknown level (startLevel is then NaN).
  const p = provisional(st);
  if (p.source !== 'start' && confirmed(st, p.point)) return p;
  // The provisional choice is not shown to beat the start: the lowest kept readings that are.
  const kept = okReadings(st)
    .filter((r) => (r.weight ?? 1) > 0 && !samePoint(r.point, st.o.start) && !samePoint(r.point, p.point))
    .sort((a, b) => a.db - b.db)
    .slice(0, 4);
  for (const r of kept)
    if (confirmed(st, r.point)) return { point: [...r.point], levelDb: r.db, source: 'reading' };
  return { point: [...st.o.start], levelDb: startLevel(st), source: 'start' };
}

/**
 * The floor is only believed when the last few readings include a ring probe (a reading on the
 * bowl's wall, which separates "near the null over a floor" from "on a flat misfit") and all of
 * them agree with the fit.
 * @throws never
 */
export function recentFitConsistent(st: SeekerState): boolean {
  const recent = okReadings(st).slice(-3);
  if (!recent.some((r) => r.role === 'probe') || !st.fit) return false;
  return recent.every(
    (r) => Math.abs(r.db - surfaceDb(st.fit!.surface, r.point[0], r.point[1])) <= 2.5 * st.sigma,
  );
}

/**
 * Evidence of a floor: several distinct settings, kept by the fit, reading the fitted floor's level
 * within the noise (a bowl misread as flat puts its readings at scattered levels instead).
 * @throws never
 */
export function floorEvidence(st: SeekerState, floorDb: number): boolean {
  const e = estimate(st);
  if (!e) return false;
  const tol = Math.max(2 * st.sigma, 1);
  const at: [number, number][] = [];
  for (const r of okReadings(st)) {
    if ((r.weight ?? 1) < 0.5 || Math.abs(r.db - floorDb) > tol) continue;
    if (!at.some((p) => samePoint(p, r.point))) at.push(r.point);
  }
  if (at.length < 3) return false;
  // The wall must have been read around the null in two independent directions: probes on one
  // line leave a null off that line unseen (a skewed bowl then looks like a floor).
  const reach = 2.5 * Math.max(e.floorRadius, Math.sqrt(e.centreCov[0] + e.centreCov[2]));
  const dirs: [number, number][] = [];
  for (const r of okReadings(st)) {
    if ((r.weight ?? 1) < 0.5) continue;
    const dx = r.point[0] - e.centre[0];
    const dy = r.point[1] - e.centre[1];
    const d = Math.hypot(dx, dy);
    if (d > 0.2 * e.floorRadius && d <= reach) dirs.push([dx / d, dy / d]);
  }
  let spread2d = false;
  for (let i = 0; i < dirs.length && !spread2d; i++)
    for (let j = i + 1; j < dirs.length; j++)
      if (Math.abs(dirs[i]![0] * dirs[j]![1] - dirs[i]![1] * dirs[j]![0]) >= 0.5) spread2d = true;
  if (!spread2d || !st.fit) return false;
  // No fit with the bowl's shape and scale left free may put the floor 6 dB deeper.
  const { pts } = fitPoints(st);
  const pr = priors(st);
  const free = fitNullSurface(pts, {
    noiseDb: st.sigma,
    robust: st.o.robust,
    starts: [st.fit.surface],
    priors: {
      ...pr,
      logC: { mean: pr.logC.mean, sd: Math.max(pr.logC.sd, 5) },
      s: pr.s.sd === 0 ? pr.s : { mean: 0, sd: 3 },
      k: pr.k.sd === 0 ? pr.k : { mean: 0, sd: 1 },
    },
  });
  return !(free.surface.logN / LN10_10 <= floorDb - 6 && free.rmsDb <= Math.max(3 * st.sigma, 1.5));
}
