/**
 * The null seeker's stop rules (checkStop in src/calibrate/seeker-plan.ts), through the public ask/tell
 * API, with readings that lie on a known bowl.
 *
 * The bowl: with a gain error a (amplitude ratio − 1) and a phase error b (rad) left after the trims, the
 * image relative to the wanted tone is ¼·(a² + b²) for small errors (K. Schmidt, "Phase-Shift Network
 * Analysis and Optimization", QEX Aug 1994 §2: IRR ≈ 4/(ε² + φ²)). A trim setting
 * t = (x, y) in those natural units with the error at t0 therefore reads
 * `10·log10(N + ¼·|t − t0|²)` dB over a reading floor N, plus Gaussian reading noise (seeded). Its floor
 * radius √(N/¼) is where the bowl rises 3 dB above the floor: a seeker that stops on the floor must
 * return a setting well inside it. Nulls and floors are invented (a bench of our own); the tests check
 * each stop reason against what the bowl says, not against the seeker's own figures.
 */
import { describe, expect, it } from 'vitest';
import {
  createNullSeeker,
  type NullSeeker,
  type NullSeekerOptions,
  resolveSeekerOptions,
} from '../../src/calibrate/null-seeker.js';
import { best } from '../../src/calibrate/seeker-evidence.js';
import { estimate, refit } from '../../src/calibrate/seeker-fit.js';
import { checkStop } from '../../src/calibrate/seeker-plan.js';
import { createSeekerState } from '../../src/calibrate/seeker-state.js';
import { createRng } from '../../src/core/rng.js';

const C = 0.25; // K. Schmidt, QEX Aug 1994 §2: image/wanted ≈ (a² + b²)/4

function bowl(t0: readonly [number, number], floorDb: number, noiseDb: number, seed: number) {
  const rng = createRng(seed);
  const N = 10 ** (floorDb / 10);
  const power = (p: readonly [number, number]) => C * ((p[0] - t0[0]) ** 2 + (p[1] - t0[1]) ** 2) + N;
  return {
    read: (p: readonly [number, number]) => 10 * Math.log10(power(p)) + noiseDb * rng.normal(),
    trueDb: (p: readonly [number, number]) => 10 * Math.log10(power(p)),
    floorRadius: Math.sqrt(N / C),
  };
}

function drive(s: NullSeeker, read: (p: readonly [number, number]) => number): [number, number][] {
  const seen: [number, number][] = [];
  for (let p = s.next(); p; p = s.next()) {
    seen.push(p);
    s.tell(p, read(p));
  }
  return seen;
}

const KNOWN: Partial<NullSeekerOptions> = { model: 'known-curvature', curvature: C, noiseDb: 0.5 };
const T0: [number, number] = [0.03, -0.02]; // 0.26 dB and 1.15° of error: the start reads about −35 dBc

