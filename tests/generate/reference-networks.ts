/**
 * Hand-built network documents for the generator tests (the network designer is written elsewhere;
 * these come straight from published coefficients and formulas, not from code under test).
 */
import type { AllpassNetwork, FirNetwork, Network } from '../../src/design/network.js';
import { ownSweep } from '../support/network-response.js';

/**
 * O. Niemitalo's 90° pair (music-dsp mailing list, 2001, public post): two cascades
 * of four sections `(a² − z⁻²)/(1 − a²·z⁻²)`, the first cascade also delayed one sample. In the
 * document's form `(c + z⁻²)/(1 + c·z⁻²)` each section has c = −a² (the section's sign flip cancels
 * over four sections). Stated: fs 44100 Hz, 20–22030 Hz, 0.7° max phase error.
 */
export const NIEMITALO_A1 = [0.6923877778065, 0.9360654322959, 0.988229522686, 0.9987488452737];
export const NIEMITALO_A2 = [0.4021921162426, 0.856171088242, 0.9722909545651, 0.9952884791278];

/**
 * Independent figures over `points` log-spaced frequencies across the band, by the tests' own
 * evaluator (tests/support/network-response.ts, which shares no code with src/design).
 */
export function predictedOver(net: Network, points = 2000) {
  return ownSweep(net, points, 'log');
}

/**
 * The Niemitalo pair as an 'allpass' document. The delayed cascade (a = 0.692…) is the Q branch:
 * checked in the tests by the sign of the phase difference (I leads Q by 90°, the README.md conventions).
 * @param firstOrder split every z⁻² section into two first-order sections `(−a + z⁻¹)/(1 − a·z⁻¹)`
 *   and `(a + z⁻¹)/(1 + a·z⁻¹)`, whose product is `(−a² + z⁻²)/(1 − a²·z⁻²)` (same response).
 */
export function niemitaloNetwork(firstOrder = false, sampleRate = 44100): AllpassNetwork {
  const sections = (as: number[]) =>
    firstOrder
      ? as.flatMap((a) => [
          { order: 1 as const, a: -a },
          { order: 1 as const, a },
        ])
      : as.map((a) => ({ order: 2 as const, a: -a * a }));
  const net: AllpassNetwork = {
    format: 'orthotone-network',
    version: 1,
    kind: 'allpass',
    sampleRate,
    band: [20 * (sampleRate / 44100), 22030 * (sampleRate / 44100)],
    branches: {
      i: { delay: 0, sections: sections(NIEMITALO_A2) },
      q: { delay: 1, sections: sections(NIEMITALO_A1) },
    },
    predicted: { worstSuppressionDb: 0, maxPhaseErrorDeg: 0, maxGainErrorDb: 0 },
    cost: { multipliesPerSample: firstOrder ? 16 : 8, latencySamples: 0 },
    design: { source: 'O. Niemitalo, music-dsp 2001 (hand-built test document)' },
  };
  net.predicted = predictedOver(net);
  return net;
}

/** Zeroth-order modified Bessel function, power series (Abramowitz & Stegun 9.6.12). */
function i0(x: number): number {
  let s = 1;
  let t = 1;
  const y = (x * x) / 4;
  for (let k = 1; k < 500; k++) {
    t *= y / (k * k);
    s += t;
    if (t < s * 1e-17) break;
  }
  return s;
}

/**
 * A Kaiser-windowed ideal Hilbert FIR: `h(n) = 2/(πn)` for odd n, 0 for even n (Reilly, Frazer &
 * Boashash, IEEE Trans. SP 42:3241, 1994), textbook sign, times a Kaiser window of parameter β
 * (Oppenheim & Schafer). Odd length `taps`.
 */
export function kaiserHilbertNetwork(
  taps: number,
  beta: number,
  band: [number, number],
  sampleRate = 48000,
): FirNetwork {
  const c = (taps - 1) / 2;
  const h: number[] = [];
  for (let m = 0; m < taps; m++) {
    const n = m - c;
    const u = n / c;
    const w = i0(beta * Math.sqrt(Math.max(0, 1 - u * u))) / i0(beta);
    h.push(n % 2 === 0 ? 0 : (2 / (Math.PI * n)) * w);
  }
  const net: FirNetwork = {
    format: 'orthotone-network',
    version: 1,
    kind: 'fir',
    sampleRate,
    band,
    taps: h,
    predicted: { worstSuppressionDb: 0, maxPhaseErrorDeg: 0, maxGainErrorDb: 0 },
    cost: { multipliesPerSample: (c + 1) / 2, latencySamples: c },
    design: {
      source: `Kaiser-windowed ideal Hilbert, ${taps} taps, beta ${beta} (hand-built test document)`,
    },
  };
  net.predicted = predictedOver(net);
  return net;
}
