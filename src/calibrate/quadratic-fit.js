/**
 * Fits of the null surface seen through scalar level readings (DESIGN.md §6).
 *
 * Near a null, the power read (relative to the wanted tone) is a quadratic bowl over a floor:
 * `P(x, y) = c·q(x − x*, y − y*) + N`, `q(dx, dy) = e^s·dx² + 2k·dx·dy + e^−s·dy²` (|k| < 1), and a
 * reading is `10·log10 P` plus Gaussian noise in dB. The isotropic case (s = k = 0) is exact for the
 * sideband in the linear trim coordinates and for the carrier when DC is added last; s and k model
 * trims that act through hardware (unequal sensitivities, cross-coupling).
 *
 * Two fits are provided: a weighted linear least-squares fit in power (an initialiser, exact when
 * the readings are noiseless and far above the floor) and a robust Levenberg–Marquardt fit in dB
 * with the floor term and Gaussian priors on every parameter (Huber, then Tukey's biweight once the
 * data over-determine the model). References: Levenberg–Marquardt as in Nocedal & Wright, Numerical
 * Optimization, 2nd ed., §10.3; M-estimation by iteratively reweighted least squares with Huber and
 * Tukey weights, Huber & Ronchetti, Robust Statistics, 2nd ed., §7.
 */
import { invert, solveInPlace, weightedLeastSquares } from './small-linear.js';

const DB = 10 / Math.LN10;
const K_MAX = 0.98;
const HUBER = 1.5;
const TUKEY = 4.685;
/**
 * Power of the surface at (x, y): `c·q(x − cx, y − cy) + N`, a power ratio on the readings' scale
 * (relative to the wanted tone for dBc readings); x, y in the seeker's coordinates.
 * @throws never
 */
export function surfacePower(p, x, y) {
  const dx = x - p.cx;
  const dy = y - p.cy;
  const es = Math.exp(p.s);
  return Math.exp(p.logC) * (es * dx * dx + 2 * p.k * dx * dy + (dy * dy) / es) + Math.exp(p.logN);
}
/**
 * Level of the surface at (x, y), dB: `10·log10` of {@link surfacePower}.
 * @throws never
 */
export function surfaceDb(p, x, y) {
  return DB * Math.log(surfacePower(p, x, y));
}
/**
 * The quadratic form of the surface without the floor, `c·q(dx, dy)` (power ratio) at offset
 * (dx, dy) from the null.
 * @throws never
 */
