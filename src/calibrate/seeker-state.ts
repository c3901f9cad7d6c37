/**
 * The null seeker's state record and the small helpers on it (DESIGN.md §6; STYLE.md #13: a long
 * algorithm as a short loop over named steps). The seeker (null-seeker.ts) is a composition of
 * this record with the fit (seeker-fit.ts), the evidence rules (seeker-evidence.ts) and the plan
 * (seeker-plan.ts); each step is a plain function of the state.
 */

import type { AxisStatus, NullSeekerOptions, ReadingRole, SeekerReading, StopReason } from './null-seeker.js';
import type { SurfaceFit } from './quadratic-fit.js';

/** A probe of one axis from the start, planned before any fit. */
export interface PlannedProbe {
  axis: 0 | 1;
  sign: 1 | -1;
  step: number;
}

/** Everything a null seeker knows and intends: replayable from its readings alone. */
export interface SeekerState {
  /** The validated options. */
  readonly o: NullSeekerOptions;
  /** Standard deviation of one reading, dB. */
  readonly sigma: number;
  /** Change of level that shows a trim acts, dB. */
  readonly threshold: number;
  readings: SeekerReading[];
  status: [AxisStatus, AxisStatus];
  /** Current probe size per axis, natural units. */
  stepNow: [number, number];
  /** Axis probes still to read. */
  queue: PlannedProbe[];
  /** The start's first reading, dB. */
  startDb: number;
  fit: SurfaceFit | undefined;
  lastJump: [number, number] | undefined;
  sinceJump: number;
  jumpsInRow: number;
  wideProbes: number;
  probeIndex: number;
  /** Failed readings in a row. */
  failures: number;
  /** The nominal bowl was shown off by the readings: shape and scale are estimated. */
  loose: boolean;
  stopReason: StopReason | undefined;
  /** The setting planned next, and why. */
  pending: [number, number] | undefined;
  pendingRole: ReadingRole;
  pendingProbe: PlannedProbe | undefined;
  /** The axis probe a failed reading was planned as (retried as such). */
  lastProbe: PlannedProbe | undefined;
  /** The floor stop waits for a second reading of the start (planned next). */
  rereadStart: boolean;
}

/**
 * A fresh state for validated options.
 * @throws never
 */
export function createSeekerState(o: NullSeekerOptions): SeekerState {
  const st = {
    o,
    sigma: o.noiseDb,
    threshold: Math.max(3 * o.noiseDb, 1.5),
    readings: [],
  } as unknown as SeekerState;
  resetSeekerState(st);
  return st;
}

/**
 * Forgets every reading and plan (the options stay).
 * @throws never
 */
export function resetSeekerState(st: SeekerState): void {
  st.readings = [];
  st.status = ['unknown', 'unknown'];
  st.stepNow = [0, 0];
  st.queue = [];
  st.startDb = Number.NaN;
  st.fit = undefined;
  st.lastJump = undefined;
  st.sinceJump = 0;
  st.jumpsInRow = 0;
  st.wideProbes = 0;
  st.probeIndex = 0;
  st.failures = 0;
  st.loose = false;
  st.stopReason = undefined;
  st.pending = undefined;
  st.pendingRole = 'start';
  st.pendingProbe = undefined;
  st.lastProbe = undefined;
  st.rereadStart = false;
}

/**
 * A coordinate clamped to its axis range and, for quantised trims, rounded to the step.
 * @throws never
 */
export function clampAxis(st: SeekerState, j: 0 | 1, v: number): number {
  const [lo, hi] = st.o.bounds[j];
  let x = Math.min(hi, Math.max(lo, v));
  const q = st.o.step[j];
  if (q > 0) {
    x = Math.round(x / q) * q;
    if (x > hi) x -= q;
    if (x < lo) x += q;
  }
  return x;
}

/**
 * The readings that did not fail.
 * @throws never
 */
export function okReadings(st: SeekerState): SeekerReading[] {
  return st.readings.filter((r) => Number.isFinite(r.db));
}

/**
 * Whether two settings are the same.
 * @throws never
 */
export function samePoint(a: readonly [number, number], b: readonly [number, number]): boolean {
  return a[0] === b[0] && a[1] === b[1];
}

/**
 * Whether a setting lies inside the trims' ranges.
 * @throws never
 */
export function inBounds(st: SeekerState, p: readonly [number, number]): boolean {
  return (
    p[0] >= st.o.bounds[0][0] &&
    p[0] <= st.o.bounds[0][1] &&
    p[1] >= st.o.bounds[1][0] &&
    p[1] <= st.o.bounds[1][1]
  );
}

/**
 * A setting clamped and rounded on both axes (see clampAxis).
 * @throws never
 */
export function rounded(st: SeekerState, p: [number, number]): [number, number] {
  return [clampAxis(st, 0, p[0]), clampAxis(st, 1, p[1])];
}

/**
 * Distance from a setting to the nearest setting read, natural units.
 * @throws never
 */
export function nearestRead(st: SeekerState, p: readonly [number, number]): number {
  let d = Number.POSITIVE_INFINITY;
  for (const r of okReadings(st)) d = Math.min(d, Math.hypot(r.point[0] - p[0], r.point[1] - p[1]));
  return d;
}
