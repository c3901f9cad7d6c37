/**
 * Baseline null seekers for comparison (benchmarks and tests): coordinate descent, the hand method
 * of alternating one-trim adjustments (ADI AD8349/ADL5385 data sheets describe alternating gain and
 * phase adjustment), and the Nelder–Mead simplex (Nelder & Mead, Computer Journal 7:308, 1965;
 * coefficients 1, 2, ½, ½ as in Lagarias et al., SIAM J. Optim. 9:112, 1998), which is known to
 * terminate wrongly under noise (Barton & Ivey, Management Science 42(7):954, 1996). Both use the
 * same ask/tell shape and the same first step as the null seeker, so comparisons are like for like.
 */
import { requireInteger, requirePositive } from '../core/validate.js';

function askTell(o, body) {
  requireInteger('maxReadings', o.maxReadings, 1, 10_000);
  requirePositive('curvature', o.curvature);
  requirePositive('maxStep', o.maxStep);
  const seen = [];
  let gen;
  let pending = [...o.start];
  let finished = false;
  const advance = (db) => {
    if (!gen) {
      gen = body(db);
      const r = gen.next();
      pending = r.done ? undefined : r.value;
    } else {
      const r = gen.next(db);
      pending = r.done ? undefined : r.value;
    }
    if (!pending) finished = true;
  };
  return {
    next: () => (finished || seen.length >= o.maxReadings || !pending ? undefined : [pending[0], pending[1]]),
    tell(point, db) {
      // A failed reading is simply taken as very high: the baselines have no failure handling.
      const v = Number.isFinite(db) ? db : 1e3;
      seen.push({ point: [point[0], point[1]], db: v });
      if (seen.length >= o.maxReadings) {
        finished = true;
        return;
      }
      advance(v);
    },
    best() {
      let b = seen[0];
      for (const s of seen) if (b === undefined || s.db < b.db) b = s;
      return b ? { point: [...b.point], levelDb: b.db } : { point: [...o.start], levelDb: Number.NaN };
    },
    get count() {
      return seen.length;
    },
    get done() {
      return finished || seen.length >= o.maxReadings;
    },
  };
}
const firstStep = (o, db) => Math.min(o.maxStep, Math.sqrt(10 ** (db / 10) / o.curvature));
/**
 * Coordinate descent, the hand method: along one trim at a time, read either side of the current
 * setting, move to the vertex of the parabola through the three readings (in power), read there,
 * then turn to the other trim; the step follows the last move.
 * @param options start, curvature guess for the first step, budget, largest step.
 * @throws {OrthotoneError} INVALID_ARGUMENT for bad options.
 */
export function createCoordinateDescent(options) {
  return askTell(options, function* (db0) {
    const x = [...options.start];
    let f = db0;
    const h = [firstStep(options, db0), firstStep(options, db0)];
    for (let axis = 0; ; axis = 1 - axis) {
      const j = axis;
      const plus = [...x];
      plus[j] += h[j];
      const fp = yield plus;
      const minus = [...x];
      minus[j] -= h[j];
      const fm = yield minus;
      const [P0, Pp, Pm] = [10 ** (f / 10), 10 ** (fp / 10), 10 ** (fm / 10)];
      const a = (Pp + Pm - 2 * P0) / (2 * h[j] * h[j]);
      const b = (Pp - Pm) / (2 * h[j]);
      let t;
      if (a > 0) t = Math.max(-2 * h[j], Math.min(2 * h[j], -b / (2 * a)));
      else t = fp < fm ? (fp < f ? h[j] : 0) : fm < f ? -h[j] : 0;
      if (t !== 0) {
        x[j] += t;
        f = yield [...x];
      }
      h[j] = Math.min(options.maxStep, Math.max(Math.abs(t), h[j] / 4, 1e-12));
    }
  });
}
/**
 * Nelder–Mead simplex on the readings (dB), started from the start and a step along each trim.
 * @param options start, curvature guess for the first step, budget, largest step.
 * @throws {OrthotoneError} INVALID_ARGUMENT for bad options.
 */
export function createNelderMead(options) {
  return askTell(options, function* (db0) {
    const h = firstStep(options, db0);
    const s = options.start;
    const v = [{ p: [...s], f: db0 }];
    for (const p of [
      [s[0] + h, s[1]],
      [s[0], s[1] + h],
    ]) {
      v.push({ p, f: yield p });
    }
    const comb = (a, b, t) => [a[0] + t * (b[0] - a[0]), a[1] + t * (b[1] - a[1])];
    for (;;) {
      v.sort((a, b) => a.f - b.f);
      const [best, mid, worst] = [v[0], v[1], v[2]];
      const c = [(best.p[0] + mid.p[0]) / 2, (best.p[1] + mid.p[1]) / 2];
      const xr = comb(c, worst.p, -1);
      const fr = yield xr;
      if (fr < best.f) {
        const xe = comb(c, worst.p, -2);
        const fe = yield xe;
        v[2] = fe < fr ? { p: xe, f: fe } : { p: xr, f: fr };
        continue;
      }
      if (fr < mid.f) {
        v[2] = { p: xr, f: fr };
        continue;
      }
      const outside = fr < worst.f;
      const xc = outside ? comb(c, xr, 0.5) : comb(c, worst.p, 0.5);
      const fc = yield xc;
      if (fc < (outside ? fr : worst.f)) {
        v[2] = { p: xc, f: fc };
        continue;
      }
      for (const k of [1, 2]) {
        const p = comb(best.p, v[k].p, 0.5);
        v[k] = { p, f: yield p };
      }
    }
  });
}
