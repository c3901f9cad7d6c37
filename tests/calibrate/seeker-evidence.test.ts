/**
 * The null seeker's evidence rules (src/calibrate/seeker-evidence.ts), each driven directly: a seeker
 * state is given a set of readings and fitted (refit), then asked whether it trusts the fit, what the
 * start's level is, which setting is shown to beat the start, and whether the readings show a floor.
 *
 * Readings ON the bowl: with a gain error a (amplitude ratio − 1) and a phase error b (rad) left after the
 * trims, the image relative to the wanted tone is ¼·(a² + b²) for small errors (K. Schmidt, "Phase-Shift
 * Network Analysis and Optimization", QEX Aug 1994 §2: IRR ≈ 4/(ε² + φ²)), so a
 * setting t in those natural units with the error at t0 reads `10·log10(N + ¼·|t − t0|²)` dB over a
 * reading floor N. Readings OFF the bowl (outliers, a start read high or low, a floor too close to the
 * start, a null outside the trims' range) must not be trusted. The null, floors and outliers are
 * invented (a bench of our own); expectations come from the bowl, not from the seeker's own figures.
 */
import { describe, expect, it } from 'vitest';
import {
  type AxisStatus,
  type NullSeekerOptions,
  resolveSeekerOptions,
} from '../../src/calibrate/null-seeker.js';
import {
  best,
  confirmed,
  curvatureBound,
  floorEvidence,
  floorPower,
  overDetermined,
  provisional,
  recentFitConsistent,
  startLevel,
  startReadsKept,
  supportOf,
  trusted,
} from '../../src/calibrate/seeker-evidence.js';
import { estimate, refit } from '../../src/calibrate/seeker-fit.js';
import { createSeekerState, type SeekerState } from '../../src/calibrate/seeker-state.js';

const C = 0.25; // K. Schmidt, QEX Aug 1994 §2: image/wanted ≈ (a² + b²)/4
const T0: [number, number] = [0.03, -0.02]; // 0.26 dB and 1.15° of error: the start reads −34.88 dBc
const KNOWN: Partial<NullSeekerOptions> = { model: 'known-curvature', curvature: C, noiseDb: 0.5 };

/** Level of the bowl with its null at t0 over a floor, dB. */
const bowlDb =
  (t0: readonly [number, number] = T0, floorDb = -70) =>
  (x: number, y: number): number =>
    10 * Math.log10(C * ((x - t0[0]) ** 2 + (y - t0[1]) ** 2) + 10 ** (floorDb / 10));

type Reading = [x: number, y: number, db: number, role?: 'start' | 'probe' | 'jump'];

/** Readings at the given settings, on the bowl. */
const on = (pts: readonly (readonly [number, number])[], level = bowlDb()): Reading[] =>
  pts.map(([x, y]) => [x, y, level(x, y)]);

/** A seeker state holding these readings (the first is the start's) and the fit to them. */
function fitted(
  opts: Partial<NullSeekerOptions>,
  readings: readonly Reading[],
  status: [AxisStatus, AxisStatus] = ['active', 'active'],
): SeekerState {
  const st = createSeekerState(resolveSeekerOptions(opts));
  st.status = status;
  st.startDb = readings[0]![2];
  st.readings = readings.map(([x, y, db, role], i) => ({
    point: [x, y],
    db,
    role: role ?? (i === 0 ? 'start' : 'probe'),
  }));
  refit(st);
  return st;
}

const dist = (p: readonly [number, number], q: readonly [number, number] = T0): number =>
  Math.hypot(p[0] - q[0], p[1] - q[1]);

// The start, one probe per axis, four probes on a ring of radius 0.01 around the null, the null itself.
const RING: [number, number][] = [
  [0, 0],
  [0.036, 0],
  [0, 0.036],
  [0.04, -0.02],
  [0.02, -0.02],
  [0.03, -0.01],
  [0.03, -0.03],
  [0.03, -0.02],
];
const FLOOR_RADIUS = Math.sqrt(1e-7 / C); // √(N/c) at −70 dBc: 6.3e-4

