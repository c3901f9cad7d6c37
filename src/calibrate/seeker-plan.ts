/**
 * The null seeker's plan and stop rules: read the start, probe each axis (which shows whether the
 * trim acts), then alternate a jump to the fitted null with a probe on a ring around it that
 * shrinks with the fit's own uncertainty toward the floor radius (DESIGN.md §6). References:
 * circle intersection from level readings, Hoppenstein, TI SLOA313 (2021).
 */
import { dbToPow } from '../core/units.js';
import type { ReadingRole } from './null-seeker.js';
import {
  best,
  confirmed,
  floorEvidence,
  floorPower,
  provisional,
  recentFitConsistent,
  startLevel,
  startReadsKept,
  supportOf,
  trusted,
} from './seeker-evidence.js';
import { estimate, refit } from './seeker-fit.js';
import {
  nearestRead,
  okReadings,
  type PlannedProbe,
  rounded,
  type SeekerState,
  samePoint,
} from './seeker-state.js';

/**
 * Sets the stop reason when a stop rule holds (budget, failures, inactive trims, target, floor, resolution).
 * @throws never
 */
export function checkStop(st: SeekerState): void {
  // Stryker disable next-line ConditionalExpression: its one caller, tell(), refuses a stopped seeker first
  if (st.stopReason) return;
  if (st.readings.length >= st.o.maxReadings) {
    st.stopReason = 'budget';
    return;
  }
  if (st.failures >= 3) {
    st.stopReason = 'measurement-failed';
    return;
  }
  if (st.status[0] === 'inactive' && st.status[1] === 'inactive') {
    st.stopReason = 'trim-inactive';
    return;
  }
  // Stryker disable next-line ConditionalExpression,LogicalOperator,StringLiteral: no fit exists before the axis probes end (refit waits for an empty queue), so the next line returns too
  if (st.queue.length > 0 || st.status.includes('unknown')) return;
  const e = estimate(st);
  if (!e || !trusted(st) || !st.lastJump) return;
  const b = best(st).point;
  const spread = Math.sqrt(e.centreCov[0] + e.centreCov[2]);
  const atBest = Math.hypot(b[0] - st.lastJump[0], b[1] - st.lastJump[1]) <= Math.max(0.5 * spread, 1e-15);
  if (!atBest) return;
  if (st.o.targetDb !== undefined && e.expectedTrueDb + 5 <= -st.o.targetDb) {
    st.stopReason = 'target';
    return;
  }
  // A floor that high above the start's level is more likely a misfit than a result: keep reading.
  if (
    e.expectedTrueDb <= e.floorDb - 10 &&
    st.sinceJump === 0 &&
    e.floorDb <= st.startDb - 10 &&
    recentFitConsistent(st) &&
    floorEvidence(st, e.floorDb)
  ) {
    // A floor within 20 dB of a start read once may be an outlier's doing (a start read high makes
    // a flat stretch look like a null): read the start again before believing it.
    // (A reading is left: the budget stop above has not fired.)
    if (e.floorDb > st.startDb - 20 && startReadsKept(st) < 2) {
      st.rereadStart = true;
      return;
    }
    st.stopReason = 'floor';
    return;
  }
  // Quantised trims: stop once the null is located to a fraction of each axis's own step (the
  // finer axis sets the pace), so rounding it picks the best grid point.
  const [q0, q1] = st.o.step;
  // A null near the middle between two grid points is read on until its side is clear. A continuous
  // axis that acts (q = 0) is never done (sd < 0 cannot hold), so continuous trims never stop here.
  const axisDone = (q: number, v: number, j: 0 | 1): boolean => {
    if (st.status[j] === 'inactive') return true;
    const sd = Math.sqrt(v);
    const frac = e.centre[j] / q - Math.floor(e.centre[j] / q);
    return sd < 0.3 * q && Math.abs(frac - 0.5) * q > 1.5 * sd;
  };
  if (axisDone(q0, e.centreCov[0], 0) && axisDone(q1, e.centreCov[2], 1)) {
    st.stopReason = 'resolution';
  }
}

/**
 * Plans the next setting: the start, an axis probe, a jump to the fitted null, or a ring probe.
 * @throws never
 */
