/**
 * The firmware kit's arithmetic, stated once: word lengths, coefficient codes, headroom, and the
 * conversion of trims into the kit's own values. The C generator (`export/firmware-kit.ts`) writes
 * these numbers into the kit's tables, and the bit-exact model (`generate/fixed-point.ts`) runs
 * them; the C sources in `firmware/ortho_kit.h` state the same rules in their header comment.
 *
 * The rules (B = sample bits, C = coefficient bits, F = C − 1, H = headroom bits):
 * - samples in and out: B-bit Q(B−1) (q15: B = 16, q31: B = 32), full scale ±1;
 * - coefficients: C-bit Q(C−1) (q15: C = 16, q31: C = 32), rounded to nearest with ties away from
 *   zero and saturated to ±(2^(C−1) − 1) (as {@link quantizeCoefficient}); trims and skew taps in
 *   Q(C−2) (range ±2, gains up to +6 dB);
 * - network signals and states: 32-bit Q(31−H) words, products and sums in 64 bits; H is the
 *   smallest whole number with 2^H ≥ the largest L1 norm of the impulse response from the input
 *   to any node, so no node overflows for any input within full scale (L1 scaling: Jackson,
 *   "On the interaction of roundoff noise and dynamic range in digital filters", BSTJ 49:159, 1970);
 * - all-pass section: `d = sat32(x − y[n−m])`, `y = sat32(x[n−m] + trunc0(a·d / 2^F))`, with the
 *   product truncated toward zero (magnitude truncation), which rules out zero-input limit cycles
 *   (Jackson, BSTJ 48:3021, 1969); every other rounding is round-half-up, `(v + 2^(s−1)) >> s`.
 * Float kits run the same structure in IEEE single precision.
 */
import { OrthotoneError } from '../core/errors.js';
import { requireOneOf } from '../core/validate.js';
import { type Network, validateNetwork } from './network.js';
import { quantizeCoefficient } from './quantize.js';

/** Arithmetic of a firmware kit. */
export type KitArithmetic = 'float' | 'q31' | 'q15';

/** All kit arithmetics. */
export const KIT_ARITHMETICS: readonly KitArithmetic[] = Object.freeze(['float', 'q31', 'q15']);

/** Word lengths of one kit arithmetic, bits (0 for float, which has none). */
export interface KitWordLengths {
  /** Input and output samples, bits (Q(n−1)); float: 0. */
  sampleBits: number;
  /** Coefficients, bits (Q(n−1); trims and skew taps Q(n−2)); float: 0. */
  coefficientBits: number;
  /** Network signals and states, bits; float: 0. */
  stateBits: number;
  /** Products and sums, bits; float: 0. */
  accumulatorBits: number;
}

/** Word lengths per arithmetic. */
export const KIT_WORD_LENGTHS: Readonly<Record<KitArithmetic, Readonly<KitWordLengths>>> = Object.freeze({
  float: Object.freeze({ sampleBits: 0, coefficientBits: 0, stateBits: 0, accumulatorBits: 0 }),
  q31: Object.freeze({ sampleBits: 32, coefficientBits: 32, stateBits: 32, accumulatorBits: 64 }),
  q15: Object.freeze({ sampleBits: 16, coefficientBits: 16, stateBits: 32, accumulatorBits: 64 }),
});

/** Largest headroom the kit accepts, bits (an L1 norm of 4096 would be a broken network). */
export const KIT_MAX_HEADROOM_BITS = 12;

/** One branch of an all-pass kit plan. */
export interface KitBranch {
  /** Integer delay at the branch input, samples. */
  delay: number;
  /** Section orders, 1 (z⁻¹) or 2 (z⁻²). */
  orders: number[];
  /** Coefficient words: integer codes in Q(C−1) for fixed point, single-precision values for float. */
  words: number[];
}

/** Everything the kit's tables hold, for one network and arithmetic. */
export interface KitPlan {
  arithmetic: KitArithmetic;
  kind: 'allpass' | 'fir';
  sampleRate: number;
  /** Headroom bits H of the network signals (0 for float). */
  headroomBits: number;
  /** Largest L1 norm of the impulse response from the input to any network node. */
  peakGain: number;
  /** All-pass branches (kind 'allpass'). */
  branches?: { i: KitBranch; q: KitBranch };
  /** Folded FIR (kind 'fir'): length N, centre c = (N−1)/2, and the non-zero g_k = h[c+k] at offsets k. */
  fir?: { taps: number; centre: number; offsets: number[]; words: number[] };
}

/** Fraction bits of the coefficients (F = C − 1). @throws never */
export function coefficientFractionBits(arithmetic: 'q15' | 'q31'): number {
  return KIT_WORD_LENGTHS[arithmetic].coefficientBits - 1;
}

function coefficientWord(x: number, arithmetic: KitArithmetic): number {
  if (arithmetic === 'float') return quantizeCoefficient(x, 'float32');
  const f = coefficientFractionBits(arithmetic);
  return Math.round(quantizeCoefficient(x, arithmetic) * 2 ** f);
}