describe('trusted: when the fitted null is believed', () => {
  it('readings on the bowl, over-determined: trusted, and the best setting is the null', () => {
    const st = fitted(KNOWN, on(RING));
    expect(trusted(st)).toBe(true);
    const b = best(st);
    expect(b.source).toBe('fit');
    expect(dist(b.point)).toBeLessThan(0.1 * FLOOR_RADIUS);
    // The level there: the floor, plus what the null's remaining uncertainty adds (under 3 dB).
    expect(b.levelDb).toBeGreaterThan(-70);
    expect(b.levelDb).toBeLessThan(-67);
    expect(startLevel(st)).toBeCloseTo(bowlDb()(0, 0), 9);
  });
  it('too few readings for the parameters the fit moves: not trusted, however well they lie', () => {
    // Known curvature, two dimensions: six parameters held loosely or tightly; five readings are the least.
    const four = fitted(KNOWN, on(RING.slice(0, 4)));
    expect(four.fit!.rmsDb).toBeLessThan(0.01);
    expect(trusted(four)).toBe(false);
    expect(best(four).point).toEqual([0, 0]);
    expect(trusted(fitted(KNOWN, on(RING.slice(0, 5))))).toBe(true);
  });
  it('one trim inactive (a line, three parameters): three readings are enough, two are not', () => {
    const level = (x: number) => 10 * Math.log10(C * (x - 0.03) ** 2 + 1e-7);
    const line = (xs: number[]) => xs.map((x) => [x, 0, level(x)] as Reading);
    const two = fitted(KNOWN, line([0, 0.036]), ['active', 'inactive']);
    expect(two.fit).toBeDefined();
    expect(trusted(two)).toBe(false);
    const three = fitted(KNOWN, line([0, 0.036, 0.02]), ['active', 'inactive']);
    expect(trusted(three)).toBe(true);
    expect(Math.abs(best(three).point[0] - 0.03)).toBeLessThan(0.1 * FLOOR_RADIUS);
    expect(best(three).point[1]).toBe(0);
  });
  it('a null outside the trims’ range is not trusted', () => {
    // x* = 0.03 lies beyond the range ±0.025 given for the first trim; every reading is inside it.
    const st = fitted(
      {
        ...KNOWN,
        bounds: [
          [-0.025, 0.025],
          [-0.1, 0.1],
        ],
      },
      on([
        [0, 0],
        [0.02, 0],
        [0, 0.02],
        [0.02, -0.02],
        [0.01, -0.02],
        [0.025, -0.01],
      ]),
    );
    expect(dist(estimate(st)!.centre)).toBeLessThan(1e-4);
    expect(trusted(st)).toBe(false);
  });
  it('a fitted floor within 10 dB of the start is not trusted; 11 dB below it is', () => {
    // The start reads −33.7 dBc over a −40 dBc floor, −34.6 over a −46 floor.
    const near = fitted(KNOWN, on(RING, bowlDb(T0, -40)));
    expect(estimate(near)!.floorDb).toBeCloseTo(-40, 1);
    expect(trusted(near)).toBe(false);
    const far = fitted(KNOWN, on(RING, bowlDb(T0, -46)));
    expect(trusted(far)).toBe(true);
  });
  it('readings scattered about the bowl: trusted within 3σ of RMS misfit (at least 1.5 dB), not beyond', () => {
    // Fourteen readings, all but the start's pushed alternately up and down by A dB; the robust fit is
    // switched off so that every reading counts in the misfit.
    const pts: [number, number][] = [
      ...RING,
      [0.045, -0.005],
      [0.015, -0.035],
      [0.02, -0.01],
      [0.04, -0.03],
      [0.05, -0.02],
      [0.03, 0],
    ];
    const scattered = (noiseDb: number, a: number) => {
      const rs = on(pts).map(([x, y, db], i): Reading => [x, y, i === 0 ? db : db + (i % 2 === 0 ? a : -a)]);
      const st = fitted({ ...KNOWN, noiseDb, robust: false }, rs);
      return { rms: estimate(st)!.rmsDb, trusted: trusted(st) };
    };
    // σ = 0.8 dB: the limit is 3σ = 2.4 dB.
    const a = scattered(0.8, 2);
    expect(a.rms).toBeGreaterThan(1.6);
    expect(a.rms).toBeLessThan(2.3);
    expect(a.trusted).toBe(true);
    const b = scattered(0.8, 3);
    expect(b.rms).toBeGreaterThan(2.5);
    expect(b.rms).toBeLessThan(3.5);
    expect(b.trusted).toBe(false);
    // σ = 0.3 dB: 3σ is 0.9 dB, and the limit 1.5 dB.
    const c = scattered(0.3, 1.5);
    expect(c.rms).toBeGreaterThan(1);
    expect(c.rms).toBeLessThan(1.45);
    expect(c.trusted).toBe(true);
    const d = scattered(0.3, 2);
    expect(d.rms).toBeGreaterThan(1.55);
    expect(d.trusted).toBe(false);
  });
  it('noisy readings (σ = 4 dB): a null less than 3σ (12 dB) below the start is not clearly better', () => {
    // The fitted floor 11.9 dB below the start's reading: not trusted; 12.9 dB below: trusted.
    const st11 = fitted({ ...KNOWN, noiseDb: 4 }, on(RING, bowlDb(T0, -45)));
    expect(startLevel(st11) - estimate(st11)!.floorDb).toBeGreaterThan(10.5);
    expect(startLevel(st11) - estimate(st11)!.floorDb).toBeLessThan(12);
    expect(trusted(st11)).toBe(false);
    const st13 = fitted({ ...KNOWN, noiseDb: 4 }, on(RING, bowlDb(T0, -46)));
    expect(startLevel(st13) - estimate(st13)!.floorDb).toBeGreaterThan(12);
    expect(trusted(st13)).toBe(true);
  });
  it('the fit’s null no better than the lowest reading it kept (by 3σ): not trusted', () => {
    // The null read three times: −70, −70 and −72 dBc. The robust fit keeps the low one at a small weight
    // and puts its floor at about −70, more than 1.5 dB (3σ) above the −72 reading: the reading is then
    // the safer answer. With the start read twice, that reading is the best setting.
    const rs = on([...RING, T0, T0]);
    rs[9]![2] -= 2;
    const st = fitted(KNOWN, rs);
    expect(st.readings[9]!.weight).toBeGreaterThan(0);
    expect(estimate(st)!.floorDb).toBeGreaterThan(-72 + 1.5);
    expect(trusted(st)).toBe(false);
    const twice = fitted(KNOWN, [...rs, [0, 0, bowlDb()(0, 0)]]);
    expect(trusted(twice)).toBe(false);
    expect(best(twice)).toEqual({ point: T0, levelDb: rs[9]![2], source: 'reading' });
  });
  it('a low outlier far from the null, rejected by the fit, leaves the fit trusted', () => {
    // A reading at (−0.03, 0.03) that should read −29 dBc reads −72, below the floor (a mistyped digit).
    const rs = on([...RING, [-0.03, 0.03]]);
    rs[8]![2] = -72;
    const st = fitted(KNOWN, rs);
    expect(st.readings[8]!.weight).toBe(0);
    expect(trusted(st)).toBe(true);
    expect(dist(best(st).point)).toBeLessThan(0.1 * FLOOR_RADIUS);
  });
});

