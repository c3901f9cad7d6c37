/**
 * Analysis of the firmware kit's arithmetic, not only of its coefficients: image rejection with the
 * rounded coefficients, the output noise floor from every rounding step, headroom for a full-scale
 * input, zero-input behaviour, and operations per sample.
 *
 * Noise: the standard white-noise model of fixed-point rounding (Oppenheim & Schafer, Discrete-Time
 * Signal Processing, 3rd ed., §6.9 "Effects of round-off noise in digital filters"; also Jackson,
 * Digital Filters and Signal Processing, ch. 11): each rounding adds white noise uncorrelated with
 * the signal, variance q²/12 for rounding to nearest and q²/3 for magnitude truncation (error
 * within ±q, signed against the signal), carried to the output through the transfer function from
 * its node, whose noise gain is Σ h²[n]. In the one-multiplier all-pass section
 * `y = x[n−m] + a·(x − y[n−m]) + e`, the error sees `1/(1 + a·z^−m)`, noise gain `1/(1 − a²)`; the
 * later sections are all-pass, noise gain 1.
 */
import { requireOneOf } from '../core/validate.js';
import { analyzeNetwork } from './analysis.js';
import {
  KIT_ARITHMETICS,
  KIT_WORD_LENGTHS,
  type KitArithmetic,
  kitPlan,
  sectionL1Norms,
} from './kit-arithmetic.js';
import { type Network, validateNetwork } from './network.js';
import { quantizeNetwork } from './quantize.js';

/** Operation counts per input sample (both branches and the trim stage, no skew stage). */
export interface KitOperations {
  multiplies: number;
  additions: number;
  shifts: number;
  saturations: number;
}

/** What {@link analyzeKitArithmetic} reports. */
export interface KitArithmeticAnalysis {
  arithmetic: KitArithmetic;
  /** Worst image (opposite-sideband) rejection over the band with the kit's coefficients, dB. */
  imageRejectionDb: number;
  /** Where that worst rejection is, Hz. */
  imageRejectionAtHz: number;
  /** Predicted output noise power per channel, dBFS (a full-scale sine reads 0 dBFS, AES17). */
  noiseFloorDbfs: number;
  /** The same as a density over 0…fs/2, dBFS/Hz. */
  noiseDensityDbfsPerHz: number;
  /** Noise of the network's rounding alone (before the output word), dBFS. */
  networkNoiseDbfs: number;
  /** Headroom bits of the network signals (fixed point), and the peak gain that set them. */
  headroomBits: number;
  peakGain: number;
  /** Largest output a full-scale input can give (L1 norm of each branch), dBFS peak re full scale. */
  outputPeakDbfs: number;
  /** True when the state decays to exactly zero with zero input (no limit cycle). */
  limitCycleFree: boolean;
  /** Largest zero-input limit cycle amplitude, LSB of the state word (0 when limit-cycle free). */
  deadBandLsb: number;
  /**
   * Fixed point: an upper bound on the samples of zero input after which every state is exactly
   * zero, from a full-scale state in every section (each section's zero-input recursion run to
   * zero, summed over the longer branch). Float: 0 (the states settle at the 1e-20 offset that
   * keeps them out of subnormal numbers, cancelled at the output).
   */
  zeroInputSettleSamples: number;
  /** Operations per input sample. */
  operationsPerSample: KitOperations;
  /** Estimated cycles per sample on a 32-bit microcontroller with a single-cycle MAC. */
  cyclesPerSampleEstimate: number;
}

function dB(p: number): number {
  return 10 * Math.log10(Math.max(p, 1e-300));
}

/**
 * Analyses a network run in the firmware kit's arithmetic (neutral trims, no skew stage).
 * @param net a network document (DESIGN.md §3).
 * @param arithmetic 'float', 'q31' or 'q15'.
 * @returns image rejection (dB), noise floor (dBFS, per channel), headroom, zero-input behaviour,
 *   operation counts and a cycle estimate.
 * @throws {OrthotoneError} INVALID_DOCUMENT for an invalid network; INVALID_ARGUMENT for an unknown
 *   arithmetic (as `kitPlan`).
 * Reference: white-noise model of product rounding through each section's noise gain (Oppenheim &
 * Schafer, Discrete-Time Signal Processing, 3rd ed., §6.9); L1 scaling (Jackson, BSTJ 49:159, 1970);
 * zero-input limit cycles under magnitude truncation (Jackson, BSTJ 48:3021, 1969).
 */