/** The value a coefficient word stands for. */
function wordValue(w: number, arithmetic: KitArithmetic): number {
  return arithmetic === 'float' ? w : w / 2 ** coefficientFractionBits(arithmetic);
}

/**
 * L1 norms of a cascade's impulse response after each of its sections (the input's own is 1): the
 * largest sets the headroom a node needs, the last is the branch's gain for a worst-case input
 * (L1 scaling, Jackson, BSTJ 49:159, 1970). A branch's delay does not change an L1 norm.
 * @param orders each section's order (1 or 2).
 * @param coefs each section's coefficient a, as the arithmetic holds it.
 * @returns the norms, one per section.
 * @throws never
 * @internal
 */
export function sectionL1Norms(orders: readonly number[], coefs: readonly number[]): number[] {
  // Length: until the slowest pole has decayed by 1e-12 (r = |a|^(1/m)), capped.
  let rMax = 0;
  orders.forEach((m, k) => {
    rMax = Math.max(rMax, Math.abs(coefs[k]!) ** (1 / m));
  });
  const len = Math.min(
    1 << 21,
    Math.max(64, Math.ceil(Math.log(1e-12) / Math.log(Math.max(rMax, 1e-3))) + 16),
  );
  let x = new Float64Array(len);
  x[0] = 1;
  const norms: number[] = [];
  for (let k = 0; k < orders.length; k++) {
    const m = orders[k]!;
    const a = coefs[k]!;
    const y = new Float64Array(len);
    let l1 = 0;
    for (let n = 0; n < len; n++) {
      const v = a * (x[n]! - (n >= m ? y[n - m]! : 0)) + (n >= m ? x[n - m]! : 0);
      y[n] = v;
      l1 += Math.abs(v);
    }
    norms.push(l1);
    x = y;
  }
  return norms;
}

/**
 * The kit's tables for a network: coefficient words in the kit's arithmetic, the folded FIR's
 * non-zero taps, and the headroom H chosen from the largest L1 norm of the impulse response to any
 * node (section outputs; the FIR accumulator), so that no node overflows for an input within full
 * scale.
 * @param net a network document (DESIGN.md §3).
 * @param arithmetic 'float', 'q31' or 'q15'.
 * @returns the plan.
 * @throws {OrthotoneError} INVALID_DOCUMENT for an invalid network or an FIR that is not type III
 *   (antisymmetric with a zero centre tap), INVALID_ARGUMENT for an unknown arithmetic or a network
 *   whose peak gain needs more than {@link KIT_MAX_HEADROOM_BITS} headroom bits.
 * Reference: L1-norm scaling against overflow (Jackson, BSTJ 49:159, 1970); coefficient rounding as
 * {@link quantizeCoefficient}.
 */
export function kitPlan(net: Network, arithmetic: KitArithmetic): KitPlan {
  const doc = validateNetwork(net);
  requireOneOf('arithmetic', arithmetic, KIT_ARITHMETICS);
  let peakGain = 1;
  const plan: KitPlan = {
    arithmetic,
    kind: doc.kind,
    sampleRate: doc.sampleRate,
    headroomBits: 0,
    peakGain: 1,
  };
  if (doc.kind === 'allpass') {
    const mk = (b: (typeof doc.branches)['i']): KitBranch => ({
      delay: b.delay,
      orders: b.sections.map((s) => s.order),
      words: b.sections.map((s) => coefficientWord(s.a, arithmetic)),
    });
    const i = mk(doc.branches.i);
    const q = mk(doc.branches.q);
    for (const b of [i, q]) {
      peakGain = Math.max(
        peakGain,
        ...sectionL1Norms(
          b.orders,
          b.words.map((w) => wordValue(w, arithmetic)),
        ),
      );
    }
    plan.branches = { i, q };
  } else {
    const n = doc.taps.length;
    const c = (n - 1) / 2;
    let anti = doc.taps[c] === 0;
    for (let k = 1; k <= c && anti; k++) anti = doc.taps[c + k] === -doc.taps[c - k]!;
    if (!anti) {
      throw new OrthotoneError(
        'INVALID_DOCUMENT',
        `the FIR (${n} taps) is not antisymmetric about its centre tap: the kit runs type III Hilbert FIRs as designed by orthotone (h[c+k] = -h[c-k], h[c] = 0)`,
        n,
      );
    }
    const offsets: number[] = [];
    const words: number[] = [];
    let l1 = 0;
    for (let k = 1; k <= c; k++) {
      const w = coefficientWord(doc.taps[c + k]!, arithmetic);
      if (w === 0) continue;
      offsets.push(k);
      words.push(w);
      l1 += 2 * Math.abs(wordValue(w, arithmetic));
    }
    peakGain = Math.max(1, l1);
    plan.fir = { taps: n, centre: c, offsets, words };
  }
  plan.peakGain = peakGain;
  if (arithmetic !== 'float') {
    const h = Math.max(0, Math.ceil(Math.log2(peakGain) - 1e-12));
    if (h > KIT_MAX_HEADROOM_BITS) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        `the network's peak gain ${peakGain.toFixed(1)} needs ${h} headroom bits, more than ${KIT_MAX_HEADROOM_BITS}: check the network`,
        peakGain,
      );
    }
    plan.headroomBits = h;
  }
  return plan;
}