describe('startLevel: what the start read', () => {
  it('a start read 12 dB high and rejected by the fit: the fit’s level there, not the reading', () => {
    const rs = on(RING);
    rs[0]![2] += 12;
    const st = fitted(KNOWN, rs);
    expect(st.readings[0]!.weight).toBe(0);
    expect(startLevel(st)).toBeCloseTo(bowlDb()(0, 0), 1);
    expect(startReadsKept(st)).toBe(0);
  });
  it('a start read 12 dB low and read again: the kept reading, not the outlier', () => {
    const rs = on([...RING, [0, 0]]);
    rs[0]![2] -= 12;
    const st = fitted(KNOWN, rs);
    expect(st.readings[0]!.weight).toBe(0);
    expect(startLevel(st)).toBe(bowlDb()(0, 0));
    expect(startReadsKept(st)).toBe(1);
  });
  it('before any fit, a first reading told at another setting than the start stands for the start', () => {
    // A person who typed the reading of another setting first: nothing is fitted yet, nothing is shown
    // better than the start, and the start's level is the one reading there is.
    const st = unfitted(KNOWN, [[0.01, 0, -40]]);
    expect(st.fit).toBeUndefined();
    expect(startLevel(st)).toBe(-40);
    expect(best(st)).toEqual({ point: [0, 0], levelDb: -40, source: 'start' });
  });
  it('before any fit, the start read twice: the lower reading', () => {
    expect(
      startLevel(
        unfitted(KNOWN, [
          [0, 0, -35],
          [0.036, 0, -39],
          [0, 0, -36],
        ]),
      ),
    ).toBe(-36);
  });
  it('two readings of the start that the fit keeps: the lower one', () => {
    const rs = on([...RING, [0, 0]]);
    rs[8]![2] -= 0.4;
    const st = fitted(KNOWN, rs);
    expect(startReadsKept(st)).toBe(2);
    expect(startLevel(st)).toBe(rs[8]![2]);
  });
});

/** A state holding these readings without a fit yet (the axis probes still pending). */
function unfitted(opts: Partial<NullSeekerOptions>, readings: readonly Reading[]): SeekerState {
  const st = createSeekerState(resolveSeekerOptions(opts));
  st.startDb = readings[0]?.[2] ?? Number.NaN;
  st.readings = readings.map(([x, y, db, role], i) => ({
    point: [x, y],
    db,
    role: role ?? (i === 0 ? 'start' : 'probe'),
  }));
  return st;
}

