import { describe, expect, it } from 'vitest';
import { remez, remezExchange } from '../../src/design/remez.js';
import { expectOrthotoneError } from '../support/errors.js';
import { loadRemezFixture, type RemezCase } from '../support/remez-fixture.js';

// [C] scipy 1.10.1 scipy.signal.remez, made by tests/fixtures/scipy/gen_remez_exchange.py (command in
// tests/fixtures/scipy/README.md): designs whose first reference is far from the optimum, the dense
// grid next to Nyquist, other grid densities and the differentiator's weighting.
// Cases as in remez_hilbert.json, with the grid density scipy was given.
type ExchangeCase = RemezCase & { gridDensity: number };
const fixture = loadRemezFixture<ExchangeCase>('remez_exchange.json');

function scipyCase(name: string): ExchangeCase {
  const c = fixture.cases.find((k) => k.name === name);
  if (!c) throw new Error(`fixture case ${name} missing`);
  return c;
}

/** Designs a fixture case with orthotone and returns the largest tap difference from scipy's. */
function tapError(name: string): number {
  const c = scipyCase(name);
  expect(c.converged, `${name}: scipy converged`).toBe(true);
  const r = remez(c.numtaps, c.bands, c.desired, {
    type: c.type,
    fs: c.fs,
    gridDensity: c.gridDensity,
    ...(c.weight ? { weight: c.weight } : {}),
  });
  expect(r.converged, name).toBe(true);
  expect(r.taps.length, name).toBe(c.numtaps);
  let err = 0;
  for (let i = 0; i < c.numtaps; i++) err = Math.max(err, Math.abs(r.taps[i]! - c.taps[i]!));
  return err;
}

/** Zero-phase amplitude of an odd-length symmetric (type I) filter at f cycles/sample. */
function typeOneAmplitude(taps: ArrayLike<number>, f: number): number {
  const c = (taps.length - 1) / 2;
  let a = taps[c]!;
  for (let n = 1; n <= c; n++) a += 2 * taps[c - n]! * Math.cos(2 * Math.PI * f * n);
  return a;
}

/**
 * Weighted error E = w·(d − A) of a type I design on a grid `per` times finer than the design grid
 * (bands in cycles/sample): its largest magnitude and the number of alternations among the points
 * where |E| ≥ 0.99·δ (one more than the sign changes along the frequency axis).
 */
function alternation(
  taps: ArrayLike<number>,
  bands: number[],
  desired: number[],
  weight: number[],
  delta: number,
): { maxErr: number; alternations: number } {
  const r = (taps.length + 1) / 2;
  const step = 0.5 / (16 * 8 * r);
  let maxErr = 0;
  let alternations = 0;
  let lastSign = 0;
  for (let b = 0; b < desired.length; b++) {
    const lo = bands[2 * b]!;
    const hi = bands[2 * b + 1]!;
    const count = Math.ceil((hi - lo) / step);
    for (let k = 0; k <= count; k++) {
      const f = lo + ((hi - lo) * k) / count;
      const e = weight[b]! * (desired[b]! - typeOneAmplitude(taps, f));
      maxErr = Math.max(maxErr, Math.abs(e));
      if (Math.abs(e) >= 0.99 * delta) {
        const s = Math.sign(e);
        if (s !== lastSign) alternations++;
        lastSign = s;
      }
    }
  }
  return { maxErr, alternations };
}

