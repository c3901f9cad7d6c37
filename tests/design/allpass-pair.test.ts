import { describe, expect, it } from 'vitest';
import { analogAllpassPrototype, designAllpassPair } from '../../src/design/allpass-pair.js';
import { analyzeNetwork } from '../../src/design/analysis.js';
import type { AllpassBranch, AllpassNetwork } from '../../src/design/network.js';
import { expectOrthotoneError } from '../support/errors.js';
import { branchAt, ownSweep } from '../support/network-response.js';

/** Max |phase difference − 90°| of an analog prototype over [1/√B, √B], rad, on a dense log grid (test's own loop). */
function analogMaxError(leading: number[], lagging: number[], bandRatio: number): number {
  const pts = 40001;
  let worst = 0;
  for (let k = 0; k < pts; k++) {
    const w = bandRatio ** (k / (pts - 1) - 0.5);
    let d = -Math.PI / 2;
    for (const p of leading) d -= 2 * Math.atan(w / p);
    for (const p of lagging) d += 2 * Math.atan(w / p);
    worst = Math.max(worst, Math.abs(d));
  }
  return worst;
}

/** Suppression at unity gain for phase error ε: 20·log10(cot(ε/2)) (K. Schmidt, QEX Aug 1994). */
const dbFromRad = (e: number): number => 20 * Math.log10(1 / Math.tan(e / 2));

/** Worst suppression over the band, dB, dense log grid: |Hi + jHq| / |Hi − jHq| (Schmidt QEX 1994 §2). */
function ownWorstDb(br: { i: AllpassBranch; q: AllpassBranch }, fs: number, band: [number, number]): number {
  const pts = 20001;
  let worst = Number.POSITIVE_INFINITY;
  for (let k = 0; k < pts; k++) {
    const f = band[0] * (band[1] / band[0]) ** (k / (pts - 1));
    const w = (2 * Math.PI * f) / fs;
    const [ir, ii] = branchAt(br.i, w);
    const [qr, qi] = branchAt(br.q, w);
    const s = 20 * Math.log10(Math.hypot(ir - qi, ii + qr) / Math.hypot(ir + qi, ii - qr));
    worst = Math.min(worst, s);
  }
  return worst;
}

describe('analogAllpassPrototype (Darlington/Orchard closed form)', () => {
  it('reproduces Winder Table 9.15 for B = 20, order 4: poles and error', () => {
    // Source: Winder, Analog and Digital Filter Design, 2nd ed., Table 9.15 (B = 20): order 4 poles
    // 7.764836, 0.559005 / 1.788893, 0.128786; error 0.044204 rad (33.11 dB); Q = 0.324228.
    const p = analogAllpassPrototype(4, 20);
    expect(p.leading.map((x) => +x.toFixed(6))).toEqual([0.559005, 7.764836]);
    expect(p.lagging.map((x) => +x.toFixed(6))).toEqual([0.128786, 1.788893]);
    expect(p.nome).toBeCloseTo(0.324228, 6);
    // The table's error column is the 4qⁿ figure (to all 6 digits); the evaluated ripple of the
    // poles is 0.0441971 rad, 0.016% less, and gives the same 33.11 dB.
    expect(p.phaseErrorEstimateRad).toBeCloseTo(0.044204, 6);
    const e = analogMaxError(p.leading, p.lagging, 20);
    expect(Math.abs(e / 0.044204 - 1)).toBeLessThan(2e-4);
    expect(e).toBeLessThanOrEqual(0.044204);
    expect(dbFromRad(e)).toBeCloseTo(33.11, 2);
  });

  it('reproduces Winder Table 9.15 errors for orders 6, 8 and 10', () => {
    // Source: Winder, Table 9.15 (B = 20): order 6 0.004647 rad (52.67 dB); order 8 72.24 dB; order 10 91.81 dB.
    // The dB column is given to two decimals, some truncated (52.677 → 52.67), some rounded
    // (91.809 → 91.81): allow 0.01 dB.
    const p6 = analogAllpassPrototype(6, 20);
    expect(p6.phaseErrorEstimateRad).toBeCloseTo(0.004647, 6);
    const e6 = analogMaxError(p6.leading, p6.lagging, 20);
    expect(Math.abs(e6 / 0.004647 - 1)).toBeLessThan(1e-4);
    for (const [n, db] of [
      [6, 52.67],
      [8, 72.24],
      [10, 91.81],
    ] as const) {
      const p = analogAllpassPrototype(n, 20);
      const got = dbFromRad(analogMaxError(p.leading, p.lagging, 20));
      expect(Math.abs(got - db)).toBeLessThan(0.01);
    }
  });

  it('reproduces the JA7UHV "design PSN" example: 6 poles, 90 ± 0.750° over 44.17766746:1, 43.7 dB', () => {
    // Source: JA7UHV, "design PSN" : 6 poles, 90 ± 0.750° over a 44.17766746:1 band, worst 43.7 dB.
    const B = 44.17766746;
    const p = analogAllpassPrototype(6, B);
    const e = analogMaxError(p.leading, p.lagging, B);
    expect((e * 180) / Math.PI).toBeCloseTo(0.75, 3);
    expect(dbFromRad(e)).toBeCloseTo(43.7, 1);
  });

  it('places poles symmetrically about the band centre (p_m·p_{n+1−m} = 1) and alternates branches', () => {
    // Source: sc(u)·sc(K − u) = 1/k' (A&S 16.8.2), so the poles pair up about 1 (common practice, no source for the wording).
    for (const n of [3, 7, 12]) {
      const p = analogAllpassPrototype(n, 150);
      for (let m = 0; m < n; m++) expect(p.poles[m]! * p.poles[n - 1 - m]!).toBeCloseTo(1, 12);
      for (let m = 1; m < n; m++) expect(p.poles[m]!).toBeGreaterThan(p.poles[m - 1]!);
      expect(p.lagging.length).toBe(Math.ceil(n / 2));
      expect(p.lagging[0]).toBe(p.poles[0]);
    }
  });
});