describe('supportOf: readings that bound the level at a setting (NullSeeker.best’s bound)', () => {
  // A reading P_r at distance d bounds the image amplitude at c by √P_r + √c_max·d: the amplitude is
  // √c·|t − t0| (over the floor), a norm, so the triangle inequality holds. Here c_max is the known
  // curvature ¼ with two standard deviations of its spread 0.15: ¼·e^0.3 = 0.33746.
  const cmax = 0.25 * Math.exp(0.3);
  it('no fit yet, known curvature: the bound uses ¼·e^0.3', () => {
    expect(curvatureBound(unfitted(KNOWN, [[0, 0, -35]]))).toBeCloseTo(cmax, 12);
    expect(curvatureBound(unfitted({ model: 'isotropic' }, [[0, 0, -35]]))).toBe(Number.POSITIVE_INFINITY);
  });
  it('a reading −60 dBc at the setting itself, read 2σ (1 dB) high: bounds it at −59 dBc', () => {
    const st = unfitted(KNOWN, [
      [0, 0, -35],
      [0.03, -0.02, -60],
    ]);
    const p59 = 10 ** -5.9;
    expect(supportOf(st, T0, p59 * 1.001)).toBe(1);
    expect(supportOf(st, T0, p59 * 0.999)).toBe(0);
  });
  it('the same reading 1e-3 away: the bound grows by √c_max·d in amplitude', () => {
    const st = unfitted(KNOWN, [
      [0, 0, -35],
      [0.031, -0.02, -60],
    ]);
    const amp = Math.sqrt(10 ** -5.9) + Math.sqrt(cmax) * 1e-3;
    expect(supportOf(st, T0, amp * amp * 1.001)).toBe(1);
    expect(supportOf(st, T0, amp * amp * 0.999)).toBe(0);
  });
  it('curvature not known and no fit yet: only a reading at the setting itself bounds it', () => {
    const st = unfitted({ model: 'isotropic' }, [
      [0, 0, -35],
      [0.03, -0.02, -60],
      [0.0301, -0.02, -60],
    ]);
    expect(supportOf(st, T0, 1e-5)).toBe(1);
  });
  it('the start, and readings the fit rejected, down-weighted or found implausibly low, give no support', () => {
    const st = unfitted(KNOWN, [
      [0, 0, -60], // the start's own reading is what a candidate is compared with, not support
      [0.03, -0.02, -60],
      [0.03, -0.02, -60],
      [0.03, -0.02, -60],
      [0.03, -0.02, -60],
      [0.03, -0.02, -60],
    ]);
    expect(supportOf(st, [0, 0], 1e-5)).toBe(0);
    const r = st.readings;
    r[1]!.weight = 0.4; // down-weighted by the fit
    r[2]!.weight = 0.6;
    r[2]!.residualDb = -1.6; // 3.2σ below the fit: implausibly low
    r[3]!.weight = 0.6;
    r[3]!.residualDb = -1.4; // 2.8σ below: plausible
    r[4]!.weight = 0.5;
    expect(supportOf(st, T0, 1e-5)).toBe(3);
  });
});

/** A setting offset from the null. */
const near = (dx: number, dy: number): [number, number] => [T0[0] + dx, T0[1] + dy];

describe('floorEvidence: the readings show a floor', () => {
  // Inside the floor radius (6.3e-4) the bowl reads the floor within 1 dB; 1e-3 from the null it reads
  // −64.6 dBc: the wall.
  it('three settings at the floor and the wall read in two directions: a floor', () => {
    const st = fitted(KNOWN, on([...RING, near(2e-4, 0), near(0, 2e-4), near(1e-3, 0), near(0, 1e-3)]));
    expect(estimate(st)!.floorDb).toBeCloseTo(-70, 1);
    expect(floorEvidence(st, -70)).toBe(true);
    // Nothing read within 1 dB of −60 or −80: no floor there.
    expect(floorEvidence(st, -60)).toBe(false);
    expect(floorEvidence(st, -80)).toBe(false);
  });
  it('two settings at the floor are not enough; one setting read three times is one setting', () => {
    expect(
      floorEvidence(fitted(KNOWN, on([...RING, near(2e-4, 0), near(1e-3, 0), near(0, 1e-3)])), -70),
    ).toBe(false);
    expect(
      floorEvidence(fitted(KNOWN, on([...RING, near(0, 0), near(0, 0), near(1e-3, 0), near(0, 1e-3)])), -70),
    ).toBe(false);
  });
  it('the wall read along one line only: no floor (a null off that line would go unseen)', () => {
    const line = fitted(
      KNOWN,
      on([...RING, near(1.5e-4, 0), near(-1.5e-4, 0), near(1e-3, 0), near(-1e-3, 0)]),
    );
    expect(floorEvidence(line, -70)).toBe(false);
    const cross = fitted(
      KNOWN,
      on([...RING, near(1.5e-4, 0), near(-1.5e-4, 0), near(1e-3, 0), near(0, -1e-3)]),
    );
    expect(floorEvidence(cross, -70)).toBe(true);
  });
  it('the wall read along a diagonal only: no floor; across it: a floor', () => {
    const a = 1.06e-4; // 1.5e-4 along the diagonal
    const w = 7.07e-4; // 1e-3 along the diagonal
    const diag = fitted(KNOWN, on([...RING, near(a, a), near(-a, -a), near(w, w), near(-w, -w)]));
    expect(floorEvidence(diag, -70)).toBe(false);
    const cross = fitted(KNOWN, on([...RING, near(a, a), near(-a, -a), near(w, w), near(w, -w)]));
    expect(floorEvidence(cross, -70)).toBe(true);
  });
  it('a reading at the floor’s level that the fit rejects does not count', () => {
    // Two settings at the floor, and a reading on the wall (true −46 dBc) that reads −70 (a dropout).
    const rs = on([...RING, near(2e-4, 0), near(1e-3, 0), near(0, 1e-3), [0.02, -0.03]]);
    rs[11]![2] = -70;
    const st = fitted(KNOWN, rs);
    expect(st.readings[11]!.weight).toBe(0);
    expect(floorEvidence(st, -70)).toBe(false);
  });
});