/** Trims in the kit's own values (what `ortho_trims_t` holds). */
export interface KitTrimWords {
  /** G·cos φ: Q(C−2) code, or a single-precision value for float. */
  gainCos: number;
  /** G·sin φ: same format. */
  gainSin: number;
  /** DC added to I: output counts (Q(B−1) code), or a single-precision full-scale value. */
  dcI: number;
  /** DC added to Q: same. */
  dcQ: number;
  /** 1 for the lower sideband (Q negated before the trims), else 0. */
  lowerSideband: number;
  /** Skew stage: whole part of `maxSkew + 1 + skewSamples`. */
  skewWhole: number;
  /** Skew stage: 4-point Lagrange taps at delays whole−1 … whole+2, Q(C−2) codes or values. */
  skewTaps: [number, number, number, number];
}

function code(v: number, frac: number, bits: number): number {
  const max = 2 ** (bits - 1) - 1;
  const c = Math.min(max, Math.floor(Math.abs(v) * 2 ** frac + 0.5));
  return v < 0 ? -c : c;
}

/**
 * Converts trims in the library's units into the kit's own values, exactly as the kit's host
 * helper `ortho_trims_from_units` does (same formulas, same rounding: to nearest, ties away from
 * zero, saturated symmetrically).
 * @param trims gain dB, phase degrees, skew samples, DC full-scale units (DESIGN.md §4).
 * @param lowerSideband true for the lower sideband.
 * @param arithmetic the kit's arithmetic.
 * @param maxSkew the kit's largest |skew|, whole samples (0: no skew stage).
 * @returns the kit's trim values.
 * @throws {OrthotoneError} INVALID_ARGUMENT when a trim is out of range (|gain| ≤ 6 dB, |phase| ≤ 45°,
 *   |dc| ≤ 1, |skew| ≤ maxSkew) or not finite.
 * Reference: DESIGN.md §4 (trims); 4-point Lagrange interpolation for the fractional delay (Laakso,
 * Välimäki, Karjalainen & Laine, "Splitting the unit delay", IEEE SP Magazine 13(1), 1996).
 */
export function kitTrimWords(
  trims: { gainDb: number; phaseDeg: number; skewSamples: number; dcI: number; dcQ: number },
  lowerSideband: boolean,
  arithmetic: KitArithmetic,
  maxSkew: number,
): KitTrimWords {
  const { gainDb, phaseDeg, skewSamples, dcI, dcQ } = trims;
  const ok =
    Math.abs(gainDb) <= 6 &&
    Math.abs(phaseDeg) <= 45 &&
    Math.abs(dcI) <= 1 &&
    Math.abs(dcQ) <= 1 &&
    Math.abs(skewSamples) <= maxSkew;
  if (!ok) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `trims out of the kit's range (gain ${gainDb} dB, phase ${phaseDeg} deg, dc ${dcI}/${dcQ}, skew ${skewSamples}): keep |gain| <= 6 dB, |phase| <= 45 deg, |dc| <= 1 and |skew| <= ${maxSkew} samples (the kit's --max-skew)`,
      trims,
    );
  }
  const g = 10 ** (gainDb / 20);
  const phi = (phaseDeg * Math.PI) / 180;
  const c = g * Math.cos(phi);
  const s = g * Math.sin(phi);
  const pos = maxSkew + 1 + skewSamples;
  const whole = Math.floor(pos);
  const mu = pos - whole;
  const h = [
    (-mu * (mu - 1) * (mu - 2)) / 6,
    ((mu + 1) * (mu - 1) * (mu - 2)) / 2,
    (-(mu + 1) * mu * (mu - 2)) / 2,
    ((mu + 1) * mu * (mu - 1)) / 6,
  ];
  const lower = lowerSideband ? 1 : 0;
  if (arithmetic === 'float') {
    const f = Math.fround;
    return {
      gainCos: f(c),
      gainSin: f(s),
      dcI: f(dcI),
      dcQ: f(dcQ),
      lowerSideband: lower,
      skewWhole: whole,
      skewTaps: [f(h[0]!), f(h[1]!), f(h[2]!), f(h[3]!)],
    };
  }
  const { sampleBits: b, coefficientBits: cb } = KIT_WORD_LENGTHS[arithmetic];
  return {
    gainCos: code(c, cb - 2, cb),
    gainSin: code(s, cb - 2, cb),
    dcI: code(dcI, b - 1, b),
    dcQ: code(dcQ, b - 1, b),
    lowerSideband: lower,
    skewWhole: whole,
    skewTaps: [
      code(h[0]!, cb - 2, cb),
      code(h[1]!, cb - 2, cb),
      code(h[2]!, cb - 2, cb),
      code(h[3]!, cb - 2, cb),
    ],
  };
}