export function analyzeKitArithmetic(net: Network, arithmetic: KitArithmetic): KitArithmeticAnalysis {
  const doc = validateNetwork(net);
  requireOneOf('arithmetic', arithmetic, KIT_ARITHMETICS);
  const plan = kitPlan(doc, arithmetic);
  const rounded = quantizeNetwork(doc, arithmetic === 'float' ? 'float32' : arithmetic);
  const an = analyzeNetwork(rounded, { points: 512 });
  const wl = KIT_WORD_LENGTHS[arithmetic];
  const h = plan.headroomBits;
  // Power of each rounding, full-scale units squared (a full-scale sine has power 1/2 = 0 dBFS).
  let netNoise = 0;
  let outNoise = 0;
  const ops: KitOperations = { multiplies: 0, additions: 0, shifts: 0, saturations: 0 };
  if (arithmetic === 'float') {
    // Single precision: each rounding has relative error variance about 2^-48/3 (uniform within
    // ±2^-24 of the value); three roundings per section (subtract, multiply, add) on a signal of
    // the input's power, through the same noise gains. Reported for a full-scale sine.
    const rel = 2 ** -48 / 3;
    const sig = 0.5;
    const sec = (a: number) => 3 * (1 / (1 - a * a));
    if (plan.branches) {
      let worst = 0;
      for (const b of [plan.branches.i, plan.branches.q]) {
        let s = 0;
        for (const w of b.words) s += sec(w);
        worst = Math.max(worst, s);
      }
      netNoise = worst * rel * sig;
    } else {
      netNoise = 2 * (plan.fir?.words.length ?? 0) * rel * sig;
    }
    outNoise = 2 * rel * sig; // the trim products and sum
  } else {
    const qs = 2 ** -(31 - h); // state LSB, full-scale units
    const qo = 2 ** -(wl.sampleBits - 1); // output LSB
    const scale = 2 ** (wl.coefficientBits - 1);
    if (plan.branches) {
      let worst = 0;
      for (const b of [plan.branches.i, plan.branches.q]) {
        let s = 0;
        for (const w of b.words) s += 1 / (1 - (w / scale) ** 2);
        worst = Math.max(worst, s);
      }
      netNoise = (worst * qs * qs) / 3;
    } else {
      netNoise = (qs * qs) / 12;
    }
    // q31 input: (x + 2^(H−1)) >> H rounds once at the state LSB; q15 input converts exactly.
    if (arithmetic === 'q31' && h > 0) netNoise += (qs * qs) / 12;
    // Output word: Q' always rounds; I' rounds in q15 (shift right), is exact in q31 (shift left).
    outNoise = (qo * qo) / 12;
  }
  if (plan.branches) {
    const n = plan.branches.i.words.length + plan.branches.q.words.length;
    ops.multiplies = n;
    ops.additions = 2 * n;
    ops.shifts = arithmetic === 'float' ? 0 : n;
    ops.saturations = arithmetic === 'float' ? 0 : 2 * n;
  } else {
    const p = plan.fir?.offsets.length ?? 0;
    ops.multiplies = p;
    ops.additions = 2 * p;
    ops.shifts = arithmetic === 'float' ? 0 : 1;
    ops.saturations = arithmetic === 'float' ? 0 : p + 1;
  }
  // Trim stage: two multiplies and an add for Q', DC adds, output shifts and saturations.
  ops.multiplies += 2;
  ops.additions += 3;
  if (arithmetic !== 'float') {
    ops.shifts += 2;
    ops.saturations += 4;
  }
  const cycles =
    arithmetic === 'float'
      ? ops.multiplies + ops.additions
      : ops.multiplies + ops.additions + 2 * ops.shifts + 2 * ops.saturations;
  // Output peak: the larger branch L1 norm (whole branch), as dB re full scale.
  let outPeak = 1;
  if (plan.branches) {
    const sc = arithmetic === 'float' ? 1 : 2 ** (wl.coefficientBits - 1);
    for (const b of [plan.branches.i, plan.branches.q]) {
      outPeak = Math.max(
        outPeak,
        sectionL1Norms(
          b.orders,
          b.words.map((w) => w / sc),
        ).at(-1) ?? 1,
      );
    }
  } else outPeak = plan.peakGain;
  // Zero input: each section's recursion y = trunc0(−a·y[n−m] / 2^F) from a full-scale state.
  let settle = 0;
  let deadBand = 0;
  if (arithmetic !== 'float' && plan.branches) {
    const F = wl.coefficientBits - 1;
    const sc = 2 ** F;
    for (const b of [plan.branches.i, plan.branches.q]) {
      let steps = 0;
      b.words.forEach((w, k) => {
        let y = 2 ** 31 - 1;
        let n = 0;
        while (y !== 0 && n < 1e6) {
          // |w·y| < 2^62: for Q31 split y so the product stays exact in doubles.
          let mag: number;
          if (F < 16) mag = Math.floor((Math.abs(w) * Math.abs(y)) / sc);
          else {
            const yh = Math.floor(Math.abs(y) / 65536);
            const hi = Math.abs(w) * yh;
            const lo = Math.abs(w) * (Math.abs(y) - yh * 65536);
            const sh = sc / 65536;
            const hq = Math.floor(hi / sh);
            mag = hq + Math.floor(((hi - hq * sh) * 65536 + lo) / sc);
          }
          y = w < 0 !== y < 0 ? mag : -mag;
          n++;
        }
        if (y !== 0) deadBand = Math.max(deadBand, Math.abs(y));
        steps += n * b.orders[k]!;
      });
      settle = Math.max(settle, steps);
    }
  }
  const total = netNoise + outNoise;
  return {
    arithmetic,
    imageRejectionDb: an.worst.suppressionDb,
    imageRejectionAtHz: an.worst.atHz,
    noiseFloorDbfs: dB(total / 0.5),
    noiseDensityDbfsPerHz: dB(total / 0.5 / (doc.sampleRate / 2)),
    networkNoiseDbfs: dB(netNoise / 0.5),
    headroomBits: h,
    peakGain: plan.peakGain,
    outputPeakDbfs: 20 * Math.log10(outPeak),
    limitCycleFree: deadBand === 0,
    deadBandLsb: deadBand,
    zeroInputSettleSamples: settle,
    operationsPerSample: ops,
    cyclesPerSampleEstimate: cycles,
  };
}