export function surfaceExcess(p, dx, dy) {
  const es = Math.exp(p.s);
  return Math.exp(p.logC) * (es * dx * dx + 2 * p.k * dx * dy + (dy * dy) / es);
}
const toVec = (p) => Float64Array.of(p.cx, p.cy, p.logC, p.logN, p.s, p.k);
const fromVec = (v) => ({
  cx: v[0],
  cy: v[1],
  logC: v[2],
  logN: v[3],
  s: v[4],
  k: v[5],
});
// Residuals are model minus reading, in σ. Outliers in level readings come mostly from added power
// (interference, a transient, a mis-set range) and read high (e < 0), but a reading can also read
// low (a range or reference level mis-set, a mistyped digit, a dropout): a low outlier is the more
// dangerous one, since it looks like a null and pulls the fit to it. Tukey's biweight therefore
// applies on both sides. A reading cannot truly lie below the floor of the fitted surface (the
// floor bounds how low a true reading can be), nor below the bowl between it and the fitted null;
// one far below both is rejected like one far above, unless moving the null or lowering the floor
// (both free in the fit, started from Huber weights) explains it at less cost.
function rho(e, loss) {
  const a = Math.abs(e);
  if (loss === 'l2') return 0.5 * e * e;
  if (loss === 'huber') return a <= HUBER ? 0.5 * e * e : HUBER * a - 0.5 * HUBER * HUBER;
  if (a >= TUKEY) return (TUKEY * TUKEY) / 6;
  const u = 1 - (e / TUKEY) ** 2;
  return ((TUKEY * TUKEY) / 6) * (1 - u * u * u);
}
function weight(e, loss) {
  const a = Math.abs(e);
  if (loss === 'l2') return 1;
  if (loss === 'huber') return a <= HUBER ? 1 : HUBER / a;
  if (a >= TUKEY) return 0;
  const u = 1 - (e / TUKEY) ** 2;
  return u * u;
}
function priorArrays(pr) {
  const list = [pr.cx, pr.cy, pr.logC, pr.logN, pr.s, pr.k];
  const mean = new Float64Array(6);
  const invVar = new Float64Array(6);
  const free = [];
  list.forEach((q, i) => {
    mean[i] = q.mean;
    if (q.sd === 0) return;
    free.push(i);
    invVar[i] = Number.isFinite(q.sd) ? 1 / (q.sd * q.sd) : 0;
  });
  return { mean, invVar, free };
}
/** Model level and gradient (over all six parameters) at one point. */
function modelAt(v, x, y, grad) {
  const dx = x - v[0];
  const dy = y - v[1];
  const c = Math.exp(v[2]);
  const n = Math.exp(v[3]);
  const es = Math.exp(v[4]);
  const k = v[5];
  const q = es * dx * dx + 2 * k * dx * dy + (dy * dy) / es;
  const p = c * q + n;
  const f = DB / p;
  grad[0] = -f * c * (2 * es * dx + 2 * k * dy);
  grad[1] = -f * c * (2 * k * dx + (2 * dy) / es);
  grad[2] = f * c * q;
  grad[3] = f * n;
  grad[4] = f * c * (es * dx * dx - (dy * dy) / es);
  grad[5] = f * 2 * c * dx * dy;
  return DB * Math.log(p);
}
function costOf(prob, v, loss, grad) {
  let cost = 0;
  for (const pt of prob.pts) {
    const m = modelAt(v, pt.x, pt.y, grad);
    cost += rho((m - pt.db) / prob.sigma, loss);
  }
  for (const i of prob.free) {
    const d = v[i] - prob.mean[i];
    cost += 0.5 * d * d * prob.invVar[i];
  }
  return cost;
}
function clampVec(v) {
  v[5] = Math.max(-K_MAX, Math.min(K_MAX, v[5]));
  v[4] = Math.max(-8, Math.min(8, v[4]));
  v[3] = Math.max(-120, Math.min(60, v[3]));
  v[2] = Math.max(-120, Math.min(120, v[2]));
}
/** Normal matrix and gradient at v with IRLS weights for `loss`. */
function normal(prob, v, loss, h, g, grad, weights, resid) {
  const nf = prob.free.length;
  h.fill(0);
  g.fill(0);
  prob.pts.forEach((pt, idx) => {
    const m = modelAt(v, pt.x, pt.y, grad);
    const e = (m - pt.db) / prob.sigma;
    const w = weight(e, loss);
    if (weights) weights[idx] = w;
    if (resid) resid[idx] = pt.db - m;
    for (let a = 0; a < nf; a++) {
      const ja = grad[prob.free[a]] / prob.sigma;
      g[a] = g[a] + w * e * ja;
      for (let b = 0; b <= a; b++) {
        h[a * nf + b] = h[a * nf + b] + w * ja * (grad[prob.free[b]] / prob.sigma);
      }
    }
  });
  for (let a = 0; a < nf; a++) {
    for (let b = 0; b < a; b++) h[b * nf + a] = h[a * nf + b];
    const i = prob.free[a];
    h[a * nf + a] = h[a * nf + a] + prob.invVar[i];
    g[a] = g[a] + (v[i] - prob.mean[i]) * prob.invVar[i];
  }
}
function levenbergMarquardt(prob, start, loss, maxIt) {
  const nf = prob.free.length;
  const v = Float64Array.from(start);
  clampVec(v);
  const grad = new Float64Array(6);
  const h = new Float64Array(nf * nf);
  const g = new Float64Array(nf);
  const a = new Float64Array(nf * nf);
  const step = new Float64Array(nf);
  const trial = new Float64Array(6);
  let cost = costOf(prob, v, loss, grad);
  let lambda = 1e-3;
  for (let it = 0; it < maxIt; it++) {
    normal(prob, v, loss, h, g, grad);
    let improved = false;
    for (let tries = 0; tries < 12; tries++) {
      a.set(h);
      for (let d = 0; d < nf; d++) {
        a[d * nf + d] = a[d * nf + d] * (1 + lambda) + lambda * 1e-9;
        step[d] = -g[d];
      }
      if (!solveInPlace(a, step, nf)) {
        lambda *= 10;
        continue;
      }
      trial.set(v);
      for (let d = 0; d < nf; d++) trial[prob.free[d]] = trial[prob.free[d]] + step[d];
      clampVec(trial);
      const c2 = costOf(prob, trial, loss, grad);
      if (c2 < cost) {
        const rel = (cost - c2) / Math.max(cost, 1e-12);
        v.set(trial);
        cost = c2;
        lambda = Math.max(lambda / 4, 1e-9);
        improved = true;
        if (rel < 1e-10) return v;
        break;
      }
      lambda *= 4;
    }
    if (!improved) break;
  }
  return v;
}
/**
 * Robust fit of a null surface to level readings: Levenberg–Marquardt in dB from each start
 * (Huber loss, then Tukey's biweight when the readings outnumber the free parameters by two or
 * more), with Gaussian priors; the lowest final cost wins.
 * @param points readings (coordinates and dB); at least one.
 * @param options noise, priors, robustness and starting surfaces.
 * @returns the fitted surface, the covariance of its null position, residuals (dB) and weights.
 * @throws never for `options.starts` with at least one surface (with none it fails with a
 *   TypeError; the seeker always passes one). A fit that finds nothing finite returns the first start.
 */
