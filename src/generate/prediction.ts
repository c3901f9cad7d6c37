/**
 * What a generator will produce, predicted from the network's coefficients and the trims: the
 * opposite-sideband suppression at a tone, the carrier from the DC trims, and the output peaks (for
 * full-scale warnings before anything is rendered).
 */
import type { Complex } from '../core/complex.js';
import { type Trims, validateTrims, ZERO_TRIMS } from '../core/trims.js';
import { ampToDb, dbToAmp, peakToDbfs } from '../core/units.js';
import { requireFinite, requirePositive } from '../core/validate.js';
import { evaluateBranches, type Network } from '../design/network.js';
import type { Sideband } from './trim-stage.js';

/**
 * Opposite-sideband suppression at `frequencyHz` for a network followed by trims, dB (positive).
 * Evaluates the branch responses Hi, Hq from the coefficients (`evaluateBranches`), applies the trims
 * exactly as the generator does (`Hq' = s·A·Hq + B·Hi`, A = g·cos φ, B = g·sin φ, s = −1 for the
 * lower sideband; skew `Hq'·e^{−jω·skew}`), and takes the ratio of the wanted to the unwanted
 * component (`|Hi ± jHq'| / |Hi ∓ jHq'|`; K. Schmidt, QEX Aug 1994 §2). With an ideal network this
 * equals `imageRejectionDb(g, φ)` (docs/REFERENCES.md §1). The correction, if any, is not included.
 * @throws {OrthotoneError} INVALID_ARGUMENT for out-of-range trims or a non-positive frequency.
 */
export function predictSuppressionDb(
  net: Network,
  frequencyHz: number,
  trims: Partial<Trims> = {},
  sideband: Sideband = 'upper',
): number {
  requirePositive('frequencyHz', frequencyHz, 'Hz');
  const t = { ...ZERO_TRIMS, ...validateTrims(trims) };
  const r = evaluateBranches(net, frequencyHz);
  const g = dbToAmp(t.gainDb);
  const phi = (t.phaseDeg * Math.PI) / 180;
  const s = sideband === 'lower' ? -1 : 1;
  const a = s * g * Math.cos(phi);
  const b = g * Math.sin(phi);
  let q: Complex = { re: a * r.q.re + b * r.i.re, im: a * r.q.im + b * r.i.im };
  const w = (2 * Math.PI * frequencyHz * t.skewSamples) / net.sampleRate;
  const c = Math.cos(w);
  const sn = -Math.sin(w);
  q = { re: q.re * c - q.im * sn, im: q.re * sn + q.im * c };
  // I + jQ: component at +f is (Hi + jHq)/2, at −f (Hi* + jHq*)/2 → magnitudes |Hi + jHq|, |Hi − jHq|.
  const up = Math.hypot(r.i.re - q.im, r.i.im + q.re);
  const dn = Math.hypot(r.i.re + q.im, r.i.im - q.re);
  const ratio = sideband === 'lower' ? dn / up : up / dn;
  return ampToDb(ratio);
}

/**
 * Carrier relative to a tone from the DC trims, dBc: `20·log10(√(dcI² + dcQ²)/A)`, A the tone's peak
 * amplitude in full-scale units (docs/REFERENCES.md §1, carrier). −Infinity when both DC trims are 0.
 * @throws {OrthotoneError} INVALID_ARGUMENT for a non-positive amplitude or bad trims.
 */
export function predictCarrierDbc(trims: Partial<Trims>, toneAmplitude: number): number {
  requirePositive('toneAmplitude', toneAmplitude);
  const t = { ...ZERO_TRIMS, ...validateTrims(trims) };
  return ampToDb(Math.hypot(t.dcI, t.dcQ) / toneAmplitude);
}

/** Predicted output peaks, full-scale units. */
export interface PredictedPeaks {
  /** Peak of I. */
  i: number;
  /** Peak of Q. */
  q: number;
  /** The larger of the two, dBFS. */
  peakDbfs: number;
  /** True when either exceeds full scale (1.0). */
  overFullScale: boolean;
}

/**
 * Output peaks for a signal of peak envelope `envelopePeak` (tones: the sum of their amplitudes):
 * I reaches `envelopePeak·gI + |dcI|`, Q reaches `envelopePeak·gQ·g + |dcQ|` with g the gain trim
 * (for an I/Q pair `Q·cos φ + I·sin φ` keeps the envelope) and gI, gQ the network's largest branch
 * gains over the band (1 for an all-pass pair; the FIR's ripple from `predicted.maxGainErrorDb`).
 * Transients of broadband signals (noise, sweep onsets) may exceed this.
 * @throws {OrthotoneError} INVALID_ARGUMENT for a non-finite peak or bad trims.
 */
export function predictOutputPeaks(
  envelopePeak: number,
  trims: Partial<Trims>,
  net?: Network,
): PredictedPeaks {
  requireFinite('envelopePeak', envelopePeak);
  const t = { ...ZERO_TRIMS, ...validateTrims(trims) };
  const ripple = net?.kind === 'fir' ? dbToAmp(Math.abs(net.predicted.maxGainErrorDb)) : 1;
  const i = Math.abs(envelopePeak) + Math.abs(t.dcI);
  const q = Math.abs(envelopePeak) * ripple * dbToAmp(t.gainDb) + Math.abs(t.dcQ);
  const m = Math.max(i, q);
  return { i, q, peakDbfs: peakToDbfs(m), overFullScale: m > 1 };
}