describe('floorEvidence: which readings count', () => {
  it('no fit yet: no floor, whatever the readings', () => {
    const st = unfitted(KNOWN, [
      [0, 0, -70],
      [0.01, 0, -70],
      [0, 0.01, -70],
      [0.01, 0.01, -70],
    ]);
    expect(floorEvidence(st, -70)).toBe(false);
  });
  it('“at the floor” means within 2σ of it (σ = 0.8 dB: 1.6 dB)', () => {
    // Settings 1.3 dB and 2 dB above the −70 dBc floor (3.74e-4 and 4.84e-4 from the null), beside the
    // null and a setting 0.38 dB above it; the wall read in x and y.
    const noisy = { ...KNOWN, noiseDb: 0.8 };
    const walls: [number, number][] = [near(1e-3, 0), near(0, 1e-3)];
    expect(floorEvidence(fitted(noisy, on([...RING, near(2e-4, 0), near(0, 3.74e-4), ...walls])), -70)).toBe(
      true,
    );
    expect(floorEvidence(fitted(noisy, on([...RING, near(2e-4, 0), near(0, 4.84e-4), ...walls])), -70)).toBe(
      false,
    );
  });
  it('a reading at the floor’s level that the fit down-weights (below one half) does not count', () => {
    // A setting 4.84e-4 from the null should read 2 dB above the floor; it reads −70 (4σ low).
    const rs = on([...RING, near(2e-4, 0), near(1e-3, 0), near(0, 1e-3), near(-1e-3, 0), near(-4.84e-4, 0)]);
    rs[12]![2] = -70;
    const st = fitted(KNOWN, rs);
    expect(st.readings[12]!.weight).toBeGreaterThan(0);
    expect(st.readings[12]!.weight).toBeLessThan(0.5);
    const floorDb = estimate(st)!.floorDb;
    expect(Math.abs(floorDb + 70)).toBeLessThan(0.5);
    expect(floorEvidence(st, floorDb)).toBe(false);
  });
  it('a wall reading the fit rejects does not give the second direction', () => {
    // The wall read along x only; a reading 1e-3 from the null along y reads −50 (true −64.6): rejected.
    const rs = on([...RING, near(1.5e-4, 0), near(-1.5e-4, 0), near(1e-3, 0), near(-1e-3, 0), near(0, 1e-3)]);
    rs[12]![2] = -50;
    const st = fitted(KNOWN, rs);
    expect(st.readings[12]!.weight).toBe(0);
    expect(floorEvidence(st, -70)).toBe(false);
  });
});

describe('recentFitConsistent: the last three readings include a probe and agree with the fit', () => {
  const rs = (roles: ('probe' | 'jump')[], offDb = 0): Reading[] => {
    const r = on([...RING, near(2e-4, 0), near(0, 2e-4), near(1e-3, 0), near(-1e-3, 0)]);
    roles.forEach((role, i) => {
      r[r.length - roles.length + i]![3] = role;
    });
    r[r.length - 1]![2] += offDb;
    return r;
  };
  it('a jump and probes on the bowl: consistent', () => {
    expect(recentFitConsistent(fitted(KNOWN, rs(['jump', 'probe', 'jump'])))).toBe(true);
  });
  it('only jumps among the last three: not (the wall was not read)', () => {
    expect(recentFitConsistent(fitted(KNOWN, rs(['jump', 'jump', 'jump'])))).toBe(false);
  });
  it('the last reading 3 dB off the bowl (6σ): not', () => {
    const st = fitted(KNOWN, rs(['jump', 'probe', 'probe'], 3));
    expect(recentFitConsistent(fitted(KNOWN, rs(['jump', 'probe', 'probe'])))).toBe(true);
    expect(Math.abs(st.readings.at(-1)!.residualDb!)).toBeGreaterThan(1.25);
    expect(recentFitConsistent(st)).toBe(false);
  });
});