describe('remez: exchange against scipy when the first reference is far from the optimum', () => {
  it(`matches scipy ${fixture.scipy} on a band-stop, two five-band designs and a 1000:1 weighting to 1e-11`, () => {
    // These start far enough from the optimum that the exchange drops several surplus extrema per
    // iteration (at both ends and inside the list), not just one.
    for (const name of [
      'bandstop-65',
      'multiband-61-weighted',
      'multiband-101-weight100',
      'lowpass-51-weight1000',
    ]) {
      expect(tapError(name), name).toBeLessThan(1e-11);
    }
  });

  it('gives the band-stop design r + 1 alternating extrema of magnitude δ (alternation theorem)', () => {
    // Parks & McClellan 1972, alternation theorem: the weighted Chebyshev optimum with r cosine terms
    // reaches ±δ with alternating signs at r + 1 frequencies at least, and never exceeds δ (on the
    // design grid; between its points by a little). 65 taps: r = 33.
    const bands = [0, 0.15, 0.2, 0.3, 0.35, 0.5];
    const r = remez(65, bands, [1, 0, 1]);
    const a = alternation(r.taps, bands, [1, 0, 1], [1, 1, 1], r.deviation);
    expect(a.alternations).toBeGreaterThanOrEqual(34);
    expect(a.maxErr / r.deviation).toBeLessThan(1.02);
    // scipy's taps have the same largest weighted error on this grid.
    const sc = alternation(scipyCase('bandstop-65').taps, bands, [1, 0, 1], [1, 1, 1], r.deviation);
    expect(sc.maxErr / a.maxErr).toBeCloseTo(1, 9);
  });
});

describe('remez: the dense grid as the original program builds it', () => {
  it('drops the last grid point within one step of Nyquist for types II and III, and only then', () => {
    // McClellan, Parks & Rabiner 1973: types II (even, symmetric) and III (odd, antisymmetric) are
    // zero at Nyquist, so a last grid point above 0.5 − Δf is left out; scipy keeps the same rule.
    // 24 taps: Δf = 0.5 / (16·12). Edges 0.45 (kept), exactly 0.5 − Δf (kept) and 0.499 (dropped).
    for (const name of [
      'lowpass-24-edge-0.45',
      'lowpass-24-edge-one-step-below-nyquist',
      'lowpass-24-edge-0.499',
      'hilbert-31-to-nyquist',
    ]) {
      expect(tapError(name), name).toBeLessThan(1e-11);
    }
  });

  it('starts an antisymmetric design from DC one grid step in (types III and IV are zero at DC)', () => {
    expect(tapError('hilbert-20-from-dc')).toBeLessThan(1e-11);
  });

  it('honours gridDensity: densities 8 and 32 give scipy grid_density 8 and 32', () => {
    expect(tapError('lowpass-25-density-8')).toBeLessThan(1e-11);
    expect(tapError('lowpass-25-density-32')).toBeLessThan(1e-11);
    // The density changes the optimum on the grid by far more than the tolerance above.
    const a = scipyCase('lowpass-25-density-8').taps;
    const b = scipyCase('lowpass-25-density-32').taps;
    expect(Math.max(...a.map((v, i) => Math.abs(v - b[i]!)))).toBeGreaterThan(1e-6);
  });

  it('matches scipy on coarse grids (densities 2 and 3), where reference points are grid neighbours', () => {
    expect(tapError('hilbert-37-density-2')).toBeLessThan(1e-11);
    expect(tapError('differentiator-23-density-3')).toBeLessThan(1e-11);
  });

  it('weights a differentiator band by 1/f only when its slope is at least 1e-4, as the original program', () => {
    // McClellan, Parks & Rabiner 1973 (and scipy): relative error in bands whose desired slope is
    // at least 0.0001, absolute error below that (a stopband).
    expect(tapError('differentiator-31-two-band')).toBeLessThan(1e-11);
    expect(tapError('differentiator-31-stopband-1e-4')).toBeLessThan(1e-11);
    expect(tapError('differentiator-21-fs8000')).toBeLessThan(1e-11);
  });
});

