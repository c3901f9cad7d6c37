import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { remez } from '../../src/design/remez.js';
import { expectOrthotoneError } from '../support/errors.js';

// [C] scipy 1.10.1 scipy.signal.remez, made by tests/fixtures/scipy/gen_remez_exchange.py (command in
// tests/fixtures/scipy/README.md): grids at the limits of what the dense-grid rule allows.
const fixture = JSON.parse(
  readFileSync(new URL('../fixtures/scipy/remez_exchange.json', import.meta.url), 'utf8'),
) as {
  cases: {
    name: string;
    numtaps: number;
    bands: number[];
    desired: number[];
    type: 'bandpass' | 'hilbert';
    taps: number[];
  }[];
};

/** Largest tap difference between orthotone's and scipy's design of a fixture case, and the largest tap. */
function compare(name: string): { err: number; peak: number } {
  const c = fixture.cases.find((k) => k.name === name);
  if (!c) throw new Error(`fixture case ${name} missing`);
  const r = remez(c.numtaps, c.bands, c.desired, { type: c.type });
  expect(r.converged, name).toBe(true);
  let err = 0;
  let peak = 0;
  for (let i = 0; i < c.numtaps; i++) {
    err = Math.max(err, Math.abs(r.taps[i]! - c.taps[i]!));
    peak = Math.max(peak, Math.abs(c.taps[i]!));
  }
  return { err, peak };
}

describe('remez: grids at the limits of the dense-grid rule', () => {
  it('designs a type II filter whose last band keeps one grid point next to Nyquist, as scipy', () => {
    // 24 taps: step 0.5 / (16·12); the band 0.495–0.4999 holds 0.495 and 0.4999, and 0.4999 is
    // dropped (within one step of Nyquist, where type II is zero): one usable point remains.
    expect(compare('lowpass-24-last-band-one-point').err).toBeLessThan(1e-11);
  });

  it('designs on a grid of exactly r + 1 points, as scipy, and refuses one point fewer', () => {
    // 11-tap Hilbert transformer, r = 5: the band 0.1–0.134375 holds 6 grid points (step 0.00625),
    // just enough for the r + 1 reference points. The response outside the band is free, so the taps
    // reach about 40; they agree with scipy's to 1e-8 of that.
    const { err, peak } = compare('hilbert-11-grid-of-six');
    expect(peak).toBeGreaterThan(10);
    expect(err / peak).toBeLessThan(1e-7);
    // 0.1–0.128125 holds 5 points, one fewer than the 6 needed.
    expectOrthotoneError(
      () => remez(11, [0.1, 0.128125], [1], { type: 'hilbert' }),
      'INVALID_ARGUMENT',
      /^the bands are too narrow for numtaps 11: the dense grid has 5 points but needs at least 6; widen the bands or raise gridDensity$/,
    );
  });
});
