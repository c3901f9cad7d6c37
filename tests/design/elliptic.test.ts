import ellipj from '@stdlib/math-base-special-ellipj';
import ellipk from '@stdlib/math-base-special-ellipk';
import { describe, expect, it } from 'vitest';
import { ellipK, ellipticNome, jacobiSnCnDn } from '../../src/design/elliptic.js';
import { expectOrthotoneError } from '../support/errors.js';

describe('ellipK', () => {
  it('matches @stdlib ellipk (parameter m = k²) over a grid to 1e-13 relative', () => {
    // Source: @stdlib/math-base-special-ellipk 0.2.4, a general-purpose reference library.
    for (let j = 0; j <= 200; j++) {
      const m = j < 200 ? j / 200 : 1 - 1e-9;
      const ref = ellipk(m);
      expect(Math.abs(ellipK(m) - ref) / ref).toBeLessThan(1e-13);
    }
    for (const m of [1e-12, 1e-6, 0.999, 0.999999, 1 - 1e-12]) {
      expect(Math.abs(ellipK(m) - ellipk(m)) / ellipk(m)).toBeLessThan(1e-12);
    }
  });

  it('reproduces closed-form and tabulated values', () => {
    // Source: A&S 17.3.11 / Table 17.1: K(0) = π/2.
    expect(ellipK(0)).toBe(Math.PI / 2);
    // Source: K(1/2) = Γ(1/4)²/(4√π), the lemniscatic case (A&S 17.3, Table 17.1 lists 1.85407 46773 01372);
    // the value of Γ(1/4) = 3.6256099082219083 is from memory (scipy 1.10.1: gamma(0.25) = 3.625609908221908, ellipk(0.5) = 1.8540746773013719).
    const gammaQuarter = 3.625609908221908;
    expect(ellipK(0.5)).toBeCloseTo(gammaQuarter ** 2 / (4 * Math.sqrt(Math.PI)), 13);
    expect(ellipK(0.5)).toBeCloseTo(1.854074677301372, 13);
    // Source: A&S 17.3.26, K(m) ≈ ln(4/√m1) as m1 → 0 (error O(m1·ln m1)).
    const m1 = 1e-20;
    expect(ellipK(1 - m1, m1)).toBeCloseTo(Math.log(4 / Math.sqrt(m1)), 12);
    expect(ellipK(1)).toBe(Number.POSITIVE_INFINITY);
  });

  it('rejects a parameter outside [0, 1] with a message naming m = k²', () => {
    for (const bad of [-0.1, 1.5, Number.NaN])
      expectOrthotoneError(() => ellipK(bad), 'INVALID_ARGUMENT', /m = k²/);
  });
});

describe('jacobiSnCnDn', () => {
  it('matches @stdlib ellipj over a grid of u and m to 1e-12', () => {
    // Source: @stdlib/math-base-special-ellipj 0.4.1 (A&S 16.4, parameter m = k²). Its near-unity
    // branch (A&S 16.15, m > 1 − √ε) is an approximation valid only for small u, so the grid stops
    // at m = 1 − 1e-6; the identities below cover m → 1.
    let worst = 0;
    for (const m of [0, 1e-12, 1e-6, 0.01, 0.1, 0.25, 0.5, 0.75, 0.9, 0.99, 0.9999, 1 - 1e-6]) {
      const K = ellipK(m);
      for (let t = -2; t <= 2.0001; t += 0.05) {
        const u = t * K;
        const r = jacobiSnCnDn(u, m);
        const [sn, cn, dn] = ellipj(u, m) as [number, number, number, number];
        worst = Math.max(worst, Math.abs(r.sn - sn), Math.abs(r.cn - cn), Math.abs(r.dn - dn));
      }
    }
    expect(worst).toBeLessThan(1e-12);
  });

  it('satisfies the half-period values of A&S 16.5 even for m extremely close to 1', () => {
    // Source: A&S 16.5.2 / Table 16.5: sn(K/2) = 1/√(1+k'), cn(K/2) = √(k'/(1+k')), dn(K/2) = √k';
    // and 16.5.1: sn(K) = 1, cn(K) = 0, dn(K) = k'.
    for (const kp of [0.9, 0.5, 0.1, 1e-3, 1e-6, 2e-9]) {
      const m1 = kp * kp;
      const m = 1 - m1;
      const K = ellipK(m, m1);
      const h = jacobiSnCnDn(K / 2, m, m1);
      expect(h.sn).toBeCloseTo(1 / Math.sqrt(1 + kp), 13);
      // cn(K/2) = O(√k') comes from cos φ near π/2: relative accuracy about 1e-17/k' (conditioning).
      const tol = Math.max(1e-13, 1e-17 / kp);
      expect(Math.abs(h.cn / Math.sqrt(kp / (1 + kp)) - 1)).toBeLessThan(tol);
      expect(Math.abs(h.dn / Math.sqrt(kp) - 1)).toBeLessThan(tol);
      const f = jacobiSnCnDn(K, m, m1);
      expect(f.sn).toBeCloseTo(1, 13);
      expect(Math.abs(f.cn)).toBeLessThan(1e-12);
      expect(Math.abs(f.dn - kp)).toBeLessThan(1e-12);
    }
  });

  it('reduces to circular and hyperbolic functions at m = 0 and m = 1 and keeps sn² + cn² = 1', () => {
    // Source: A&S 16.6 (degenerate cases) and 16.9.1 (sn² + cn² = 1, k²sn² + dn² = 1).
    for (const u of [-3, -0.4, 0, 0.7, 2.5]) {
      expect(jacobiSnCnDn(u, 0)).toEqual({ sn: Math.sin(u), cn: Math.cos(u), dn: 1 });
      const h = jacobiSnCnDn(u, 1);
      expect(h.sn).toBeCloseTo(Math.tanh(u), 15);
      expect(h.cn).toBeCloseTo(1 / Math.cosh(u), 15);
      for (const m of [0.3, 0.95]) {
        const r = jacobiSnCnDn(u, m);
        expect(r.sn ** 2 + r.cn ** 2).toBeCloseTo(1, 14);
        expect(m * r.sn ** 2 + r.dn ** 2).toBeCloseTo(1, 14);
      }
    }
  });
});

describe('ellipticNome', () => {
  it("gives q = 0.324228 for band ratio 20 (k' = 1/20)", () => {
    // Source: Winder, Analog and Digital Filter Design, 2nd ed., Table 9.15 (B = 20): Q = 0.324228.
    const kp = 1 / 20;
    expect(ellipticNome(1 - kp * kp, kp * kp)).toBeCloseTo(0.324228, 6);
    expect(ellipticNome(0)).toBe(0);
  });
});