describe('remez: designs beyond double precision', () => {
  it('flags a type I or II design whose optimum is below round-off, and remez advises fewer taps', () => {
    // A low-pass with a 0.3-wide transition needs a few dozen taps for any usable attenuation;
    // with 120 or 601 the equiripple optimum lies hundreds of dB down, below double precision
    // (Kaiser's estimate, Kaiser 1974: A ≈ 2.285·2π·Δf·(N − 1) + 8 dB ≫ 300 dB).
    for (const [n, bands] of [
      [120, [0, 0.1, 0.4, 0.5]],
      [601, [0, 0.02, 0.48, 0.5]],
    ] as const) {
      const r = remezExchange(n, [...bands], [1, 0]);
      expect(r.roundOffLimited, `numtaps ${n}`).toBe(true);
      expect(r.converged, `numtaps ${n}`).toBe(false);
      expect(r.deviation, `numtaps ${n}`).toBeLessThan(1e-11);
      expect(r.taps.every(Number.isFinite)).toBe(true);
      expectOrthotoneError(
        () => remez(n, [...bands], [1, 0]),
        'NO_CONVERGENCE',
        new RegExp(`numtaps ${n} is at round-off level .*far fewer taps; use fewer taps`),
      );
    }
  });

  it('does not call converged a design whose taps lose the levelled optimum (bands over a small part of the axis)', () => {
    // Two bands covering 0.2 … 0.25 of 0 … 0.5 with 401 taps: the exchange levels on the grid, but P
    // grows past double precision between the bands, and the taps' own band error is ~1e13 (measured
    // here by summing the taps directly). scipy 1.10.1 (python3-scipy, Debian) refuses the same spec:
    //   /usr/bin/python3 -c "from scipy.signal import remez; remez(401,[0.2,0.2249,0.2251,0.25],[1,0])"
    //   → ValueError: Failure to converge at iteration 16, try reducing transition band width.
    const bands = [0.2, 0.2249, 0.2251, 0.25];
    const r = remezExchange(401, bands, [1, 0]);
    expect(r.converged).toBe(false);
    expect(r.tapsOffReference).toBe(true);
    let a = 0; // amplitude of the taps at f = 0.2 (type I: Σ h_k cos(2πf(k − M)))
    for (let k = 0; k < 401; k++) a += r.taps[k]! * Math.cos(2 * Math.PI * 0.2 * (k - 200));
    expect(Math.abs(1 - a)).toBeGreaterThan(1e3 * r.deviation);
    expectOrthotoneError(
      () => remez(401, bands, [1, 0]),
      'NO_CONVERGENCE',
      /taps for numtaps 401 do not reproduce the levelled deviation .*widen the bands, add bands over the gaps, or use fewer taps/,
    );
    // A well-posed design of the same length is untouched: its taps give |δ| at the band edges.
    const good = remez(101, [0, 0.2, 0.3, 0.5], [1, 0]);
    expect(good.tapsOffReference).toBeUndefined();
    let g = 0;
    for (let k = 0; k < 101; k++) g += good.taps[k]! * Math.cos(2 * Math.PI * 0.2 * (k - 50));
    expect(Math.abs(Math.abs(1 - g) - good.deviation)).toBeLessThan(0.01 * good.deviation);
  });

  it('refuses taps that come out non-finite, naming numtaps and the fix', () => {
    expectOrthotoneError(
      () => remez(401, [0, 0.02, 0.48, 0.5], [1, 0]),
      'NO_CONVERGENCE',
      /non-finite taps for numtaps 401: .*use fewer taps, wider transition bands or weights closer to 1/,
    );
  });
});