describe('floor stop', () => {
  it('stops on the floor with the setting inside half the floor radius, in fewer readings than the budget', () => {
    for (let seed = 1; seed <= 6; seed++) {
      const b = bowl(T0, -70, 0.5, seed);
      const s = createNullSeeker({ ...KNOWN, maxReadings: 30 });
      drive(s, b.read);
      const where = `seed ${seed}`;
      expect(s.stopReason, where).toBe('floor');
      expect(s.count, where).toBeLessThan(30);
      const best = s.best();
      expect(Math.hypot(best.point[0] - T0[0], best.point[1] - T0[1]), where).toBeLessThan(
        0.5 * b.floorRadius,
      );
      // Half the floor radius adds at most ¼ of the floor: 0.97 dB.
      expect(b.trueDb(best.point), where).toBeLessThan(-70 + 0.97);
      // The floor is 35 dB below the start: no second reading of the start was needed.
      expect(s.readings().filter((r) => r.point[0] === 0 && r.point[1] === 0).length, where).toBe(1);
    }
  });
  it('a floor within 20 dB of a start read once: reads the start again before stopping on it', () => {
    // Floor −50 dBc, start about −35 dBc: a start read high by an outlier would make a flat stretch
    // look like such a floor, so the start is read a second time first.
    for (let seed = 1; seed <= 6; seed++) {
      const b = bowl(T0, -50, 0.5, seed);
      const s = createNullSeeker({ ...KNOWN, maxReadings: 30 });
      const seen = drive(s, b.read);
      const where = `seed ${seed}`;
      expect(s.stopReason, where).toBe('floor');
      const atStart = seen.flatMap((p, i) => (p[0] === 0 && p[1] === 0 ? [i] : []));
      expect(atStart.length, where).toBe(2);
      expect(atStart[0], where).toBe(0);
      // The re-read comes late, once the floor is in view (after the axis probes and a jump).
      expect(atStart[1]!, where).toBeGreaterThan(4);
      const best = s.best();
      expect(Math.hypot(best.point[0] - T0[0], best.point[1] - T0[1]), where).toBeLessThan(
        0.5 * b.floorRadius,
      );
    }
  });
  it('a start read 12 dB high (an outlier) does not turn a bowl into a floor: the re-read shows it', () => {
    // The start's true level is about −35 dBc; it reads −23. The bowl's floor lies at −50.
    for (let seed = 1; seed <= 4; seed++) {
      const b = bowl(T0, -50, 0.5, seed);
      const s = createNullSeeker({ ...KNOWN, maxReadings: 30 });
      let first = true;
      drive(s, (p) => {
        const db = b.read(p);
        if (!first) return db;
        first = false;
        return db + 12;
      });
      const where = `seed ${seed}`;
      expect(s.stopReason, where).toBe('floor');
      const best = s.best();
      expect(Math.hypot(best.point[0] - T0[0], best.point[1] - T0[1]), where).toBeLessThan(
        0.5 * b.floorRadius,
      );
    }
  });
});

describe('target stop', () => {
  it('stops for a 50 dB target once the fit puts the null 5 dB past it, short of the floor', () => {
    for (let seed = 1; seed <= 4; seed++) {
      const b = bowl(T0, -80, 0.5, seed);
      const s = createNullSeeker({ ...KNOWN, targetDb: 50, maxReadings: 30 });
      drive(s, b.read);
      const where = `seed ${seed}`;
      expect(s.stopReason, where).toBe('target');
      expect(s.estimate()!.expectedTrueDb, where).toBeLessThanOrEqual(-55);
      expect(b.trueDb(s.best().point), where).toBeLessThanOrEqual(-50);
    }
  });
  it('a target is never declared met on a fit the seeker does not trust', () => {
    // The floor 5 dB under the start: every fit puts its floor within 10 dB of the start's level and is
    // not trusted, so the 45 dB target (below the −40 dBc floor the readings show) is never claimed.
    for (let seed = 1; seed <= 3; seed++) {
      const b = bowl(T0, -40, 0.5, seed);
      const s = createNullSeeker({ ...KNOWN, targetDb: 45, maxReadings: 20 });
      drive(s, b.read);
      expect(s.stopReason, `seed ${seed}`).toBe('budget');
    }
  });
  it('a target the floor hides is never met: the run goes on to the floor', () => {
    const b = bowl(T0, -70, 0.5, 1);
    const s = createNullSeeker({ ...KNOWN, targetDb: 90, maxReadings: 30 });
    drive(s, b.read);
    expect(s.stopReason).toBe('floor');
  });
});

