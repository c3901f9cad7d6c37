/**
 * Coefficient quantisation of a network document, and what it costs in suppression.
 *
 * Fixed point: Qn means a signed (n+1)-bit integer over 2ⁿ (Q15 = int16/32768, Q31 = int32/2³¹).
 * Rounding is to nearest with ties away from zero, which is symmetric (round(−x) = −round(x)), so an
 * antisymmetric Hilbert FIR stays antisymmetric and its zero taps stay zero. Saturation is to the
 * symmetric range ±(2ⁿ − 1)/2ⁿ: the most negative code (−1.0) is never produced, so an all-pass
 * coefficient keeps |a| < 1 and stays stable.
 */
import { requireOneOf } from '../core/validate.js';
import { networkCost, predictFigures } from './analysis.js';
import { validateNetwork } from './network.js';
/** All formats, in order of report. */
export const COEFFICIENT_FORMATS = Object.freeze(['float32', 'q15', 'q31']);
function fixedPoint(x, fracBits) {
  const scale = 2 ** fracBits;
  const maxCode = scale - 1;
  const code = Math.sign(x) * Math.floor(Math.abs(x) * scale + 0.5);
  return Math.max(-maxCode, Math.min(maxCode, code)) / scale;
}
/**
 * Rounds one coefficient to a format.
 * @param x coefficient value.
 * @param format 'float32' (IEEE single, round to nearest even), 'q15' or 'q31' (round to nearest,
 *   ties away from zero, saturating to ±(2ⁿ − 1)/2ⁿ).
 * @returns the representable value nearest to x, as a double.
 * @throws {OrthotoneError} INVALID_ARGUMENT for an unknown format.
 * Reference: Q-format fixed point as used for DSP coefficients (common practice, no source);
 * IEEE 754-2019 binary32 for float32.
 */
export function quantizeCoefficient(x, format) {
  switch (format) {
    case 'float32': {
      const y = Math.fround(x);
      // A coefficient just below 1 in magnitude can round to ±1 in single precision; keep |a| < 1.
      if (Math.abs(y) >= 1 && Math.abs(x) < 1) return Math.sign(x) * (1 - 2 ** -24);
      return y;
    }
    case 'q15':
      return fixedPoint(x, 15);
    case 'q31':
      return fixedPoint(x, 31);
    default:
      requireOneOf('format', format, COEFFICIENT_FORMATS);
      return x;
  }
}
/**
 * A copy of a network document with every coefficient rounded to `format`, its `predicted` and
 * `cost` re-evaluated from the rounded coefficients, and `design.coefficientFormat` set.
 * @param net a network document (validated).
 * @param format 'float32', 'q15' (int16/32768) or 'q31' (int32/2³¹); fixed point rounds to nearest
 *   (ties away from zero) and saturates symmetrically, so |a| < 1 is kept.
 * @returns a new document; the input is not changed.
 * @throws {OrthotoneError} INVALID_DOCUMENT for a bad document; INVALID_ARGUMENT for a bad format.
 * Reference: coefficient quantisation of all-pass and FIR structures, e.g. Regalia, Mitra &
 * Vaidyanathan, Proc. IEEE 76(1), 1988 (all-pass sections keep unit gain under coefficient rounding).
 */
export function quantizeNetwork(net, format) {
  validateNetwork(net);
  requireOneOf('format', format, COEFFICIENT_FORMATS);
  const q = (x) => quantizeCoefficient(x, format);
  const design = { ...net.design, coefficientFormat: format };
  if (net.kind === 'fir') {
    const taps = net.taps.map(q);
    const body = { kind: 'fir', sampleRate: net.sampleRate, band: net.band, taps };
    return { ...net, taps, predicted: predictFigures(body), cost: networkCost(body), design };
  }
  const qb = (b) => ({
    delay: b.delay,
    sections: b.sections.map((s) => ({ order: s.order, a: q(s.a) })),
  });
  const branches = { i: qb(net.branches.i), q: qb(net.branches.q) };
  const body = { kind: 'allpass', sampleRate: net.sampleRate, band: net.band, branches };
  return { ...net, branches, predicted: predictFigures(body), cost: networkCost(body), design };
}
/**
 * Worst suppression over the band for each coefficient format, and the loss against the document's
 * own (double precision) coefficients, both by independent evaluation.
 * @param net a network document.
 * @returns `{ float32, q15, q31 }` each `{ worstSuppressionDb, lossDb }` (dB).
 * @throws {OrthotoneError} INVALID_DOCUMENT for a bad document.
 * Reference: as {@link quantizeNetwork}.
 */
export function quantizationReport(net) {
  validateNetwork(net);
  const ref = predictFigures(net).worstSuppressionDb;
  const out = {};
  for (const f of COEFFICIENT_FORMATS) {
    const w = quantizeNetwork(net, f).predicted.worstSuppressionDb;
    out[f] = { worstSuppressionDb: w, lossDb: ref - w };
  }
  return out;
}
