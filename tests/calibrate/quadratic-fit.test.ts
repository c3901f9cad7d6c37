import { describe, expect, it } from 'vitest';
import {
  circleCandidates,
  fitNullSurface,
  linearPowerFit,
  type NullSurface,
  type SurfacePoint,
  surfaceDb,
} from '../../src/calibrate/quadratic-fit.js';
import { createRng } from '../../src/core/rng.js';
import { imageRejectionDb } from '../../src/core/units.js';

const surface = (p: Partial<NullSurface>): NullSurface => ({
  cx: 0.01,
  cy: -0.02,
  logC: Math.log(0.25),
  logN: Math.log(1e-7),
  s: 0,
  k: 0,
  ...p,
});

const ring = (s: NullSurface, n: number, r: number, cx = 0, cy = 0): SurfacePoint[] =>
  Array.from({ length: n }, (_, i) => {
    const x = cx + r * Math.cos((2 * Math.PI * i) / n + 0.3);
    const y = cy + r * Math.sin((2 * Math.PI * i) / n + 0.3);
    return { x, y, db: surfaceDb(s, x, y) };
  });

const loosePriors = {
  cx: { mean: 0, sd: 10 },
  cy: { mean: 0, sd: 10 },
  logC: { mean: 0, sd: 10 },
  logN: { mean: Math.log(1e-6), sd: 10 },
  s: { mean: 0, sd: 3 },
  k: { mean: 0, sd: 1 },
};

describe('the known-curvature bowl against published suppression figures', () => {
  // docs/REFERENCES.md §1 [C] table from IRR = (1 + 2g cosφ + g²)/(1 − 2g cosφ + g²) (K. Schmidt, QEX Aug
  // 1994 §2): the bowl ¼[(u − u*)² + (v − v*)²] with u = G cosφ − 1, v = G sinφ is exact in the
  // numerator; it differs only by the wanted-tone factor |1 + G e^{jφ}|²/4, 20·log10((1 + g)/2) dB.
  const bowl = surface({ cx: 0, cy: 0, logN: Math.log(1e-30) });
  it.each([
    [0.1, 0, 61.183],
    [1, 0, 41.183],
    [2, 0, 35.162],
    [0, 0.05, 50.818],
    [0, 0.1, 44.797],
    [0, 0.5, 30.82],
  ])('phase %f°, gain %f dB → %f dB', (phaseDeg, gainDb, published) => {
    const g = 10 ** (gainDb / 20);
    const p = (phaseDeg * Math.PI) / 180;
    expect(imageRejectionDb(g, p)).toBeCloseTo(published, 2);
    const u = g * Math.cos(p) - 1;
    const v = g * Math.sin(p);
    const wanted = Math.abs(20 * Math.log10(Math.hypot(1 + g * Math.cos(p), g * Math.sin(p)) / 2));
    expect(Math.abs(-surfaceDb(bowl, u, v) - published)).toBeLessThan(wanted + 0.01);
    if (gainDb <= 0.1) expect(Math.abs(-surfaceDb(bowl, u, v) - published)).toBeLessThan(0.1);
  });
  it('carrier bowl: dI = 0.001A, dQ = 0.0005A reads −59.031 dBc (docs/REFERENCES.md §1 [C])', () => {
    const A = 0.3;
    const s = surface({ cx: 0, cy: 0, logC: Math.log(1 / (A * A)), logN: Math.log(1e-30) });
    expect(surfaceDb(s, 0.001 * A, 0.0005 * A)).toBeCloseTo(-59.031, 3);
  });
});

describe('linearPowerFit', () => {
  it('recovers an exact isotropic bowl with known curvature from three readings', () => {
    const s = surface({ logN: Math.log(1e-12) });
    const pts = ring(s, 3, 0.05);
    const f = linearPowerFit(pts, 'known-curvature', s.logC, 1e-9)!;
    expect(f.cx).toBeCloseTo(0.01, 6);
    expect(f.cy).toBeCloseTo(-0.02, 6);
  });
  it('recovers curvature and centre of an isotropic bowl from four readings', () => {
    const s = surface({ logC: Math.log(37), logN: Math.log(1e-12) });
    const f = linearPowerFit(ring(s, 3, 0.05).concat(ring(s, 2, 0.02)), 'isotropic', 0, 1e-9)!;
    expect(Math.exp(f.logC)).toBeCloseTo(37, 4);
    expect(f.cx).toBeCloseTo(0.01, 6);
  });
  it('recovers an anisotropic, cross-coupled bowl (general quadratic)', () => {
    const s = surface({ logC: Math.log(5), s: 0.7, k: -0.4, logN: Math.log(1e-6) });
    const f = linearPowerFit(ring(s, 8, 0.08).concat(ring(s, 6, 0.03, 0.01, -0.02)), 'quadratic', 0, 1e-9)!;
    expect(f.s).toBeCloseTo(0.7, 6);
    expect(f.k).toBeCloseTo(-0.4, 6);
    expect(Math.exp(f.logN)).toBeCloseTo(1e-6, 9);
  });
  it('returns undefined for readings that do not determine a bowl', () => {
    const flat = [0, 1, 2, 3].map((i) => ({ x: i, y: 0, db: -40 }));
    expect(linearPowerFit(flat, 'isotropic', 0, 1e-9)).toBeUndefined();
  });
});