describe('budget, failures, inactive trims', () => {
  it('the budget ends the run after exactly maxReadings readings, failed ones counted', () => {
    const b = bowl(T0, -70, 0.5, 1);
    const s = createNullSeeker({ ...KNOWN, maxReadings: 4 });
    let k = 0;
    drive(s, (p) => (++k === 2 ? Number.NaN : b.read(p)));
    expect(s.stopReason).toBe('budget');
    expect(s.count).toBe(4);
  });
  it('three failed readings in a row end the run; a good reading between failures resets the count', () => {
    const b = bowl(T0, -70, 0.5, 1);
    const s = createNullSeeker({ ...KNOWN, maxReadings: 30 });
    s.tell(s.next()!, b.read([0, 0]));
    const plan = ['fail', 'fail', 'ok', 'fail', 'fail'] as const;
    for (const what of plan) {
      const p = s.next()!;
      s.tell(p, what === 'ok' ? b.read(p) : Number.NaN);
      expect(s.done).toBe(false);
    }
    // The failed setting is asked again (a retry), and the third failure in a row stops the run.
    const again = s.next()!;
    expect(again).toEqual(s.readings().at(-1)!.point);
    s.tell(again, Number.NaN);
    expect(s.stopReason).toBe('measurement-failed');
    expect(s.count).toBe(7);
    expect(s.best().point).toEqual([0, 0]);
  });
  it('readings that no trim moves: both trims inactive, the start kept', () => {
    // A carrier null with DC blocked by a coupling capacitor reads the same whatever the DC trims do.
    const rng = createRng(3);
    const s = createNullSeeker({ ...KNOWN, maxReadings: 30 });
    drive(s, () => -40 + 0.5 * rng.normal());
    expect(s.stopReason).toBe('trim-inactive');
    expect(s.axes()).toEqual(['inactive', 'inactive']);
    expect(s.best().point).toEqual([0, 0]);
    expect(s.count).toBeLessThan(30);
  });
});

describe('resolution stop on quantised trims', () => {
  const step = 0.002;
  // Nulls a known distance from the grid's mid-lines; floor −120 dBc so that only the grid limits the null.
  for (const t0 of [
    [0.0173, -0.0121],
    [0.0257, 0.0083],
    [-0.0139, 0.0304],
  ] as [number, number][]) {
    it(`null (${t0[0]}, ${t0[1]}) on a ${step} grid: stops on resolution at the nearest grid point`, () => {
      for (let seed = 1; seed <= 3; seed++) {
        const b = bowl(t0, -120, 0.5, seed);
        const s = createNullSeeker({ ...KNOWN, step: [step, step], maxReadings: 30 });
        const seen = drive(s, b.read);
        const where = `seed ${seed}`;
        expect(s.stopReason, where).toBe('resolution');
        for (const p of seen)
          for (const x of p) expect(Math.abs(x / step - Math.round(x / step)), where).toBeLessThan(1e-9);
        const nearest = t0.map((v) => Math.round(v / step) * step);
        expect(s.best().point[0], where).toBeCloseTo(nearest[0]!, 12);
        expect(s.best().point[1], where).toBeCloseTo(nearest[1]!, 12);
      }
    });
  }
  it('a null midway between two grid points is read on, never called resolved', () => {
    // x* = 0.025 lies midway between 0.024 and 0.026: either is as good, and the seeker cannot say
    // which side the null is on, so it keeps reading (here to the budget) rather than stop on resolution.
    const t0: [number, number] = [0.025, -0.0121];
    for (let seed = 1; seed <= 3; seed++) {
      const b = bowl(t0, -120, 0.5, seed);
      const s = createNullSeeker({ ...KNOWN, step: [step, step], maxReadings: 20 });
      drive(s, b.read);
      const where = `seed ${seed}`;
      expect(s.stopReason, where).toBe('budget');
      const best = s.best().point;
      expect(
        [0.024, 0.026].some((x) => Math.abs(best[0] - x) < 1e-12),
        where,
      ).toBe(true);
      expect(best[1], where).toBeCloseTo(-0.012, 12);
    }
  });
  it('one trim quantised, the other continuous: never stopped on resolution (the continuous one has no grid)', () => {
    for (let seed = 1; seed <= 2; seed++) {
      const b = bowl([0.0173, -0.0121], -120, 0.5, seed);
      const s = createNullSeeker({ ...KNOWN, step: [step, 0], maxReadings: 20 });
      drive(s, b.read);
      expect(s.stopReason, `seed ${seed}`).toBe('budget');
      expect(s.best().point[0], `seed ${seed}`).toBeCloseTo(0.018, 12);
      expect(Math.abs(s.best().point[1] + 0.0121), `seed ${seed}`).toBeLessThan(2e-4);
    }
  });
  it('one trim inactive, the other quantised: resolution on the active one alone', () => {
    // The second trim moves nothing (the readings ignore y): the null is a line, x* = 0.0173. Noise 0.25 dB
    // (half the 0.5 dB the seeker assumes), so that no probe of y reads 1.5 dB off by chance.
    for (let seed = 1; seed <= 3; seed++) {
      const b = bowl([0.0173, 0], -120, 0.25, seed);
      // Curvature not given (isotropic model): with the known curvature the first probe of x lands on
      // the null's grid point itself, and a setting already read is never jumped to (see tests/mutants/seeker.md).
      const s = createNullSeeker({ model: 'isotropic', noiseDb: 0.5, step: [step, step], maxReadings: 30 });
      drive(s, (p) => b.read([p[0], 0]));
      const where = `seed ${seed}`;
      expect(s.axes(), where).toEqual(['active', 'inactive']);
      expect(s.stopReason, where).toBe('resolution');
      expect(s.best().point[0], where).toBeCloseTo(0.018, 12);
      expect(s.best().point[1], where).toBe(0);
    }
  });
});