export function fitNullSurface(points, options) {
  const { mean, invVar, free } = priorArrays(options.priors);
  const prob = { pts: points, sigma: options.noiseDb, free, mean, invVar };
  const maxIt = options.maxIterations ?? 60;
  // Parameters held by a tight prior do not count against the data when deciding whether the
  // readings over-determine the model (Tukey's biweight needs a few spare readings to reject one).
  const weakFree = free.filter((i) => !(invVar[i] > 4)).length;
  const overDetermined = points.length >= weakFree + 2;
  const finalLoss = !options.robust ? 'l2' : overDetermined ? 'tukey' : 'huber';
  const grad = new Float64Array(6);
  let best;
  let bestCost = Number.POSITIVE_INFINITY;
  for (const s of options.starts) {
    const v0 = toVec(s);
    for (const i of [0, 1, 2, 3, 4, 5]) if (!free.includes(i)) v0[i] = mean[i];
    let v = levenbergMarquardt(prob, v0, options.robust ? 'huber' : 'l2', maxIt);
    if (finalLoss === 'tukey') v = levenbergMarquardt(prob, v, 'tukey', maxIt);
    const c = costOf(prob, v, finalLoss, grad);
    if (c < bestCost && v.every(Number.isFinite)) {
      bestCost = c;
      best = v;
    }
  }
  const v = best ?? toVec(options.starts[0]);
  const nf = free.length;
  const h = new Float64Array(nf * nf);
  const g = new Float64Array(nf);
  const weights = new Array(points.length).fill(1);
  const residualsDb = new Array(points.length).fill(0);
  normal(prob, v, finalLoss, h, g, grad, weights, residualsDb);
  const cov = invert(h, nf);
  const ix = free.indexOf(0);
  const iy = free.indexOf(1);
  const at = (i, j) => (cov && i >= 0 && j >= 0 ? cov[i * nf + j] : 0);
  let sw = 0;
  let swr = 0;
  points.forEach((_, i) => {
    sw += weights[i];
    swr += weights[i] * residualsDb[i] ** 2;
  });
  return {
    surface: fromVec(v),
    centreCov: [Math.max(0, at(ix, ix)), at(ix, iy), Math.max(0, at(iy, iy))],
    cost: bestCost,
    rmsDb: sw > 0 ? Math.sqrt(swr / sw) : 0,
    weights,
    residualsDb,
    freeParameters: nf,
  };
}
/**
 * Weighted linear least squares in power (rows weighted by 1/P, so each reading counts by its
 * relative error): `P − c·r² = αx + βy + γ` (known curvature c), `P = c·r² + αx + βy + γ`
 * (isotropic), or the general quadratic `P = Ax² + Bxy + Cy² + Dx + Ey + F`. Needs 3, 4 or 6
 * readings in general position.
 * @param floorGuess floor power used when the fit leaves none (or a negative one).
 * @returns the surface, or undefined when the readings do not determine a bowl.
 * Method: linear least squares on the power form of a paraboloid (as in DESIGN.md §6; Golub & Van
 * Loan, Matrix Computations, 4th ed., §5.3 for the normal equations, section from memory).
 * @throws never
 */