export function plan(st: SeekerState): void {
  st.pending = undefined;
  st.pendingProbe = undefined;
  if (st.stopReason) return;
  if (st.readings.length === 0 || okReadings(st).length === 0) {
    st.pending = [...st.o.start];
    st.pendingRole = 'start';
    return;
  }
  const last = st.readings[st.readings.length - 1]!;
  if (st.rereadStart && Number.isFinite(last.db)) {
    st.rereadStart = false;
    st.pending = [...st.o.start];
    st.pendingRole = 'probe';
    return;
  }
  if (!Number.isFinite(last.db)) {
    // Retry the setting whose reading failed.
    st.pending = [...last.point];
    st.pendingRole = last.role;
    st.pendingProbe = st.lastProbe;
    return;
  }
  if (st.o.maxReadings - st.readings.length === 1 && confirmLast(st)) return;
  const p0 = st.o.start;
  if (st.queue.length > 0) {
    const pr = st.queue[0]!;
    const p: [number, number] = [...p0];
    p[pr.axis] = p0[pr.axis] + pr.sign * pr.step;
    let r = rounded(st, p);
    if (r[pr.axis] === p0[pr.axis]) {
      // Pushed back onto the start by rounding or a bound: step the other way, or one quantum.
      p[pr.axis] = p0[pr.axis] - pr.sign * pr.step;
      r = rounded(st, p);
      if (r[pr.axis] === p0[pr.axis] && st.o.step[pr.axis] > 0) {
        p[pr.axis] = p0[pr.axis] + pr.sign * st.o.step[pr.axis];
        r = rounded(st, p);
      }
    }
    st.pending = r;
    st.pendingRole = 'probe';
    st.pendingProbe = pr;
    return;
  }
  const e = estimate(st);
  const centre = e && trusted(st) ? e.centre : provisional(st).point;
  const target = rounded(st, [centre[0], centre[1]]);
  const remaining = st.o.maxReadings - st.readings.length;
  const spread = e ? Math.sqrt(e.centreCov[0] + e.centreCov[2]) : 0;
  const moved =
    st.lastJump === undefined ||
    Math.hypot(target[0] - st.lastJump[0], target[1] - st.lastJump[1]) > 0.5 * spread;
  const unread = nearestRead(st, target) > Math.max(0.25 * spread, 1e-15);
  if (unread && (remaining === 1 || st.sinceJump > 0 || (moved && st.jumpsInRow < 2))) {
    st.pending = target;
    st.pendingRole = 'jump';
    return;
  }
  // A probe on the ring: along the direction the null is least certain, alternating sides.
  let radius: number;
  let dir: [number, number];
  if (e) {
    const [a, b, c] = e.centreCov;
    const tr = a + c;
    const disc = Math.sqrt(Math.max(0, ((a - c) / 2) ** 2 + b * b));
    const lmax = tr / 2 + disc;
    const angle = 0.5 * Math.atan2(2 * b, a - c) + (st.probeIndex % 4 >= 2 ? Math.PI / 2 : 0);
    dir = [Math.cos(angle), Math.sin(angle)];
    radius = Math.max(e.floorRadius, 2 * Math.sqrt(Math.max(lmax, 0)));
  } else {
    dir = [1, 0];
    radius = st.stepNow[0] || st.o.maxStep[0];
  }
  if (e && e.floorDb > st.startDb - 10) {
    // The fit explains the readings by a floor close to the start's level: either the start is
    // already at the floor or the bowl was misread (e.g. an outlier fixed its curvature).
    // Look wider, doubling each time, until the wall of the bowl shows again.
    st.wideProbes++;
    radius = Math.max(radius, radius * 2 ** (st.wideProbes - 1));
  }
  if (st.status[0] === 'inactive') dir = [0, 1];
  if (st.status[1] === 'inactive') dir = [1, 0];
  const sgn = st.probeIndex % 2 === 0 ? 1 : -1;
  radius = Math.min(radius, Math.max(st.o.maxStep[0], st.o.maxStep[1]));
  let p = rounded(st, [centre[0] + sgn * radius * dir[0], centre[1] + sgn * radius * dir[1]]);
  for (let grow = 0; grow < 4 && nearestRead(st, p) === 0; grow++) {
    // Quantised trims: push the probe out until it reaches an unread setting.
    radius += Math.max(st.o.step[0], st.o.step[1]);
    p = rounded(st, [centre[0] + sgn * radius * dir[0], centre[1] + sgn * radius * dir[1]]);
  }
  st.pending = p;
  st.pendingRole = 'probe';
}

/**
 * The last reading is spent where it decides the result when the candidate is not yet shown to
 * beat the start: on the candidate itself or, without a trusted fit, when readings already
 * support it, on the start again (its single reading is then all that says how good it was).
 * @returns true when it planned that reading.
 * @throws never
 */