describe('the floor stop rule on given readings (checkStop called directly)', () => {
  // Readings on the bowl without noise: the start, one probe per axis, a ring of radius 0.01 around the
  // null and the null itself, two settings 2e-4 from the null (at the floor within 0.4 dB) and the wall
  // 1e-3 from it in x and y; the last reading was a jump to the best setting.
  const near = (dx: number, dy: number): [number, number] => [T0[0] + dx, T0[1] + dy];
  const SET: [number, number][] = [
    [0, 0],
    [0.036, 0],
    [0, 0.036],
    [0.04, -0.02],
    [0.02, -0.02],
    [0.03, -0.01],
    [0.03, -0.03],
    [0.03, -0.02],
    near(2e-4, 0),
    near(0, 2e-4),
    near(1e-3, 0),
    near(0, 1e-3),
  ];
  function state(noiseDb: number, floorDb: number, extra: [number, number][] = [], sinceJump = 0) {
    const b = bowl(T0, floorDb, 0, 1);
    const st = createSeekerState(resolveSeekerOptions({ ...KNOWN, noiseDb, maxReadings: 30 }));
    st.status = ['active', 'active'];
    st.readings = [...SET, ...extra].map((p, i) => ({
      point: p,
      db: b.read(p),
      role: i === 0 ? 'start' : 'probe',
    }));
    st.startDb = st.readings[0]!.db;
    refit(st);
    st.lastJump = [...best(st).point];
    st.sinceJump = sinceJump;
    checkStop(st);
    return st;
  }
  it('floor 35 dB under the start, null located 15 dB inside the floor, right after a jump: stops on the floor', () => {
    const st = state(0.5, -70);
    expect(estimate(st)!.expectedTrueDb).toBeLessThan(-80);
    expect(st.stopReason).toBe('floor');
  });
  it('the same after a probe (no jump to the null since): reads on', () => {
    expect(state(0.5, -70, [], 1).stopReason).toBeUndefined();
  });
  it('the same readings taken as 1 dB noisy: the null is not yet 10 dB inside the floor, so it reads on', () => {
    const st = state(1, -70);
    expect(estimate(st)!.expectedTrueDb).toBeGreaterThan(-80);
    expect(estimate(st)!.expectedTrueDb).toBeLessThan(-75);
    expect(st.stopReason).toBeUndefined();
  });
  it('a floor 15 dB under a start read once: the start is read again first, then the floor stop holds', () => {
    const once = state(0.5, -50);
    expect(once.stopReason).toBeUndefined();
    expect(once.rereadStart).toBe(true);
    const twice = state(0.5, -50, [[0, 0]]);
    expect(twice.rereadStart).toBe(false);
    expect(twice.stopReason).toBe('floor');
  });
});