describe('remez: refusals name the value and the fix', () => {
  const lp = [0, 0.2, 0.3, 0.5];
  it('refuses band lists that are missing, empty or odd', () => {
    expectOrthotoneError(
      () => remez(21, undefined as unknown as number[], [1]),
      'INVALID_ARGUMENT',
      /^bands undefined must be a flat list of band edges \[lo1, hi1, lo2, hi2, …\]/,
    );
    expectOrthotoneError(() => remez(21, [], []), 'INVALID_ARGUMENT', /^bands \[\] must be a flat list/);
    expectOrthotoneError(
      () => remez(21, [0.1], [1]),
      'INVALID_ARGUMENT',
      /^bands \[0.1\] must be .*an even number of entries/,
    );
  });

  it('refuses band edges that are not finite, negative, beyond Nyquist or not increasing', () => {
    expectOrthotoneError(
      () => remez(21, [0, Number.NaN, 0.3, 0.5], [1, 0]),
      'INVALID_ARGUMENT',
      /^band edge bands\[1\] = NaN must be a finite frequency from 0 to fs\/2 = 0.5: keep every edge within Nyquist/,
    );
    expectOrthotoneError(
      () => remez(21, [-0.1, 0.2, 0.3, 0.5], [1, 0]),
      'INVALID_ARGUMENT',
      /^band edge bands\[0\] = -0.1 must be a finite frequency/,
    );
    expectOrthotoneError(
      () => remez(21, [0, '0.2' as unknown as number, 0.3, 0.5], [1, 0]),
      'INVALID_ARGUMENT',
      /^band edge bands\[1\] = 0.2 must be a finite frequency/,
    );
    expectOrthotoneError(
      () => remez(21, [0, 0.3, 0.2, 0.5], [1, 0]),
      'INVALID_ARGUMENT',
      /^band edges must increase strictly: bands\[2\] = 0.2 is not above bands\[1\] = 0.3; list them as \[lo1, hi1, lo2, hi2, …\] with gaps between bands$/,
    );
    // Touching bands (no transition gap) are refused too: the edges must increase strictly.
    expectOrthotoneError(
      () => remez(21, [0, 0.25, 0.25, 0.5], [1, 0]),
      'INVALID_ARGUMENT',
      /bands\[2\] = 0.25 is not above bands\[1\] = 0.25/,
    );
  });

  it('refuses desired values and weights that do not match the bands', () => {
    expectOrthotoneError(
      () => remez(21, lp, [1, 0], { weight: [1] }),
      'INVALID_ARGUMENT',
      /^weight \[1\] must have one value per band \(2\)$/,
    );
    expectOrthotoneError(
      () => remez(21, lp, [1, 0], { weight: new Float64Array([1, 10]) as unknown as number[] }),
      'INVALID_ARGUMENT',
      /^weight .* must have one value per band \(2\)$/,
    );
    expectOrthotoneError(
      () => remez(21, lp, [1, 0], { weight: [1, Number.POSITIVE_INFINITY] }),
      'INVALID_ARGUMENT',
      /^weight\[1\] Infinity must be a finite number greater than 0$/,
    );
    expectOrthotoneError(
      () => remez(21, lp, [1, 0], { weight: [0, 1] }),
      'INVALID_ARGUMENT',
      /^weight\[0\] 0 must be a finite number greater than 0$/,
    );
    expectOrthotoneError(
      () => remez(21, lp, ['1' as unknown as number, 0]),
      'INVALID_ARGUMENT',
      /^desired\[0\] 1 must be a finite number$/,
    );
    expectOrthotoneError(
      () => remez(21, lp, undefined as unknown as number[]),
      'INVALID_ARGUMENT',
      /^desired undefined must have one value per band \(2 for bands \[0,0.2,0.3,0.5\]\)$/,
    );
  });

  it('refuses an iteration cap below 1 and numtaps beyond 16385', () => {
    expectOrthotoneError(
      () => remez(21, lp, [1, 0], { maxIterations: 0 }),
      'INVALID_ARGUMENT',
      /^maxIterations 0 must be a whole number from 1 to 10000$/,
    );
    expectOrthotoneError(
      () => remez(16386, lp, [1, 0]),
      'INVALID_ARGUMENT',
      /^numtaps 16386 must be a whole number from 2 to 16385$/,
    );
  });

  it('refuses a last band with no usable grid point next to Nyquist (types II and III)', () => {
    // 20 taps (type II): Δf = 0.5 / (16·10); the band 0.499–0.5 holds one grid point, at Nyquist,
    // where the response must be zero.
    expectOrthotoneError(
      () => remez(20, [0, 0.2, 0.499, 0.5], [1, 0]),
      'INVALID_ARGUMENT',
      /^the last band holds no usable grid point: this filter type is zero at Nyquist; widen the last band or change numtaps parity$/,
    );
    // The same band with 21 taps (type I, non-zero at Nyquist) is designed.
    expect(remez(21, [0, 0.2, 0.499, 0.5], [1, 0]).converged).toBe(true);
  });

  it('refuses bands too narrow for the grid, with the counts', () => {
    // 201 taps, type III: r = 100 cosine terms, Δf = 0.5 / (16·100) = 3.125e-4, so the band
    // 0.1–0.1001 holds one grid point where r + 1 = 101 are needed.
    expectOrthotoneError(
      () => remez(201, [0.1, 0.1001], [1], { type: 'hilbert' }),
      'INVALID_ARGUMENT',
      /^the bands are too narrow for numtaps 201: the dense grid has 1 points but needs at least 101; widen the bands or raise gridDensity$/,
    );
  });
});