export function confirmLast(st: SeekerState): boolean {
  const e = estimate(st);
  const useFit = e !== undefined && trusted(st);
  const centre = useFit ? e.centre : provisional(st).point;
  const target = rounded(st, [centre[0], centre[1]]);
  if (samePoint(target, st.o.start) || confirmed(st, target)) return false;
  const low = dbToPow(startLevel(st) - 2 * st.sigma) - floorPower(st);
  const needStart = !useFit && startReadsKept(st) < 2 && low > 0 && supportOf(st, target, low) >= 2;
  st.pending = needStart ? [...st.o.start] : target;
  st.pendingRole = needStart ? 'probe' : 'jump';
  return true;
}

/**
 * Sizes the first axis probes from the start's level.
 * @throws never
 */
export function afterStart(st: SeekerState, db: number): void {
  st.startDb = db;
  const P0 = dbToPow(db);
  const floor = st.o.floorDb !== undefined ? dbToPow(st.o.floorDb) : 0;
  const d0 = Math.sqrt(Math.max(P0 - floor, P0 * 0.05) / st.o.curvature);
  for (const j of [0, 1] as const) {
    st.stepNow[j] = Math.min(st.o.maxStep[j], Math.max(d0, st.o.step[j]));
  }
  st.queue = [
    { axis: 0, sign: 1, step: st.stepNow[0] },
    { axis: 1, sign: 1, step: st.stepNow[1] },
  ];
}

/**
 * Marks an axis active or inactive from a probe, and plans the next axis probe.
 * @throws never
 */
export function afterProbe(st: SeekerState, pr: PlannedProbe, db: number): void {
  st.queue.shift();
  const moved = Math.abs(db - st.startDb) > st.threshold;
  if (moved) {
    st.status[pr.axis] = 'active';
    if (
      pr.axis === 0 &&
      st.o.model !== 'known-curvature' &&
      st.queue[0]?.axis === 1 &&
      st.queue[0].sign === 1
    ) {
      // Unknown curvature: a probe far beyond the null reads ρ = P1/P0 ≫ 1, and the distance to
      // the null is then about step/√ρ; size the second axis's probe to match.
      const rho = dbToPow(db - st.startDb);
      if (rho > 4) {
        const s = Math.max(pr.step / Math.sqrt(rho), st.o.step[1], 1e-12);
        st.queue[0] = { ...st.queue[0], step: Math.min(s, st.o.maxStep[1]) };
        st.stepNow[1] = st.queue[0].step;
      }
    }
    return;
  }
  if (pr.sign === 1) {
    st.queue.push({ axis: pr.axis, sign: -1, step: pr.step });
    return;
  }
  if (pr.step >= st.o.maxStep[pr.axis]) {
    st.status[pr.axis] = 'inactive';
    return;
  }
  const s = Math.min(pr.step * 4, st.o.maxStep[pr.axis]);
  st.stepNow[pr.axis] = s;
  st.queue.push({ axis: pr.axis, sign: 1, step: s });
}

/**
 * Records a reading and advances the plan it answers.
 * @throws never
 */
export function record(st: SeekerState, point: readonly [number, number], db: number): void {
  // A setting the seeker did not propose (another seeker's, in a shared sequence) is an extra
  // probe: it feeds the fit but advances no plan. A person's small deviation from the proposal
  // (rounding on a dial) still counts as the proposed reading.
  const proposed =
    st.pending !== undefined &&
    Math.abs(point[0] - st.pending[0]) <=
      0.05 * (Math.abs(st.pending[0] - st.o.start[0]) + st.stepNow[0]) + 1e-15 &&
    Math.abs(point[1] - st.pending[1]) <=
      0.05 * (Math.abs(st.pending[1] - st.o.start[1]) + st.stepNow[1]) + 1e-15;
  const role: ReadingRole =
    st.readings.length === 0 || Number.isNaN(st.startDb) ? 'start' : proposed ? st.pendingRole : 'probe';
  const pr = proposed ? st.pendingProbe : undefined;
  st.readings.push({ point: [point[0], point[1]], db, role });
  if (!Number.isFinite(db)) {
    st.failures++;
    st.lastProbe = pr;
    return;
  }
  st.failures = 0;
  if (role === 'start' && Number.isNaN(st.startDb)) afterStart(st, db);
  else if (pr && st.queue[0] === pr) afterProbe(st, pr, db);
  if (role === 'jump') {
    st.lastJump = [point[0], point[1]];
    st.sinceJump = 0;
    st.jumpsInRow++;
  } else if (role === 'probe' && !pr) {
    st.sinceJump++;
    st.probeIndex++;
    st.jumpsInRow = 0;
  }
  if (st.queue.length === 0 && !st.status.includes('unknown')) refit(st);
  else if (st.queue.length === 0) refit(st);
}