describe('overDetermined: two readings more than the loosely held parameters', () => {
  it('known curvature: null position and floor are loose, so five readings; four with a given floor', () => {
    expect(overDetermined(fitted(KNOWN, on(RING.slice(0, 4))))).toBe(false);
    expect(overDetermined(fitted(KNOWN, on(RING.slice(0, 5))))).toBe(true);
    expect(overDetermined(fitted({ ...KNOWN, floorDb: -70 }, on(RING.slice(0, 3))))).toBe(false);
    expect(overDetermined(fitted({ ...KNOWN, floorDb: -70 }, on(RING.slice(0, 4))))).toBe(true);
    expect(overDetermined(unfitted(KNOWN, on(RING)))).toBe(false);
  });
  it('curvature estimated (isotropic): six readings', () => {
    expect(overDetermined(fitted({ model: 'isotropic' }, on(RING.slice(0, 5))))).toBe(false);
    expect(overDetermined(fitted({ model: 'isotropic' }, on(RING.slice(0, 6))))).toBe(true);
  });
  it('known curvature shown off by the readings (trims acting twice as strongly): still five', () => {
    // The loosened bowl holds ln c within ±0.5 (not counted as loose), aspect ±0.45 and coupling ±0.3.
    const twice = (x: number, y: number) =>
      10 * Math.log10(0.5 * ((x - T0[0]) ** 2 + (y - T0[1]) ** 2) + 1e-7);
    const st = fitted(KNOWN, on(RING.slice(0, 5), twice));
    expect(st.loose).toBe(true);
    expect(overDetermined(st)).toBe(true);
  });
});

describe('confirmed: the evidence shows a setting beats the start', () => {
  // Readings at and 1e-4 from the null, −60 dBc each, bound the null at −59 and −58.6 dBc: both well below
  // the start's −35 dBc read 1 dB (2σ) low.
  const pair: Reading[] = [
    [0.03, -0.02, -60],
    [0.0301, -0.02, -60],
  ];
  it('the start itself needs no evidence', () => {
    expect(
      confirmed(
        unfitted(KNOWN, [
          [0, 0, -35],
          [0.036, 0, -39],
        ]),
        [0, 0],
      ),
    ).toBe(true);
  });
  it('no fit: two supporting readings and a start read twice', () => {
    expect(confirmed(unfitted(KNOWN, [[0, 0, -35], [0, 0, -35.2], ...pair]), T0)).toBe(true);
  });
  it('no fit, a start read once: an outlier there would make anything look better, so not yet', () => {
    expect(confirmed(unfitted(KNOWN, [[0, 0, -35], ...pair]), T0)).toBe(false);
  });
  it('no fit, one supporting reading: not enough', () => {
    expect(confirmed(unfitted(KNOWN, [[0, 0, -35], [0, 0, -35.2], pair[0]!]), T0)).toBe(false);
  });
  it('a start at the given floor: nothing can be shown to beat it', () => {
    // The start reads −35 dBc with the floor given as −34: the start, read 1 dB low, is all floor.
    expect(confirmed(unfitted({ ...KNOWN, floorDb: -34 }, [[0, 0, -35], [0, 0, -35.2], ...pair]), T0)).toBe(
      false,
    );
    expect(confirmed(unfitted({ ...KNOWN, floorDb: -45 }, [[0, 0, -35], [0, 0, -35.2], ...pair]), T0)).toBe(
      true,
    );
  });
  it('readings 1.5 dB below a start read twice do not show a setting beats it; 2.2 dB below do', () => {
    // Each reading is taken 2σ (1 dB) high and the start 2σ low: 1.5 dB is within that margin, 2.2 dB is not.
    const at = (db: number) =>
      unfitted(KNOWN, [
        [0, 0, -35],
        [0, 0, -35],
        [0.01, 0, db],
        [0.01, 0, db],
      ]);
    expect(confirmed(at(-36.5), [0.01, 0])).toBe(false);
    expect(confirmed(at(-37.2), [0.01, 0])).toBe(true);
  });
  // The start, one probe per axis, two far probes and the null: only the null's own reading is near it.
  const SPARSE: [number, number][] = [
    [0, 0],
    [0.036, 0],
    [0, 0.036],
    [0.06, -0.02],
    [0.03, -0.05],
    [0.03, -0.02],
  ];
  it('a trusted, over-determined fit and the start’s reading standing: one supporting reading is enough', () => {
    const st = fitted(KNOWN, on(SPARSE));
    expect(trusted(st)).toBe(true);
    expect(supportOf(st, T0, 10 ** -3.6 - floorPower(st))).toBe(1);
    expect(confirmed(st, T0)).toBe(true);
    expect(dist(best(st).point)).toBeLessThan(0.5e-3);
  });
  it('the same, with the start’s one reading rejected (read 12 dB high): one reading is not enough', () => {
    const rs = on(SPARSE);
    rs[0]![2] += 12;
    const st = fitted(KNOWN, rs);
    expect(startReadsKept(st)).toBe(0);
    expect(confirmed(st, T0)).toBe(false);
  });
  it('no support at all: not confirmed, however sure the fit is', () => {
    // The start, the axis probes and two far probes: the fit finds the null, but no reading lies near it.
    const st = fitted(KNOWN, on(SPARSE.slice(0, 5)));
    expect(trusted(st)).toBe(true);
    expect(overDetermined(st)).toBe(true);
    expect(dist(estimate(st)!.centre)).toBeLessThan(1e-4);
    expect(confirmed(st, T0)).toBe(false);
    // The best setting is then a reading shown better than the start (the x probe, 4.7 dB under it).
    expect(best(st)).toEqual({ point: [0.036, 0], levelDb: bowlDb()(0.036, 0), source: 'reading' });
  });
  it('a fit that is not trusted does not stand in for a second reading of the start', () => {
    // The bowl over a −40 dBc floor, 5 dB under the start: the fit is over-determined but not trusted, and
    // the null's own reading is the one support; the start was read once.
    const st = fitted(KNOWN, on(RING, bowlDb(T0, -40)));
    expect(trusted(st)).toBe(false);
    expect(overDetermined(st)).toBe(true);
    expect(supportOf(st, T0, 10 ** ((startLevel(st) - 1) / 10) - floorPower(st))).toBe(1);
    expect(confirmed(st, T0)).toBe(false);
  });
  it('a setting the readings favour but the trusted fit puts less than 3σ below the start: not confirmed', () => {
    // A setting 0.0032 from the start toward the null, truly 0.8 dB below it, read twice 0.5 dB low; the
    // start read 1.2 dB high. The readings there are 2.5 dB under the start's (support), but the fit of
    // all readings puts the setting only about 0.8 dB below its start level: not shown better.
    const c: [number, number] = [0.00265, -0.00177];
    const rs = on([...RING, c, c]);
    rs[0]![2] += 1.2;
    rs[8]![2] -= 0.5;
    rs[9]![2] -= 0.5;
    const st = fitted(KNOWN, rs);
    expect(trusted(st)).toBe(true);
    expect(supportOf(st, c, 10 ** ((startLevel(st) - 1) / 10) - floorPower(st))).toBe(2);
    expect(confirmed(st, c)).toBe(false);
    expect(dist(best(st).point)).toBeLessThan(1e-3);
  });
});

