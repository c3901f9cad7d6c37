/**
 * The network document, format version 1 (DESIGN.md §3): a plain JSON-serialisable object, the same
 * in memory, on disk and on stdout. Also the independent evaluator of a document's coefficients,
 * which `predicted` figures and all tests are checked against.
 */
import type { Complex } from '../core/complex.js';
import { OrthotoneError } from '../core/errors.js';
import { allpassBranchResponseInto, firResponseInto } from './response.js';

/** One all-pass section. order 1: `(a + z⁻¹)/(1 + a·z⁻¹)`; order 2: `(a + z⁻²)/(1 + a·z⁻²)`. */
export interface AllpassSection {
  order: 1 | 2;
  /** Coefficient, |a| < 1 for stability. */
  a: number;
}

/** A branch: `z^-delay · Π H_k(z)`. */
export interface AllpassBranch {
  /** Integer delay, samples. */
  delay: number;
  sections: AllpassSection[];
}

/** Figures from an independent evaluation of the coefficients over the band. */
export interface PredictedFigures {
  /** Worst opposite-sideband suppression over the band, dB (positive). */
  worstSuppressionDb: number;
  /** Largest |phase difference − 90°| over the band, degrees. */
  maxPhaseErrorDeg: number;
  /** Largest |20·log10(|Hq|/|Hi|)| over the band, dB. */
  maxGainErrorDb: number;
}

/** Cost of running the network. */
export interface NetworkCost {
  /** Multiplies per input sample, both branches, exploiting structure (zero taps, symmetry). */
  multipliesPerSample: number;
  /** Mean group delay of the branches over the band, samples. */
  latencySamples: number;
}

/** The spec a network was designed from (echoed into the document). */
export interface NetworkSpecEcho {
  [key: string]: unknown;
}

interface NetworkBase {
  format: 'orthotone-network';
  version: 1;
  sampleRate: number;
  band: [number, number];
  predicted: PredictedFigures;
  cost: NetworkCost;
  design: NetworkSpecEcho;
}

/** Hilbert FIR: Q is the FIR (type III, textbook sign), I is a pure delay of (taps.length−1)/2. */
export interface FirNetwork extends NetworkBase {
  kind: 'fir';
  taps: number[];
}

/** All-pass pair: each branch a cascade of sections plus an integer delay. */
export interface AllpassNetwork extends NetworkBase {
  kind: 'allpass';
  branches: { i: AllpassBranch; q: AllpassBranch };
}

/** A designed 90° network (DESIGN.md §3). */
export type Network = FirNetwork | AllpassNetwork;

/** Complex responses of the two branches at one frequency. */
export interface BranchResponse {
  i: Complex;
  q: Complex;
}

/**
 * Evaluates both branches of a network at `frequencyHz` directly from its coefficients
 * (z = e^{jω}, ω = 2πf/fs).
 * @param net the network document.
 * @param frequencyHz frequency in Hz, 0 ≤ f ≤ fs/2.
 * @returns the complex responses `{ i, q }`.
 * Method: direct evaluation of the transfer functions of DESIGN.md §3 on the unit circle (the
 *   one evaluator in response.ts).
 * @throws never for a network that passed {@link validateNetwork}; the document is not re-checked
 *   here, so a malformed object may fail with a TypeError.
 */
export function evaluateBranches(net: Network, frequencyHz: number): BranchResponse {
  const w = (2 * Math.PI * frequencyHz) / net.sampleRate;
  const buf = new Float64Array(4);
  if (net.kind === 'fir') {
    // Q relative to the centre delay D, then both branches delayed by D.
    firResponseInto(net.taps, w, buf, 0);
    const d = (net.taps.length - 1) / 2;
    const c = Math.cos(w * d);
    const s = -Math.sin(w * d);
    return {
      i: { re: c, im: s },
      q: { re: buf[0]! * c - buf[1]! * s, im: buf[0]! * s + buf[1]! * c },
    };
  }
  allpassBranchResponseInto(net.branches.i, w, buf, 0);
  allpassBranchResponseInto(net.branches.q, w, buf, 2);
  return { i: { re: buf[0]!, im: buf[1]! }, q: { re: buf[2]!, im: buf[3]! } };
}

/**
 * Opposite-sideband suppression at one frequency from branch responses: input `cos ωt` gives the
 * wanted component `(Hi + jHq)/2·e^{jωt}` and the image `(Hi* + jHq*)/2·e^{−jωt}`, so
 * suppression = `20·log10(|Hi + jHq| / |Hi − jHq|)` dB. Ideal: `Hq = −j·Hi` (Q lags I by 90°).
 * Reference: K. Schmidt, QEX Aug 1994 §2 (the same quantity as the image-rejection ratio).
 * @returns suppression in dB (positive when the wanted sideband is larger; +Infinity for no image).
 * @throws never
 */