export function linearPowerFit(points, model, knownLogC, floorGuess) {
  const rows = [];
  const ys = [];
  const ws = [];
  const c0 = Math.exp(knownLogC);
  for (const p of points) {
    const P = 10 ** (p.db / 10);
    const r2 = p.x * p.x + p.y * p.y;
    ws.push(1 / (P * P));
    if (model === 'known-curvature') {
      rows.push([p.x, p.y, 1]);
      ys.push(P - c0 * r2);
    } else if (model === 'isotropic') {
      rows.push([r2, p.x, p.y, 1]);
      ys.push(P);
    } else {
      rows.push([p.x * p.x, p.x * p.y, p.y * p.y, p.x, p.y, 1]);
      ys.push(P);
    }
  }
  const m = model === 'known-curvature' ? 3 : model === 'isotropic' ? 4 : 6;
  if (points.length < m) return undefined;
  const sol = weightedLeastSquares(rows, ys, ws, m);
  if (!sol) return undefined;
  let A;
  let B = 0;
  let C;
  let D;
  let E;
  let F;
  if (model === 'known-curvature') {
    A = c0;
    C = c0;
    [D, E, F] = [sol[0], sol[1], sol[2]];
  } else if (model === 'isotropic') {
    A = sol[0];
    C = sol[0];
    [D, E, F] = [sol[1], sol[2], sol[3]];
  } else {
    [A, B, C, D, E, F] = [sol[0], sol[1], sol[2], sol[3], sol[4], sol[5]];
  }
  const det = 4 * A * C - B * B;
  if (!(A > 0 && C > 0 && det > 0)) return undefined;
  const cx = (-2 * C * D + B * E) / det;
  const cy = (-2 * A * E + B * D) / det;
  const n = F + 0.5 * (D * cx + E * cy);
  const c = Math.sqrt(A * C);
  const k = Math.max(-K_MAX, Math.min(K_MAX, B / (2 * c)));
  const out = {
    cx,
    cy,
    logC: Math.log(c),
    logN: Math.log(n > floorGuess * 1e-3 ? n : floorGuess),
    s: 0.5 * Math.log(A / C),
    k,
  };
  return Object.values(out).every(Number.isFinite) ? out : undefined;
}
/**
 * Candidate null positions from two readings on a bowl of known curvature and floor: the
 * intersections of the circles each reading implies (Hoppenstein, TI SLOA313, 2021). When the
 * circles do not meet (noise), the point between them on the line of centres.
 * @param c curvature (power per squared coordinate unit); `floor` the floor power N (power ratio).
 * @returns zero (coincident readings), one or two candidates; their `db` is 0 (not a reading).
 * @throws never
 */
export function circleCandidates(a, b, c, floor) {
  const ra = Math.sqrt(Math.max(10 ** (a.db / 10) - floor, floor * 0.01) / c);
  const rb = Math.sqrt(Math.max(10 ** (b.db / 10) - floor, floor * 0.01) / c);
  const dx = b.x - a.x;
  const dy = b.y - a.y;
  const d = Math.hypot(dx, dy);
  if (!(d > 0)) return [];
  const ux = dx / d;
  const uy = dy / d;
  const along = (d * d + ra * ra - rb * rb) / (2 * d);
  const h2 = ra * ra - along * along;
  if (h2 <= 0) {
    const t = Math.max(-ra, Math.min(d + rb, along));
    return [{ x: a.x + t * ux, y: a.y + t * uy, db: 0 }];
  }
  const h = Math.sqrt(h2);
  const mx = a.x + along * ux;
  const my = a.y + along * uy;
  return [
    { x: mx - h * uy, y: my + h * ux, db: 0 },
    { x: mx + h * uy, y: my - h * ux, db: 0 },
  ];
}
