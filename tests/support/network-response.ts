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