describe('provisional and best: the setting worked around, and the one returned', () => {
  it('before any reading: the start (as given), level unknown', () => {
    const st = unfitted({ ...KNOWN, start: [0.01, -0.005] }, []);
    for (const b of [best(st), provisional(st)]) {
      expect(b.point).toEqual([0.01, -0.005]);
      expect(b.levelDb).toBeNaN();
      expect(b.source).toBe('start');
    }
  });
  it('without a trusted fit: the lowest reading, only when it beats the start by more than 2σ', () => {
    expect(
      provisional(
        unfitted(KNOWN, [
          [0, 0, -35],
          [0.036, 0, -35.8],
        ]),
      ).source,
    ).toBe('start');
    const p = provisional(
      unfitted(KNOWN, [
        [0, 0, -35],
        [0.036, 0, -37],
        [0, 0.036, -36],
      ]),
    );
    expect(p).toEqual({ point: [0.036, 0], levelDb: -37, source: 'reading' });
    expect(
      provisional(
        unfitted(KNOWN, [
          [0, 0, -35],
          [0.036, 0, -37],
          [0, 0.036, -36],
        ]),
      ).levelDb,
    ).toBe(-37);
  });
  it('a reading the fit rejected is never the provisional choice', () => {
    const st = unfitted(KNOWN, [
      [0, 0, -35],
      [0.036, 0, -50],
      [0, 0.036, -38],
    ]);
    st.readings[1]!.weight = 0;
    expect(provisional(st).point).toEqual([0, 0.036]);
  });
  it('the provisional choice unconfirmed: the lowest kept reading that is confirmed', () => {
    // A lone −65 dBc reading far from the pair at −60: it alone bounds its own setting (one reading),
    // the pair bound theirs twice over. The start is read twice.
    const st = unfitted(KNOWN, [
      [0, 0, -35],
      [0, 0, -35.2],
      [-0.03, 0.03, -65],
      [0.03, -0.02, -60],
      [0.0301, -0.02, -60],
    ]);
    expect(provisional(st).point).toEqual([-0.03, 0.03]);
    expect(best(st)).toEqual({ point: [0.03, -0.02], levelDb: -60, source: 'reading' });
  });
  it('of two settings shown better, the lower; a rejected reading’s level is never the one reported', () => {
    // Pairs of readings at −50 (read first) and at −60 dBc (read later), each pair bounding its own
    // setting twice; a lone −65 reading elsewhere is the unconfirmed provisional choice. A third reading
    // at the −60 setting reads −80 and is rejected by the fit (weight 0).
    const st = unfitted(KNOWN, [
      [0, 0, -35],
      [0, 0, -35.2],
      [0.02, 0.02, -50],
      [0.02, 0.02, -50],
      [-0.03, 0.03, -65],
      [0.03, -0.02, -60],
      [0.03, -0.02, -80],
      [0.03, -0.02, -60],
    ]);
    st.readings[6]!.weight = 0;
    expect(provisional(st).point).toEqual([-0.03, 0.03]);
    expect(best(st)).toEqual({ point: [0.03, -0.02], levelDb: -60, source: 'reading' });
  });
  it('a start whose first reading was 12 dB low: a setting the readings show better is still taken', () => {
    // The bowl over a −40 dBc floor, trims limited to ±0.05. The start's first reading (−46.9 for a true
    // −34.9) is rejected by the fit, and the lowest reading (−40, the floor) does not beat it by 2σ, so
    // the provisional choice is the start; the fit (null outside the range) is not trusted. The start's
    // two later readings and the two readings at the null still show the null better.
    const rs = on([...RING, [0, 0], [0, 0], near(1e-4, 0)], bowlDb(T0, -40));
    rs[0]![2] -= 12;
    const st = fitted(
      {
        ...KNOWN,
        bounds: [
          [-0.05, 0.05],
          [-0.05, 0.05],
        ],
      },
      rs,
    );
    expect(st.readings[0]!.weight).toBe(0);
    expect(trusted(st)).toBe(false);
    expect(provisional(st).source).toBe('start');
    expect(best(st)).toEqual({ point: T0, levelDb: -40, source: 'reading' });
  });
  it('nothing confirmed: the start, at its level', () => {
    const st = unfitted(KNOWN, [
      [0, 0, -35],
      [-0.03, 0.03, -65],
      [0.03, -0.02, -60],
    ]);
    expect(best(st)).toEqual({ point: [0, 0], levelDb: -35, source: 'start' });
  });
});