export function suppressionFromResponse(r: BranchResponse): number {
  const wr = r.i.re - r.q.im;
  const wi = r.i.im + r.q.re;
  const ur = r.i.re + r.q.im;
  const ui = r.i.im - r.q.re;
  const u = Math.hypot(ur, ui);
  if (u === 0) return Number.POSITIVE_INFINITY;
  return 20 * Math.log10(Math.hypot(wr, wi) / u);
}

/**
 * Phase of I minus phase of Q minus 90°, in degrees, wrapped to [−180, 180). 0 for an ideal pair
 * (DESIGN.md §2: Q lags I by 90°).
 * @throws never
 */
export function phaseErrorDegFromResponse(r: BranchResponse): number {
  let d = Math.atan2(r.i.im, r.i.re) - Math.atan2(r.q.im, r.q.re) - Math.PI / 2;
  d = ((((d + Math.PI) % (2 * Math.PI)) + 2 * Math.PI) % (2 * Math.PI)) - Math.PI;
  return (d * 180) / Math.PI;
}

/**
 * Gain of Q relative to I, in dB (0 for a balanced pair).
 * @throws never
 */
export function gainErrorDbFromResponse(r: BranchResponse): number {
  return 20 * Math.log10(Math.hypot(r.q.re, r.q.im) / Math.hypot(r.i.re, r.i.im));
}

function bad(msg: string, v?: unknown): never {
  throw new OrthotoneError('INVALID_DOCUMENT', msg, v);
}

function checkBranch(name: string, b: unknown): void {
  if (typeof b !== 'object' || b === null) bad(`branches.${name} is missing: give { delay, sections }`);
  const br = b as Partial<AllpassBranch>;
  if (typeof br.delay !== 'number' || !Number.isInteger(br.delay) || br.delay < 0 || br.delay > 65536) {
    bad(
      `branches.${name}.delay ${String(br.delay)} must be a whole number of samples from 0 to 65536`,
      br.delay,
    );
  }
  if (!Array.isArray(br.sections) || br.sections.length > 256) {
    bad(`branches.${name}.sections must be an array of at most 256 sections`);
  }
  br.sections.forEach((s, k) => {
    if (s?.order !== 1 && s?.order !== 2) {
      bad(`branches.${name}.sections[${k}].order ${String(s?.order)} must be 1 or 2`, s?.order);
    }
    if (typeof s.a !== 'number' || !Number.isFinite(s.a) || Math.abs(s.a) >= 1) {
      bad(
        `branches.${name}.sections[${k}].a ${String(s.a)} must be a finite number with |a| < 1 (a stable all-pass)`,
        s.a,
      );
    }
  });
}

/**
 * Checks that `doc` is a valid network document, format version 1, and returns it typed.
 * @throws {OrthotoneError} INVALID_DOCUMENT naming the field, its value and what is expected.
 */
export function validateNetwork(doc: unknown): Network {
  if (typeof doc !== 'object' || doc === null) bad('a network document must be a JSON object');
  const d = doc as Partial<Network> & Record<string, unknown>;
  if (d.format !== 'orthotone-network') {
    bad(`format ${JSON.stringify(d.format)} is not 'orthotone-network': is this a network file?`, d.format);
  }
  if (d.version !== 1)
    bad(
      `version ${JSON.stringify(d.version) ?? 'missing'} is not supported: this library reads version 1 (the number 1)`,
      d.version,
    );
  if (typeof d.sampleRate !== 'number' || !Number.isFinite(d.sampleRate) || d.sampleRate <= 0) {
    bad(`sampleRate ${String(d.sampleRate)} must be a positive number of Hz`, d.sampleRate);
  }
  if (
    !Array.isArray(d.band) ||
    d.band.length !== 2 ||
    !d.band.every((x) => typeof x === 'number' && Number.isFinite(x))
  ) {
    bad('band must be [lo, hi] in Hz', d.band);
  }
  if (d.kind === 'fir') {
    const taps = (d as Partial<FirNetwork>).taps;
    if (!Array.isArray(taps) || taps.length < 3 || taps.length % 2 === 0 || taps.length > 65535) {
      bad('taps must be an array of odd length from 3 to 65535 (type III Hilbert FIR)', taps?.length);
    }
    taps.forEach((t, k) => {
      if (typeof t !== 'number' || !Number.isFinite(t))
        bad(`taps[${k}] ${String(t)} must be a finite number`, t);
    });
  } else if (d.kind === 'allpass') {
    const br = (d as Partial<AllpassNetwork>).branches;
    if (typeof br !== 'object' || br === null) bad('branches must be { i, q } for kind allpass');
    checkBranch('i', br.i);
    checkBranch('q', br.q);
  } else {
    bad(`kind ${JSON.stringify(d.kind)} must be 'fir' or 'allpass'`, d.kind);
  }
  return d as Network;
}