describe('designAllpassPair', () => {
  it('bilinear image keeps the analog error exactly (first-order form)', () => {
    // Source: common practice, no source — bilinear transform with prewarping keeps the equiripple optimum
    // (each section's phase is the analog phase at tan(ω/2)/g).
    const fs = 48000;
    const band: [number, number] = [300, 3000];
    const B = Math.tan((Math.PI * 3000) / fs) / Math.tan((Math.PI * 300) / fs);
    for (const n of [3, 6, 9]) {
      const d = designAllpassPair({ sampleRate: fs, band, sections: n });
      const p = analogAllpassPrototype(n, B);
      const analogDb = dbFromRad(analogMaxError(p.leading, p.lagging, B));
      expect(d.sections).toBe(n);
      expect(d.worstSuppressionDb).toBeCloseTo(analogDb, 2);
      expect(ownWorstDb(d.branches, fs, band)).toBeCloseTo(analogDb, 2);
      for (const s of [...d.branches.i.sections, ...d.branches.q.sections]) {
        expect(s.order).toBe(1);
        expect(Math.abs(s.a)).toBeLessThan(1);
      }
    }
  });

  it('gives the fewest sections that meet the target (one fewer fails), by independent evaluation', () => {
    // Source: the closed form is the minimax optimum for each size (Darlington 1950), so the fewest
    // sections meeting the target is found by size alone; checked here by the test's own evaluation.
    const cases: { fs: number; band: [number, number]; targetDb: number }[] = [
      { fs: 48000, band: [300, 3000], targetDb: 60 },
      { fs: 8000, band: [200, 3400], targetDb: 40 },
      { fs: 44100, band: [50, 15000], targetDb: 70 },
      { fs: 96000, band: [100, 20000], targetDb: 90 },
      { fs: 48000, band: [1000, 1200], targetDb: 50 },
    ];
    for (const c of cases) {
      const d = designAllpassPair({ sampleRate: c.fs, band: c.band, targetDb: c.targetDb });
      expect(ownWorstDb(d.branches, c.fs, c.band)).toBeGreaterThanOrEqual(c.targetDb);
      expect(Math.abs(ownWorstDb(d.branches, c.fs, c.band) - d.worstSuppressionDb)).toBeLessThan(0.05);
      if (d.sections > 1) {
        const fewer = designAllpassPair({ sampleRate: c.fs, band: c.band, sections: d.sections - 1 });
        expect(ownWorstDb(fewer.branches, c.fs, c.band)).toBeLessThan(c.targetDb);
      }
    }
  });

  it('puts Q behind I by 90°: a tone through the two branches gives I = cos, Q = sin (README.md conventions: Q lags I by 90°)', () => {
    // Source: the README.md sign convention (Q lags I by 90°); the branches are run here as difference equations.
    const fs = 48000;
    const d = designAllpassPair({ sampleRate: fs, band: [300, 3000], targetDb: 60 });
    const run = (b: AllpassBranch, x: Float64Array): Float64Array => {
      let y = Float64Array.from(x);
      const delayed = new Float64Array(y.length);
      for (let n = 0; n < y.length; n++) delayed[n] = n >= b.delay ? y[n - b.delay]! : 0;
      y = delayed;
      for (const s of b.sections) {
        const m = s.order;
        const out = new Float64Array(y.length);
        for (let n = 0; n < y.length; n++) {
          const xm = n >= m ? y[n - m]! : 0;
          const ym = n >= m ? out[n - m]! : 0;
          out[n] = s.a * y[n]! + xm - s.a * ym; // (a + z^-m)/(1 + a z^-m)
        }
        y = out;
      }
      return y;
    };
    const f = 1000;
    const x = new Float64Array(48000).map((_, n) => Math.cos((2 * Math.PI * f * n) / fs));
    const I = run(d.branches.i, x);
    const Q = run(d.branches.q, x);
    // Phase of each output by projection over the last 24000 samples (an integer number of cycles).
    const phase = (y: Float64Array): number => {
      let c = 0;
      let s = 0;
      for (let n = 24000; n < 48000; n++) {
        c += y[n]! * Math.cos((2 * Math.PI * f * n) / fs);
        s += y[n]! * Math.sin((2 * Math.PI * f * n) / fs);
      }
      return Math.atan2(-s, c);
    };
    let diff = ((phase(I) - phase(Q)) * 180) / Math.PI;
    diff = ((diff % 360) + 360) % 360;
    // Expected: 90° plus the network's own phase error at 1 kHz (test's own frequency-domain evaluation).
    const w = (2 * Math.PI * f) / fs;
    const [ir, ii] = branchAt(d.branches.i, w);
    const [qr, qi] = branchAt(d.branches.q, w);
    const expected = ((Math.atan2(ii, ir) - Math.atan2(qi, qr)) * 180) / Math.PI;
    expect(Math.abs(diff - (((expected % 360) + 360) % 360))).toBeLessThan(1e-6);
    expect(Math.abs(diff - 90)).toBeLessThanOrEqual(d.maxPhaseErrorDeg + 1e-9);
  });

  it('z⁻² form: symmetric band reproduces the first-order design with 2S+1 poles at one multiply per section', () => {
    // Source: derivation in allpass-pair.ts (pairs of poles p, 1/p under g = 1 give (c + z⁻²)/(1 + c z⁻²),
    // c = −a²; checked here: the bilinear image of the closed form with 4N+1 poles, B = cot²(π·f1/fs)).
    const fs = 48000;
    const band: [number, number] = [600, 23400];
    for (const S of [3, 4, 5, 8]) {
      const two = designAllpassPair({ sampleRate: fs, band, sections: S, form: 'second-order' });
      const one = designAllpassPair({ sampleRate: fs, band, sections: 2 * S + 1 });
      expect(two.prototypeOrder).toBe(2 * S + 1);
      expect(two.branches.i.sections.length + two.branches.q.sections.length).toBe(S);
      expect(two.branches.i.delay + two.branches.q.delay).toBe(1);
      expect(ownWorstDb(two.branches, fs, band)).toBeCloseTo(ownWorstDb(one.branches, fs, band), 3);
    }
  });

  it('z⁻² form on a band not symmetric about fs/4 designs for the enclosing symmetric band', () => {
    // Source: the z⁻² structure's error is mirror-symmetric about fs/4 (z⁻² → conj at π − ω), common practice, no source.
    const fs = 8000;
    const band: [number, number] = [300, 3000];
    const d = designAllpassPair({ sampleRate: fs, band, targetDb: 50, form: 'second-order' });
    expect(d.designBand).toEqual([300, 3700]);
    expect(ownWorstDb(d.branches, fs, band)).toBeGreaterThanOrEqual(50);
    const fewer = designAllpassPair({ sampleRate: fs, band, sections: d.sections - 1, form: 'second-order' });
    expect(ownWorstDb(fewer.branches, fs, [300, 3700])).toBeLessThan(50);
  });

  it("reproduces O. Niemitalo's public z⁻² pair: his coefficients analysed, and our design for his spec", () => {
    // Source: O. Niemitalo, music-dsp (2001), public post: two cascades of four
    // sections (a² − z⁻²)/(1 − a²z⁻²), the first also delayed one sample; fs 44100, 20–22030 Hz,
    // stated 0.7° max. The 0.70317° (44.24 dB) below is computed, not published: his coefficients
    // evaluated by the tests' own evaluator (tests/support/network-response.ts) on 200 001 log-spaced
    // points, which analyzeNetwork must match.
    const first = [0.6923877778065, 0.9360654322959, 0.988229522686, 0.9987488452737];
    const second = [0.4021921162426, 0.856171088242, 0.9722909545651, 0.9952884791278];
    // (a² − z⁻²)/(1 − a²z⁻²) = −(c + z⁻²)/(1 + c z⁻²) with c = −a²; the sign cancels over 4 sections.
    const sec = (a: number) => ({ order: 2 as const, a: -a * a });
    const theirs: AllpassNetwork = {
      format: 'orthotone-network',
      version: 1,
      kind: 'allpass',
      sampleRate: 44100,
      band: [20, 22030],
      // His first branch (delayed) lags: with our sign convention it is Q.
      branches: { i: { delay: 0, sections: second.map(sec) }, q: { delay: 1, sections: first.map(sec) } },
      predicted: { worstSuppressionDb: 0, maxPhaseErrorDeg: 0, maxGainErrorDb: 0 },
      cost: { multipliesPerSample: 8, latencySamples: 0 },
      design: {},
    };
    const an = analyzeNetwork(theirs);
    const ownTheirs = ownSweep(theirs, 200000);
    expect(ownTheirs.maxPhaseErrorDeg).toBeCloseTo(0.70317, 4);
    expect(ownTheirs.worstSuppressionDb).toBeCloseTo(44.24, 2);
    expect(Math.abs(an.maxPhaseErrorDeg - ownTheirs.maxPhaseErrorDeg)).toBeLessThan(1e-4);
    expect(an.maxPhaseErrorDeg).toBeCloseTo(0.70317, 4);
    expect(an.worst.suppressionDb).toBeCloseTo(44.24, 2);
    expect(an.cost.multipliesPerSample).toBe(8);

    const ours = designAllpassPair({
      sampleRate: 44100,
      band: [20, 22030],
      targetDb: 44,
      form: 'second-order',
    });
    expect(ours.sections).toBe(8);
    expect(ours.branches.q.delay).toBe(1);
    expect(ours.branches.i.delay).toBe(0);
    const mags = (b: AllpassBranch) => b.sections.map((s) => Math.sqrt(-s.a)).sort();
    // His coefficients agree with the closed form to about 3e-5 (his were presumably found by a
    // numerical search; the closed form is the optimum and comes out slightly better). 0.7022° is a
    // regression value: our design's error as computed by the tests' own evaluator, which the
    // design's reported figure must match; the only published figure is his 0.7°.
    const maxDiff = (xs: number[], ref: number[]) => Math.max(...xs.map((a, k) => Math.abs(a - ref[k]!)));
    expect(maxDiff(mags(ours.branches.q), first)).toBeLessThan(4e-5);
    expect(maxDiff(mags(ours.branches.i), second)).toBeLessThan(4e-5);
    const ownOurs = ownSweep({ ...theirs, branches: ours.branches }, 200000);
    expect(Math.abs(ours.maxPhaseErrorDeg - ownOurs.maxPhaseErrorDeg)).toBeLessThan(1e-4);
    expect(ownOurs.maxPhaseErrorDeg).toBeLessThan(ownTheirs.maxPhaseErrorDeg);
    expect(ownOurs.maxPhaseErrorDeg).toBeCloseTo(0.7022, 3);
  });

  it('estimates 4qⁿ from above, converging quickly on the evaluated error', () => {
    // Source: max phase error ≈ 4qⁿ rad (S. Darlington, BSTJ 29:94, 1950; H. J. Orchard, Wireless Engineer 27:72, 1950).
    const rel = (n: number) => {
      const d = designAllpassPair({ sampleRate: 48000, band: [200, 5000], sections: n });
      return d.phaseErrorEstimateDeg / d.maxPhaseErrorDeg - 1;
    };
    expect(rel(2)).toBeGreaterThan(0);
    expect(rel(2)).toBeLessThan(0.03);
    expect(rel(3)).toBeGreaterThan(0);
    expect(rel(3)).toBeLessThan(0.005);
    expect(Math.abs(rel(8))).toBeLessThan(1e-6);
  });

  it('rejects bad specs with typed errors naming the value and the fix', () => {
    expectOrthotoneError(
      () => designAllpassPair({ sampleRate: 48000, band: [300, 3000], targetDb: 180, maxSections: 10 }),
      'UNREACHABLE_TARGET',
      /targetDb 180 dB needs more than maxSections 10.*raise maxSections/,
    );
    expectOrthotoneError(
      () => designAllpassPair({ sampleRate: 48000, band: [300, 3000], sections: 4, targetDb: 60 }),
      'UNREACHABLE_TARGET',
      /sections 4 give .* below targetDb 60 dB: use sections 6, or omit sections/,
    );
    expectOrthotoneError(
      () => designAllpassPair({ sampleRate: 48000, band: [300, 30000] }),
      'INVALID_BAND',
      /30000 Hz must be below Nyquist 24000 Hz/,
    );
    expectOrthotoneError(
      () => designAllpassPair({ sampleRate: 48000, band: [300, 3000], form: 'third' as 'first-order' }),
      'INVALID_ARGUMENT',
      /form "third" is not recognised/,
    );
    expectOrthotoneError(
      () => designAllpassPair({ sampleRate: 48000, band: [300, 3000], sections: 0 }),
      'INVALID_ARGUMENT',
      /sections 0 must be a whole number from 1 to 64/,
    );
  });
});