describe('floorPower and curvatureBound', () => {
  it('the floor discounted from the start: the larger of the given floor and the fitted one', () => {
    const fit70 = fitted(KNOWN, on(RING));
    expect(10 * Math.log10(floorPower(fit70))).toBeCloseTo(-70, 1);
    expect(floorPower(unfitted(KNOWN, [[0, 0, -35]]))).toBe(0);
    expect(floorPower(unfitted({ ...KNOWN, floorDb: -60 }, [[0, 0, -35]]))).toBeCloseTo(1e-6, 18);
    // Given −60 dBc while the readings show −70: the fit's floor lies between, the given floor is the larger.
    const given = fitted({ ...KNOWN, floorDb: -60 }, on(RING));
    expect(estimate(given)!.floorDb).toBeLessThan(-60);
    expect(floorPower(given)).toBeCloseTo(1e-6, 18);
    // Given −80 dBc: the fitted one.
    const low = fitted({ ...KNOWN, floorDb: -80 }, on(RING));
    expect(floorPower(low)).toBeCloseTo(Math.exp(low.fit!.surface.logN), 18);
    expect(floorPower(low)).toBeGreaterThan(1e-8);
  });
  it('an upper bound on the curvature along every direction (cross-coupled, unequal trims)', () => {
    // Knobs acting through hardware: amplitude √c·|L·(t − t0)| with L mixing the two (general quadratic).
    const L = [1.3, 0.5, 0.2, 0.7];
    const lvl = (x: number, y: number) => {
      const dx = x - T0[0];
      const dy = y - T0[1];
      return 10 * Math.log10(C * ((L[0]! * dx + L[1]! * dy) ** 2 + (L[2]! * dx + L[3]! * dy) ** 2) + 1e-7);
    };
    const pts = [...RING, [0.045, -0.005], [0.015, -0.035], [0.02, -0.01], [0.04, -0.03]] as [
      number,
      number,
    ][];
    for (const model of ['quadratic', 'known-curvature'] as const) {
      const st = fitted({ model, curvature: C, noiseDb: 0.5 }, on(pts, lvl));
      const sf = st.fit!.surface;
      // The steepest direction of the fitted bowl, searched over 3600 directions.
      let steepest = 0;
      for (let k = 0; k < 3600; k++) {
        const a = (k * Math.PI) / 3600;
        const [u, v] = [Math.cos(a), Math.sin(a)];
        const es = Math.exp(sf.s);
        steepest = Math.max(steepest, Math.exp(sf.logC) * (es * u * u + 2 * sf.k * u * v + (v * v) / es));
      }
      const bound = curvatureBound(st);
      if (model === 'quadratic') expect(bound / steepest).toBeCloseTo(2, 4);
      else expect(bound / Math.max(steepest, C)).toBeCloseTo(Math.exp(0.3), 4);
    }
  });
});