describe('fitNullSurface', () => {
  it('recovers centre, curvature and floor from noiseless readings over the floor', () => {
    const s = surface({ logC: Math.log(12), logN: Math.log(1e-7) });
    const pts = ring(s, 6, 0.05).concat(ring(s, 5, 2e-4, 0.01, -0.02));
    const f = fitNullSurface(pts, {
      noiseDb: 0.5,
      priors: { ...loosePriors, s: { mean: 0, sd: 0 }, k: { mean: 0, sd: 0 } },
      robust: false,
      starts: [surface({ cx: 0, cy: 0, logC: 0, logN: Math.log(1e-5) })],
    });
    expect(f.surface.cx).toBeCloseTo(0.01, 6);
    expect(f.surface.cy).toBeCloseTo(-0.02, 6);
    // Weak priors (sd 10 in ln units) bias the noiseless fit by a fraction of a percent.
    expect(Math.abs(Math.exp(f.surface.logC) / 12 - 1)).toBeLessThan(3e-3);
    expect(Math.abs(10 * Math.log10(Math.exp(f.surface.logN)) + 70)).toBeLessThan(0.05);
    expect(f.rmsDb).toBeLessThan(5e-3);
  });
  it('rejects a reading 10 dB high (Tukey) and keeps the centre', () => {
    const s = surface({});
    const rng = createRng(7);
    const pts = ring(s, 10, 0.004, 0.01, -0.02).map((p) => ({ ...p, db: p.db + 0.3 * rng.normal() }));
    pts[3] = { ...pts[3]!, db: pts[3]!.db + 10 };
    const f = fitNullSurface(pts, {
      noiseDb: 0.3,
      priors: { ...loosePriors, logC: { mean: Math.log(0.25), sd: 0.1 } },
      robust: true,
      starts: [surface({ cx: 0.0105, cy: -0.0195 })],
    });
    expect(f.weights[3]).toBe(0);
    expect(Math.hypot(f.surface.cx - 0.01, f.surface.cy + 0.02)).toBeLessThan(2e-4);
  });
  it('rejects a reading 10 dB low on the wall of the bowl (a low outlier looks like a null)', () => {
    // The floor and the bowl bound how low a true reading can be: a reading far below both is as
    // suspect as one far above, and must not pull the null to itself.
    const s = surface({});
    const rng = createRng(8);
    const pts = ring(s, 10, 0.004, 0.01, -0.02).map((p) => ({ ...p, db: p.db + 0.3 * rng.normal() }));
    pts[6] = { ...pts[6]!, db: pts[6]!.db - 10 };
    const f = fitNullSurface(pts, {
      noiseDb: 0.3,
      priors: { ...loosePriors, logC: { mean: Math.log(0.25), sd: 0.1 } },
      robust: true,
      starts: [surface({ cx: 0.0105, cy: -0.0195 })],
    });
    expect(f.weights[6]).toBe(0);
    expect(f.residualsDb[6]).toBeLessThan(-8);
    expect(Math.hypot(f.surface.cx - 0.01, f.surface.cy + 0.02)).toBeLessThan(2e-4);
  });
  it('a plain least-squares fit is pulled by the same outlier', () => {
    const s = surface({});
    const pts = ring(s, 10, 0.004, 0.01, -0.02);
    pts[3] = { ...pts[3]!, db: pts[3]!.db + 10 };
    const f = fitNullSurface(pts, {
      noiseDb: 0.3,
      priors: { ...loosePriors, logC: { mean: Math.log(0.25), sd: 0.1 } },
      robust: false,
      starts: [surface({})],
    });
    expect(Math.hypot(f.surface.cx - 0.01, f.surface.cy + 0.02)).toBeGreaterThan(5e-4);
  });
});

describe('circleCandidates', () => {
  it('gives the two intersections of the circles two readings imply', () => {
    const s = surface({ cx: 0.03, cy: 0.04, logN: Math.log(1e-20) });
    const a = { x: 0, y: 0, db: surfaceDb(s, 0, 0) };
    const b = { x: 0.06, y: 0, db: surfaceDb(s, 0.06, 0) };
    const c = circleCandidates(a, b, 0.25, 1e-20);
    expect(c).toHaveLength(2);
    const hit = c.some((p) => Math.hypot(p.x - 0.03, p.y - 0.04) < 1e-9);
    const mirror = c.some((p) => Math.hypot(p.x - 0.03, p.y + 0.04) < 1e-9);
    expect(hit && mirror).toBe(true);
  });
});
