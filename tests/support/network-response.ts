/**
 * The tests' own evaluation of a network document's response, written here independently of src/
 * (src/design/analysis.ts and src/design/network.ts are what these helpers check). Shared by the
 * design tests.
 */
import type { AllpassBranch, Network } from '../../src/design/network.js';

/**
 * Complex response of an all-pass branch at ω (rad/sample), section by section:
 * `z^-delay · Π (a + z^-m)/(1 + a z^-m)`.
 */
export function branchAt(b: AllpassBranch, w: number): [number, number] {
  let re = Math.cos(b.delay * w);
  let im = -Math.sin(b.delay * w);
  for (const s of b.sections) {
    const zr = Math.cos(s.order * w);
    const zi = -Math.sin(s.order * w);
    const nr = s.a + zr;
    const dr = 1 + s.a * zr;
    const di = s.a * zi;
    const dd = dr * dr + di * di;
    const hr = (nr * dr + zi * di) / dd;
    const hi = (zi * dr - nr * di) / dd;
    [re, im] = [re * hr - im * hi, re * hi + im * hr];
  }
  return [re, im];
}

/**
 * Worst suppression over the band, dB, by the tests' own dense evaluation: `n + 1` log-spaced plus
 * `n + 1` linear points, edges included, of 20·log10(|Hi + jHq| / |Hi − jHq|) (Schmidt, QEX 1994 §2).
 * A FIR document's I branch is the pure delay of (taps − 1)/2 samples.
 */
export function ownWorstDb(net: Network, n: number): number {
  const [lo, hi] = net.band;
  const fs = net.sampleRate;
  let worst = Number.POSITIVE_INFINITY;
  const at = (f: number) => {
    const w = (2 * Math.PI * f) / fs;
    let ir: number;
    let ii: number;
    let qr: number;
    let qi: number;
    if (net.kind === 'allpass') {
      [ir, ii] = branchAt(net.branches.i, w);
      [qr, qi] = branchAt(net.branches.q, w);
    } else {
      const d = (net.taps.length - 1) / 2;
      ir = Math.cos(w * d);
      ii = -Math.sin(w * d);
      qr = 0;
      qi = 0;
      net.taps.forEach((h, k) => {
        qr += h * Math.cos(w * k);
        qi -= h * Math.sin(w * k);
      });
    }
    worst = Math.min(worst, 20 * Math.log10(Math.hypot(ir - qi, ii + qr) / Math.hypot(ir + qi, ii - qr)));
  };
  for (let k = 0; k <= n; k++) {
    at(lo * (hi / lo) ** (k / n));
    at(lo + ((hi - lo) * k) / n);
  }
  return worst;
}

/** Responses of the two branches of a network at one frequency, as [re, im] pairs. */
export interface OwnResponse {
  i: [number, number];
  q: [number, number];
}

/**
 * The two branches' complex responses at `frequencyHz`, by the tests' own arithmetic: an all-pass
 * branch section by section ({@link branchAt}); a FIR document's Q branch as the DTFT Σ h[k]·e^{−jωk}
 * of its taps and its I branch as the pure delay of (taps − 1)/2 samples (src/design/network.ts).
 */
export function ownResponseAt(net: Network, frequencyHz: number): OwnResponse {
  const w = (2 * Math.PI * frequencyHz) / net.sampleRate;
  if (net.kind === 'allpass') return { i: branchAt(net.branches.i, w), q: branchAt(net.branches.q, w) };
  const d = (net.taps.length - 1) / 2;
  let qr = 0;
  let qi = 0;
  for (let k = 0; k < net.taps.length; k++) {
    qr += net.taps[k]! * Math.cos(w * k);
    qi -= net.taps[k]! * Math.sin(w * k);
  }
  return { i: [Math.cos(w * d), -Math.sin(w * d)], q: [qr, qi] };
}

/**
 * Figures of one response, by their definitions: suppression `20·log10(|Hi + jHq| / |Hi − jHq|)` dB
 * (wanted over image; K. Schmidt, QEX Aug 1994 §2); phase error `arg Hi − arg Hq − 90°` wrapped to
 * (−180°, 180°] (Q lags I by 90°, the README.md conventions); gain error `20·log10(|Hq|/|Hi|)` dB.
 */
export function ownFigures(r: OwnResponse): {
  suppressionDb: number;
  phaseErrorDeg: number;
  gainErrorDb: number;
} {
  const [ir, ii] = r.i;
  const [qr, qi] = r.q;
  const wanted = Math.hypot(ir - qi, ii + qr);
  const image = Math.hypot(ir + qi, ii - qr);
  let d = Math.atan2(ii, ir) - Math.atan2(qi, qr) - Math.PI / 2;
  while (d <= -Math.PI) d += 2 * Math.PI;
  while (d > Math.PI) d -= 2 * Math.PI;
  return {
    suppressionDb: image === 0 ? Number.POSITIVE_INFINITY : 20 * Math.log10(wanted / image),
    phaseErrorDeg: (d * 180) / Math.PI,
    gainErrorDb: 20 * Math.log10(Math.hypot(qr, qi) / Math.hypot(ir, ii)),
  };
}

/**
 * Worst figures over a band by the tests' own sweep of `points + 1` frequencies, edges included,
 * spaced linearly or logarithmically: the lowest suppression (dB) and the largest |phase error|
 * (degrees) and |gain error| (dB).
 */
export function ownSweep(
  net: Network,
  points = 2000,
  spacing: 'log' | 'linear' = 'log',
  band: readonly [number, number] = net.band,
): { worstSuppressionDb: number; maxPhaseErrorDeg: number; maxGainErrorDb: number } {
  const [lo, hi] = band;
  let worst = Number.POSITIVE_INFINITY;
  let ph = 0;
  let g = 0;
  for (let k = 0; k <= points; k++) {
    const f = spacing === 'log' ? lo * (hi / lo) ** (k / points) : lo + ((hi - lo) * k) / points;
    const x = ownFigures(ownResponseAt(net, f));
    worst = Math.min(worst, x.suppressionDb);
    ph = Math.max(ph, Math.abs(x.phaseErrorDeg));
    g = Math.max(g, Math.abs(x.gainErrorDb));
  }
  return { worstSuppressionDb: worst, maxPhaseErrorDeg: ph, maxGainErrorDb: g };
}
