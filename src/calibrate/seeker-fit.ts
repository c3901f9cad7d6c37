/**
 * The null seeker's fit: every reading is a noisy sample of the bowl `P = c·q(x − x*) + N`
 * (quadratic-fit.ts), fitted robustly with priors from the nominal bowl; the seeker tests that
 * bowl against the readings by refitting with shape and scale free, and keeps the looser bowl
 * when it explains them clearly better (DESIGN.md §6). References: as quadratic-fit.ts
 * (Levenberg–Marquardt, Nocedal & Wright §10.3; Huber & Ronchetti §7); the likelihood-ratio test,
 * Wilks (1938), Ann. Math. Statist. 9(1).
 */

import type { SeekerEstimate, SeekerReading } from './null-seeker.js';
import {
  circleCandidates,
  fitNullSurface,
  linearPowerFit,
  type NullSurface,
  type SurfacePoint,
  type SurfacePriors,
} from './quadratic-fit.js';
import { okReadings, type SeekerState } from './seeker-state.js';

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
 * Prior on ln N (the floor): the given floor, else 40 dB below the start, loosely.
 * @throws never
 */
export function floorPrior(st: SeekerState): { mean: number; sd: number } {
  return st.o.floorDb !== undefined
    ? { mean: st.o.floorDb * LN10_10, sd: 0.35 }
    : { mean: (st.startDb - 40) * LN10_10, sd: 3 };
}

/**
 * Readings used in fits: with one axis inactive, only those with that axis at its start.
 * @throws never
 */
export function fitPoints(st: SeekerState): { pts: SurfacePoint[]; src: SeekerReading[] } {
  const src = okReadings(st).filter((r) =>
    st.status.every((s, j) => s !== 'inactive' || r.point[j] === st.o.start[j as 0 | 1]),
  );
  return { pts: src.map((r) => ({ x: r.point[0], y: r.point[1], db: r.db })), src };
}

/**
 * Priors of the fit: the nominal bowl, or the loosened one once the readings showed it off.
 * @throws never
 */
export function priors(st: SeekerState): SurfacePriors {
  const span = 10 * Math.max(st.o.maxStep[0], st.o.maxStep[1]);
  const oneD = st.status.includes('inactive');
  const lc = Math.log(st.o.curvature);
  const free = st.o.model === 'quadratic' && !oneD;
  return {
    cx: st.status[0] === 'inactive' ? { mean: st.o.start[0], sd: 0 } : { mean: st.o.start[0], sd: span },
    cy: st.status[1] === 'inactive' ? { mean: st.o.start[1], sd: 0 } : { mean: st.o.start[1], sd: span },
    logC: {
      mean: lc,
      sd:
        st.o.model === 'known-curvature'
          ? st.loose
            ? Math.max(st.o.curvatureSpread, LOOSE.logC)
            : st.o.curvatureSpread
          : 5,
    },
    logN: floorPrior(st),
    s: oneD ? { mean: 0, sd: 0 } : { mean: 0, sd: free ? 3 : st.loose ? LOOSE.s : 0.05 },
    k: oneD ? { mean: 0, sd: 0 } : { mean: 0, sd: free ? 1 : st.loose ? LOOSE.k : 0.05 },
  };
}

/**
 * Refits the bowl to every reading (robustly) and tests the nominal shape against the loosened one.
 * @throws never
 */
export function refit(st: SeekerState): void {
  const { pts, src } = fitPoints(st);
  if (pts.length < 2) {
    st.fit = undefined;
    return;
  }
  const pr = priors(st);
  const floor = Math.exp(pr.logN.mean);
  const starts: NullSurface[] = [];
  const base = {
    logC: pr.logC.mean,
    logN: pr.logN.mean,
    s: 0,
    k: 0,
  };
  if (st.fit) starts.push(st.fit.surface);
  const cNow = st.fit ? Math.exp(st.fit.surface.logC) : Math.exp(pr.logC.mean);
  const cs = st.fit ? [cNow] : st.o.model === 'known-curvature' ? [cNow] : [cNow, cNow * 30, cNow / 30];
  for (const c of cs) {
    const lin = linearPowerFit(pts, 'known-curvature', Math.log(c), floor);
    if (lin) starts.push({ ...lin, s: 0, k: 0, logC: Math.log(c) });
  }
  if (st.o.model !== 'known-curvature') {
    const lin = linearPowerFit(pts, 'isotropic', 0, floor);
    if (lin) starts.push({ ...lin, s: 0, k: 0 });
  }
  if (st.o.model === 'quadratic') {
    const lin = linearPowerFit(pts, 'quadratic', 0, floor);
    if (lin) starts.push(lin);
  }
  // Circle intersections from the two lowest readings, for the under-determined early fits.
  const sorted = [...pts].sort((a, b) => a.db - b.db);
  if (sorted.length >= 2 && pts.length <= 4) {
    for (const c of cs) {
      for (const cand of circleCandidates(sorted[0]!, sorted[1]!, c, floor)) {
        starts.push({ ...base, logC: Math.log(c), cx: cand.x, cy: cand.y });
      }
    }
  }
  if (starts.length === 0) starts.push({ ...base, cx: sorted[0]!.x, cy: sorted[0]!.y });
  for (const s of starts) {
    if (st.status[0] === 'inactive') s.cx = st.o.start[0];
    if (st.status[1] === 'inactive') s.cy = st.o.start[1];
  }
  st.fit = fitNullSurface(pts, { noiseDb: st.sigma, priors: pr, robust: st.o.robust, starts });
  if (!st.loose && st.o.model !== 'quadratic' && st.o.adaptive && pts.length >= LOOSEN_MIN_READINGS) {
    // Test the model against the readings: refit with the shape and scale free to move off the
    // nominal bowl; when that explains the readings clearly better, keep the looser model.
    st.loose = true;
    const wide = fitNullSurface(pts, {
      noiseDb: st.sigma,
      priors: priors(st),
      robust: st.o.robust,
      starts: [st.fit.surface, ...starts],
    });
    if (st.fit.cost - wide.cost > LOOSEN_COST) st.fit = wide;
    else st.loose = false;
  }
  src.forEach((r, i) => {
    r.weight = st.fit!.weights[i];
    r.residualDb = st.fit!.residualsDb[i];
  });
}

/**
 * The current fit in natural units, or undefined before the first fit.
 * @throws never
 */
export function estimate(st: SeekerState): SeekerEstimate | undefined {
  if (!st.fit) return undefined;
  const s = st.fit.surface;
  const [vxx, vxy, vyy] = st.fit.centreCov;
  const c = Math.exp(s.logC);
  const es = Math.exp(s.s);
  const cEff =
    c * (st.status[0] === 'inactive' ? 1 / es : st.status[1] === 'inactive' ? es : (es + 1 / es) / 2);
  const excess = c * (es * vxx + 2 * s.k * vxy + vyy / es);
  return {
    centre: [s.cx, s.cy],
    centreCov: [vxx, vxy, vyy],
    surface: s,
    floorDb: s.logN / LN10_10,
    floorRadius: Math.sqrt(Math.exp(s.logN) / cEff),
    expectedTrueDb: 10 * Math.log10(Math.max(excess, 1e-30)),
    rmsDb: st.fit.rmsDb,
  };
}
