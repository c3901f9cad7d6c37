// The emission check: the mixer's harmonic responses against the square-wave Fourier series, and
// pass/fail around the 43 dB limit of 47 CFR §97.307(d) with worked numbers.
import { describe, expect, it } from 'vitest';
import { designNetwork } from '../../src/design/design-network.js';
import { checkEmissions, type EmissionProduct } from '../../src/emissions/check.js';
import { domainOf, emissionBands, RULE_SETS } from '../../src/emissions/limits.js';
import { simulateProducts } from '../../src/emissions/products.js';
import { createVirtualExciter } from '../../src/simulate/exciter.js';
import { IDEAL_MODEL } from '../../src/simulate/model.js';

describe('mixer responses at odd LO harmonics', () => {
  // Fourier series of a square wave: odd harmonics only, amplitude 1/k of the fundamental
  // (A. V. Oppenheim & A. S. Willsky, Signals and Systems, 2nd ed., Prentice Hall 1997, §3.3,
  // Example 3.5 — the example number from memory). 20·log10(1/3) = −9.542 dB, 20·log10(1/5) = −13.979 dB.
  // The four-phase mixer's 25 %-duty switching functions give the same 1/3 and 1/5 ratios.
  it('analytic model: 3rd carries the opposite sideband at −9.54 dB, 5th the same sideband at −13.98 dB', () => {
    const ex = createVirtualExciter(IDEAL_MODEL, { sampleRate: 48000, seed: 1 });
    const h3 = ex.harmonicResponse(1000, 3);
    const h5 = ex.harmonicResponse(1000, 5);
    expect(h3.oppositeSideDbc).toBeCloseTo(20 * Math.log10(1 / 3), 6);
    expect(h3.oppositeSideDbc).toBeCloseTo(-9.54, 2);
    expect(h3.sameSideDbc).toBeLessThan(-200);
    expect(h5.sameSideDbc).toBeCloseTo(-13.98, 2);
    expect(h5.oppositeSideDbc).toBeLessThan(-200);
  });

  it('the sample-by-sample chain read by FFT gives the same (0.02 dB), at n·fLO ∓ tone', () => {
    const network = designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'allpass', targetDb: 60 });
    const p = simulateProducts({
      network,
      model: IDEAL_MODEL,
      trims: {},
      sideband: 'upper',
      carrierHz: 7.1e6,
      toneHz: 1000,
      twoToneHz: [700, 1900],
      harmonics: [3, 5],
    });
    const h3 = p.find((x) => x.name === 'LO×3 opposite sideband')!;
    const h5 = p.find((x) => x.name === 'LO×5 same sideband')!;
    expect(h3.frequencyHz).toBe(3 * 7.1e6 - 1000);
    expect(h5.frequencyHz).toBe(5 * 7.1e6 + 1000);
    expect(Math.abs(h3.levelDbPep + 9.542)).toBeLessThan(0.02);
    expect(Math.abs(h5.levelDbPep + 13.979)).toBeLessThan(0.02);
    // Two-tone products of a linear chain stay far below any limit; their PEP-to-mean ratio is 3.01 dB.
    const imd = p.filter((x) => x.kind === 'intermodulation');
    expect(imd.length).toBe(4);
    for (const x of imd) {
      expect(x.levelDbPep).toBeLessThan(-90);
      expect(x.pepToMeanDb).toBeCloseTo(3.01, 1);
    }
  });
});

const at14 = 14.2e6;
const spur = (levelDbPep: number, pepToMeanDb = 0): EmissionProduct => ({
  name: 'test spur',
  kind: 'mixer-harmonic',
  frequencyHz: 3 * at14 - 1000,
  levelDbPep,
  pepToMeanDb,
  source: 'predicted',
});
const run = (products: EmissionProduct[], extra: Partial<Parameters<typeof checkEmissions>[0]> = {}) =>
  checkEmissions({ products, carrierHz: at14, sideband: 'upper', highestAudioHz: 3000, ...extra });

describe('pass and fail around 43 dB (47 CFR §97.307(d), docs/REFERENCES.md §5)', () => {
  it('a single-tone spur at −43.2 dBc passes by 0.2 dB; at −42.8 dBc it fails by 0.2 dB', () => {
    const a = run([spur(-43.2)]);
    expect(a.items[0]!).toMatchObject({ limitDbc: -43, reference: 'mean', domain: 'spurious', pass: true });
    expect(a.items[0]!.marginDb).toBeCloseTo(0.2, 9);
    expect(a.pass).toBe(true);
    const b = run([spur(-42.8)]);
    expect(b.items[0]!.marginDb).toBeCloseTo(-0.2, 9);
    expect(b.pass).toBe(false);
  });

  it('a two-tone product 45 dB below PEP is 41.99 dB below the mean power: fails 43 dB; 47 below PEP passes', () => {
    // Two equal tones: mean = PEP/2 (Krauss, Bostian & Raab p. 509), so −45 dB re PEP = −41.99 dB re mean.
    const r2 = 10 * Math.log10(2);
    const f = run([spur(-45, r2)]);
    expect(f.items[0]!.levelDbc).toBeCloseTo(-41.99, 2);
    expect(f.pass).toBe(false);
    const p = run([spur(-47, r2)]);
    expect(p.items[0]!.levelDbc).toBeCloseTo(-43.99, 2);
    expect(p.pass).toBe(true);
  });

  it('the mixer 3rd response (−9.54 dBc) needs 33.46 dB of filter: a filter giving 33.0 dB fails, 34.0 dB passes', () => {
    // A 5th-order Butterworth ladder (g_k = 2 sin((2k−1)π/10), scaled here: C = g/(2π f R), L = g·R/(2π f)),
    // whose loss is 10·log10(1 + (f/f_cut)^10) (MYJ §4.03). The cutoff is found by bisection so that
    // loss(3·f_LO − 1 kHz) − loss(f_LO) = 33.0 / 34.0 dB.
    const f3 = 3 * at14 - 1000;
    const loss = (fcut: number, f: number) => 10 * Math.log10(1 + (f / fcut) ** 10);
    const rel = (fcut: number) => loss(fcut, f3) - loss(fcut, at14);
    const cutFor = (db: number) => {
      let lo = 15e6;
      let hi = 40e6;
      for (let k = 0; k < 200; k++) {
        const m = (lo + hi) / 2;
        if (rel(m) > db) lo = m;
        else hi = m;
      }
      return (lo + hi) / 2;
    };
    for (const [db, pass] of [
      [33.0, false],
      [34.0, true],
    ] as const) {
      const fcut = cutFor(db);
      expect(rel(fcut)).toBeCloseTo(db, 6);
      const w = 2 * Math.PI * fcut;
      const elements = [1, 2, 3, 4, 5].map((k) => {
        const g = 2 * Math.sin(((2 * k - 1) * Math.PI) / 10);
        return k % 2 === 1
          ? { kind: 'C' as const, value: g / (w * 50) }
          : { kind: 'L' as const, value: (g * 50) / w };
      });
      const c = run([spur(20 * Math.log10(1 / 3))], { filter: { elements, impedanceOhms: 50 } });
      expect(c.items[0]!.levelDbc).toBeCloseTo(20 * Math.log10(1 / 3) - db, 6);
      expect(c.items[0]!.pass).toBe(pass);
    }
  });

  it('domains: carrier and opposite sideband are out-of-band (practice figure), LO harmonics spurious', () => {
    const bands = emissionBands(at14, 'upper', 3000);
    // HF and Bn < 4 kHz: spurious domain beyond 10 kHz from the centre 14 201 500 Hz (SM.1539, from memory).
    expect(bands.spuriousFromHz).toBe(10_000);
    expect(domainOf(bands, at14)).toBe('out-of-band');
    expect(domainOf(bands, at14 - 1000)).toBe('out-of-band');
    expect(domainOf(bands, at14 + 1000)).toBe('necessary');
    expect(domainOf(bands, at14 - 8499)).toBe('out-of-band');
    expect(domainOf(bands, at14 - 8501)).toBe('spurious');
    const c = run([
      {
        name: 'carrier',
        kind: 'carrier',
        frequencyHz: at14,
        levelDbPep: -38,
        pepToMeanDb: 0,
        source: 'measured',
      },
    ]);
    expect(c.items[0]!).toMatchObject({
      domain: 'out-of-band',
      limitKind: 'practice',
      limitDbc: -40,
      pass: false,
    });
    expect(c.notes.join('\n')).toMatch(/not a legal limit/);
    expect(c.notes.join('\n')).toMatch(/local regulations/);
  });

  it('ITU-R SM.329 amateur: 43 + 10·log10(PEP) or 50 dB, whichever is less stringent (from memory)', () => {
    // 2 W: 43 + 3.01 = 46.01 dB; 100 W: 63 dB → 50 dB applies.
    expect(RULE_SETS['itu-sm329-amateur']!.resolve({ carrierHz: at14, powerW: 2 }).limitDbc).toBeCloseTo(
      -46.0103,
      4,
    );
    expect(RULE_SETS['itu-sm329-amateur']!.resolve({ carrierHz: at14, powerW: 100 }).limitDbc).toBe(-50);
    expect(() => RULE_SETS['itu-sm329-amateur']!.resolve({ carrierHz: 50e6 })).toThrow(/below 30 MHz/);
    const c = run([spur(-48)], { rules: ['fcc-97.307', 'itu-sm329-amateur'] });
    expect(c.items.map((i) => i.pass)).toEqual([true, false]);
    // A product no rule set covers gets one practice row, not one per rule set.
    const carrier: EmissionProduct = {
      name: 'carrier',
      kind: 'carrier',
      frequencyHz: at14,
      levelDbPep: -60,
      pepToMeanDb: 0,
      source: 'measured',
    };
    const d = run([carrier], { rules: ['fcc-97.307', 'itu-sm329-amateur'] });
    expect(d.items.map((i) => [i.rule, i.limitKind])).toEqual([['practice', 'practice']]);
  });

  it('a user limit applies to every product in every domain', () => {
    const c = run(
      [
        spur(-55),
        {
          name: 'carrier',
          kind: 'carrier',
          frequencyHz: at14,
          levelDbPep: -45,
          pepToMeanDb: 0,
          source: 'measured',
        },
      ],
      {
        rules: [],
        userLimitDbc: -50,
      },
    );
    expect(c.items.map((i) => [i.limitDbc, i.pass])).toEqual([
      [-50, true],
      [-50, false],
    ]);
  });
});
