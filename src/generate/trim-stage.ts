/**
 * The trim stage that follows a 90° network (DESIGN.md §4), in this order:
 *
 * 1. sideband and gain/phase: `Q' = 10^(gainDb/20)·(s·Q·cos φ + I·sin φ)`, `I' = I`, with s = +1 for
 *    the upper sideband and −1 for the lower (Q negated before the trims, so one set of trims,
 *    which corrects the hardware after the library, serves both sidebands);
 * 1b. the optional frequency-dependent correction (widely-linear FIR pair, `Correction` in
 *    src/core/trims.ts): `Q_c = qFromQ ∗ Q' + qFromI ∗ I'`, I' delayed to stay aligned;
 * 2. skew: Q delayed by `skewSamples` relative to I, fractional and possibly negative; both paths
 *    carry a fixed bulk delay so that negative skew is causal (see {@link TrimStage.latencySamples});
 * 3. DC: `I'' = I' + dcI`, `Q'' = Q' + dcQ`, last, so DC never scales.
 *
 * Every change of trims or sideband is ramped linearly (in the natural units `A = s·g·cos φ`,
 * `B = g·sin φ`, skew, dcI, dcQ) over `rampSeconds`, so it does not click. The ramp advances per
 * sample, so output never depends on block partitioning. The correction length is preallocated
 * (`maxCorrectionTaps`) and a new correction takes effect at the next block boundary.
 *
 * The stage also guards the output: samples beyond full scale (|x| > 1) are counted, never clipped
 * silently; magnitudes below 1e-30 are written as 0 (no subnormal floats leave the stage); a
 * magnitude beyond {@link OUTPUT_LIMIT} is limited there (and counted) so the output stays finite.
 */
import { OrthotoneError } from '../core/errors.js';
import { type Correction, TRIM_LIMITS, type Trims, validateTrims, ZERO_TRIMS } from '../core/trims.js';
import { requireOneOf, requireRange, stripUndefined, withDefaults } from '../core/validate.js';

/** The trim fields a stage copies from a partial set (extra fields are ignored). */
const TRIM_KEYS = ['gainDb', 'phaseDeg', 'skewSamples', 'dcI', 'dcQ'] as const;

import { DEFAULT_MAX_CORRECTION_TAPS, validateCorrection } from './correction.js';
import { FRACTIONAL_DELAY_TAPS, fractionalDelayTaps } from './fractional-delay.js';
import { RUNTIME_CHUNK } from './network-runtime.js';

/** Which sideband the I/Q pair selects after upconversion (DESIGN.md §2). */
export type Sideband = 'upper' | 'lower';

/** Options of a trim stage (and of a quadrature generator). */
export interface TrimStageOptions {
  /** Initial trims (applied at once, not ramped). Default all zero. */
  trims: Partial<Trims>;
  /** Initial sideband. Default 'upper'. */
  sideband: Sideband;
  /** Ramp time for trim, sideband changes, seconds (0 = immediate). Default 0.01. */
  rampSeconds: number;
  /** Largest |skewSamples| this stage supports, samples, 0 to 16. Default 16. 0 removes the skew delay. */
  maxSkewSamples: number;
  /** Longest correction it can run, taps (odd, up to 255), or 0 for none. Default 63. */
  maxCorrectionTaps: number;
  /** Initial correction, or null. Default null. */
  correction: Correction | null;
}

/** Defaults for {@link TrimStageOptions}. */
export const TRIM_STAGE_DEFAULTS: Readonly<TrimStageOptions> = Object.freeze({
  trims: ZERO_TRIMS,
  sideband: 'upper' as Sideband,
  rampSeconds: 0.01,
  maxSkewSamples: TRIM_LIMITS.skewSamples,
  maxCorrectionTaps: DEFAULT_MAX_CORRECTION_TAPS,
  correction: null,
});

/** Counters kept by a generator; read them at any time, reset with `resetStats()`. */
export interface GeneratorStats {
  /** Samples (I and Q counted separately) written so far. */
  samplesOut: number;
  /** Input samples that were NaN or ±Infinity and were replaced by 0. */
  nonFiniteInputs: number;
  /** Finite input samples beyond ±{@link INPUT_LIMIT}, limited there. */
  clampedInputs: number;
  /** Output samples (I and Q counted separately) with magnitude above full scale (1.0). */
  overFullScale: number;
  /** Largest output magnitude seen, full-scale units (1.0 = 0 dBFS). */
  peak: number;
}

/** Input magnitude limit, full-scale units (+120 dBFS): beyond it input is limited and counted. */
export const INPUT_LIMIT = 1e6;
/** Output magnitude limit, full-scale units: keeps the output finite for any finite input. */
export const OUTPUT_LIMIT = 1e9;
/** Output magnitudes below this are written as exactly 0 (no subnormal floats). */
export const OUTPUT_FLUSH = 1e-30;

const SPARE = 16 * RUNTIME_CHUNK;
const FD_TAPS = FRACTIONAL_DELAY_TAPS;
const FD_HALF = FD_TAPS / 2 - 1;

/**
 * A new zeroed stats object (counts in samples; `peak` in full-scale units).
 * @throws never
 */
export function emptyStats(): GeneratorStats {
  return { samplesOut: 0, nonFiniteInputs: 0, clampedInputs: 0, overFullScale: 0, peak: 0 };
}

/**
 * Validates trim stage options merged over {@link TRIM_STAGE_DEFAULTS}.
 * @throws {OrthotoneError} INVALID_ARGUMENT naming the option, its value and the allowed range.
 */
export function validateTrimStageOptions(o: TrimStageOptions): TrimStageOptions {
  validateTrims(o.trims);
  requireOneOf('sideband', o.sideband, ['upper', 'lower'] as const);
  requireRange('rampSeconds', o.rampSeconds, 0, 10, 's');
  requireRange('maxSkewSamples', o.maxSkewSamples, 0, TRIM_LIMITS.skewSamples, 'samples');
  const m = requireRange('maxCorrectionTaps', o.maxCorrectionTaps, 0, 255, 'taps');
  if (!Number.isInteger(m) || (m !== 0 && m % 2 === 0)) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `maxCorrectionTaps ${m} must be 0 or an odd whole number (e.g. 63)`,
      m,
    );
  }
  if (o.correction !== null) validateCorrection(o.correction, m);
  const skew = o.trims.skewSamples ?? 0;
  if (Math.abs(skew) > o.maxSkewSamples) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `skewSamples ${skew} exceeds maxSkewSamples ${o.maxSkewSamples}: raise maxSkewSamples (up to ${TRIM_LIMITS.skewSamples})`,
      skew,
    );
  }
  return o;
}

/** Natural-unit parameters: A, B, skew, dcI, dcQ. */
const NP = 5;

function naturalParams(t: Trims, sign: number, out: Float64Array): void {
  const g = 10 ** (t.gainDb / 20);
  const phi = (t.phaseDeg * Math.PI) / 180;
  out[0] = sign * g * Math.cos(phi);
  out[1] = g * Math.sin(phi);
  out[2] = t.skewSamples;
  out[3] = t.dcI;
  out[4] = t.dcQ;
}

/**
 * Sanitises `n` input samples from `src[from…]` into `dst[0…]`: NaN/±Inf → 0 and counted, beyond
 * ±INPUT_LIMIT limited and counted, magnitudes below OUTPUT_FLUSH → 0 (full-scale units). Part of
 * the audio path, so it never throws: samples read past the end of `src` count as non-finite and
 * become 0. Common practice, no source (input guarding against NaN and denormals).
 * @throws never
 */
export function sanitiseInput(
  src: Float32Array | Float64Array,
  from: number,
  n: number,
  dst: Float64Array,
  stats: GeneratorStats,
): void {
  for (let j = 0; j < n; j++) {
    let v = src[from + j]!;
    const a = v < 0 ? -v : v;
    if (!(a <= INPUT_LIMIT)) {
      if (Number.isFinite(a)) {
        stats.clampedInputs++;
        v = v > 0 ? INPUT_LIMIT : -INPUT_LIMIT;
      } else {
        stats.nonFiniteInputs++;
        v = 0;
      }
    } else if (a < OUTPUT_FLUSH) v = 0;
    dst[j] = v;
  }
}

/**
 * The trim stage. Use it through {@link createQuadratureGenerator}, or on its own after an ideal
 * analytic source (`process`), to compare a network against the ideal with the same trims.
 */
export class TrimStage {
  /** Sample rate, Hz. */
  readonly sampleRate: number;
  /** Largest |skewSamples| supported, samples. */
  readonly maxSkewSamples: number;
  /** Longest correction supported, taps (0 = none). */
  readonly maxCorrectionTaps: number;
  /**
   * Delay this stage adds to both I and Q, whole samples: `(maxCorrectionTaps − 1)/2` for the
   * correction plus `ceil(maxSkewSamples) + 15` bulk delay for the skew interpolator (0 when off).
   */
  readonly latencySamples: number;
  /** Counters (live object, updated in place). */
  readonly stats: GeneratorStats = emptyStats();

  private rampDefault: number;
  private targetTrims: Trims;
  private sidebandSel: Sideband;
  private readonly cur = new Float64Array(NP);
  private readonly start = new Float64Array(NP);
  private readonly tgt = new Float64Array(NP);
  private rampPos = 0;
  private rampLen = 0;
  // per-sample parameter values inside a ramped chunk
  private readonly rSkew = new Float64Array(RUNTIME_CHUNK);
  private readonly rDcI = new Float64Array(RUNTIME_CHUNK);
  private readonly rDcQ = new Float64Array(RUNTIME_CHUNK);
  private readonly inI = new Float64Array(RUNTIME_CHUNK);
  private readonly inQ = new Float64Array(RUNTIME_CHUNK);
  // One linear history per signal, shared write position: I' and Q' after step 1, and the
  // corrected Q (only written while a correction is set). Every later step reads spans of these.
  private readonly keep: number;
  private readonly hI: Float64Array;
  private readonly hQ: Float64Array;
  private readonly hC: Float64Array;
  private wp: number;
  // correction
  private readonly kc: number;
  private readonly cQ: Float64Array;
  private readonly cI: Float64Array;
  private cLen = 0;
  private cOff = 0;
  private cBackfill = false;
  private correctionDoc: Correction | null = null;
  // skew
  private readonly bulk: number;
  private readonly steadyTaps = new Float64Array(FD_TAPS);
  private readonly rampTaps = new Float64Array(FD_TAPS);
  private steadyInt = 0;
  private steadyFrac = 0;

  /**
   * @param sampleRate sample rate, Hz (used for the ramp time).
   * @param options partial options over {@link TRIM_STAGE_DEFAULTS}.
   * @throws {OrthotoneError} INVALID_ARGUMENT for an option out of range (see
   *   {@link validateTrimStageOptions}).
   */
  constructor(sampleRate: number, options?: Partial<TrimStageOptions>) {
    const o = validateTrimStageOptions(withDefaults(TRIM_STAGE_DEFAULTS, options));
    this.sampleRate = requireRange('sampleRate', sampleRate, 1000, 1_000_000, 'Hz');
    this.rampDefault = Math.round(o.rampSeconds * sampleRate);
    this.maxSkewSamples = o.maxSkewSamples;
    this.maxCorrectionTaps = o.maxCorrectionTaps;
    this.targetTrims = { ...ZERO_TRIMS, ...stripUndefined(o.trims, TRIM_KEYS) };
    this.sidebandSel = o.sideband;
    const lm = o.maxCorrectionTaps;
    this.kc = lm > 0 ? (lm - 1) / 2 : 0;
    this.cQ = new Float64Array(lm);
    this.cI = new Float64Array(lm);
    // skew: I delayed by `bulk`, Q by bulk + skew; the interpolator reaches FD_HALF samples ahead.
    const ms = Math.ceil(o.maxSkewSamples);
    this.bulk = ms > 0 ? ms + FD_HALF : 0;
    // Oldest sample any step reads: the skewed Q (bulk + ms + TAPS/2 back) of the correction output,
    // which itself reaches 2·kc back into Q' and I'.
    this.keep = 2 * this.kc + (ms > 0 ? this.bulk + ms + FD_TAPS / 2 : 0) + 1;
    this.hI = new Float64Array(this.keep + SPARE);
    this.hQ = new Float64Array(this.keep + SPARE);
    this.hC = new Float64Array(lm > 0 ? this.keep + SPARE : 0);
    this.wp = this.keep;
    this.latencySamples = this.kc + this.bulk;
    naturalParams(this.targetTrims, this.sign(), this.tgt);
    this.cur.set(this.tgt);
    this.updateSteadySkew();
    if (o.correction) this.setCorrection(o.correction);
  }

  private sign(): number {
    return this.sidebandSel === 'lower' ? -1 : 1;
  }

  /**
   * The trims the stage is at or ramping towards (DESIGN.md §4 units: gainDb dB, phaseDeg degrees,
   * skewSamples samples, dcI/dcQ full-scale units).
   * @throws never
   */
  get trims(): Readonly<Trims> {
    return this.targetTrims;
  }

  /**
   * The selected sideband (the target, also while a change is still ramping).
   * @throws never
   */
  get sideband(): Sideband {
    return this.sidebandSel;
  }

  /**
   * The correction in use (a copy of the taps given to {@link TrimStage.setCorrection}, taps
   * dimensionless), or null.
   * @throws never
   */
  get correction(): Correction | null {
    return this.correctionDoc;
  }

  /**
   * True while a trim or sideband change is still ramping.
   * @throws never
   */
  get ramping(): boolean {
    return this.rampPos < this.rampLen;
  }

  /**
   * Changes some trims (the others keep their values); ramps from the current values.
   * The ramp is linear per sample in the natural units `A = s·g·cos φ`, `B = g·sin φ`, skew, dcI,
   * dcQ (common practice, no source: a linear parameter ramp to avoid clicks).
   * @param t trims to change (DESIGN.md §4 units: gainDb dB, phaseDeg degrees, skewSamples samples,
   *   dcI/dcQ full-scale units).
   * @param opts `rampSeconds` overrides the stage's ramp time for this change, seconds, 0…10
   *   (0 = immediate).
   * @throws {OrthotoneError} INVALID_ARGUMENT when a trim is non-finite or out of range
   *   (`validateTrims`), |skewSamples| exceeds `maxSkewSamples`, or `opts.rampSeconds` is outside
   *   0…10 s; nothing changes then.
   */
  setTrims(t: Partial<Trims>, opts?: { rampSeconds?: number }): void {
    validateTrims(t);
    if (t.skewSamples !== undefined && Math.abs(t.skewSamples) > this.maxSkewSamples) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        `skewSamples ${t.skewSamples} exceeds maxSkewSamples ${this.maxSkewSamples}: create the generator with a larger maxSkewSamples (up to ${TRIM_LIMITS.skewSamples})`,
        t.skewSamples,
      );
    }
    const ramp = this.rampFor(opts);
    this.targetTrims = { ...this.targetTrims, ...stripUndefined(t, TRIM_KEYS) };
    this.retarget(ramp);
  }

  /**
   * Selects the sideband (Q negated for 'lower', DESIGN.md §2), ramped like a trim change.
   * @param sideband 'upper' or 'lower'.
   * @param opts `rampSeconds` overrides the stage's ramp time for this change, seconds, 0…10.
   * @throws {OrthotoneError} INVALID_ARGUMENT for anything but 'upper' or 'lower', or an
   *   `opts.rampSeconds` outside 0…10 s.
   */
  setSideband(sideband: Sideband, opts?: { rampSeconds?: number }): void {
    requireOneOf('sideband', sideband, ['upper', 'lower'] as const);
    const ramp = this.rampFor(opts);
    this.sidebandSel = sideband;
    this.retarget(ramp);
  }

  /**
   * Sets or removes (null) the frequency-dependent correction; it takes effect at the next block.
   * Its taps are copied into storage preallocated at construction: nothing is allocated later.
   * Method: a widely-linear FIR pair `Q_c = qFromQ ∗ Q' + qFromI ∗ I'` (Anttila, Valkama & Renfors,
   * IEEE TCAS-II, Apr 2008).
   * @param c the correction (taps dimensionless, odd length), or null to remove it.
   * @throws {OrthotoneError} INVALID_ARGUMENT when the stage was created with maxCorrectionTaps 0
   *   (and `c` is not null).
   * @throws {OrthotoneError} INVALID_ARGUMENT when the correction is malformed or longer than
   *   `maxCorrectionTaps` (see `validateCorrection`).
   */
  setCorrection(c: Correction | null): void {
    if (c === null) {
      // (cBackfill is read only while a correction is set, and every new correction sets it.)
      this.cLen = 0;
      this.correctionDoc = null;
      return;
    }
    if (this.maxCorrectionTaps === 0) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        'this generator was created with maxCorrectionTaps 0: create it with an odd maxCorrectionTaps (e.g. 63) to use a correction',
        c,
      );
    }
    validateCorrection(c, this.maxCorrectionTaps);
    // Only taps 0…n−1 are ever read (correctedAt), so older taps beyond n need no clearing.
    const n = c.qFromQ.length;
    for (let k = 0; k < n; k++) {
      this.cQ[k] = c.qFromQ[k]!;
      this.cI[k] = c.qFromI[k]!;
    }
    this.cLen = n;
    this.cOff = this.kc - (n - 1) / 2;
    // The skew interpolator reads corrected Q from before this block: recompute that history
    // with the new correction at the next block (as if it had always been set).
    this.cBackfill = true;
    this.correctionDoc = { qFromQ: c.qFromQ.slice(), qFromI: c.qFromI.slice() };
  }

  private rampFor(opts?: { rampSeconds?: number }): number {
    if (opts?.rampSeconds === undefined) return this.rampDefault;
    return Math.round(requireRange('rampSeconds', opts.rampSeconds, 0, 10, 's') * this.sampleRate);
  }

  private retarget(ramp: number): void {
    naturalParams(this.targetTrims, this.sign(), this.tgt);
    if (ramp <= 0) {
      this.cur.set(this.tgt);
      this.rampPos = 0;
      this.rampLen = 0;
    } else {
      this.start.set(this.cur);
      this.rampPos = 0;
      this.rampLen = ramp;
    }
    if (!this.ramping) this.updateSteadySkew();
  }

  private updateSteadySkew(): void {
    if (this.bulk === 0) return;
    const t = this.bulk + this.cur[2]!;
    const ti = Math.floor(t);
    this.steadyInt = ti;
    this.steadyFrac = t - ti;
    fractionalDelayTaps(this.steadyFrac, this.steadyTaps);
  }

  /**
   * Clears the signal state (histories) to silence, ends any ramp at its target and zeroes the stats;
   * keeps the settings (trims, sideband, correction).
   * @throws never
   */
  reset(): void {
    this.cur.set(this.tgt);
    this.rampPos = 0;
    this.rampLen = 0;
    this.updateSteadySkew();
    // The corrected history of silence is silence (+0, as correctedAt computes it), so clearing it
    // leaves nothing for a pending backfill to change.
    this.hI.fill(0);
    this.hQ.fill(0);
    this.hC.fill(0);
    this.wp = this.keep;
    this.resetStats();
  }

  /**
   * Zeroes the counters in {@link TrimStage.stats} (the same object, updated in place).
   * @throws never
   */
  resetStats(): void {
    const s = this.stats;
    s.samplesOut = 0;
    s.nonFiniteInputs = 0;
    s.clampedInputs = 0;
    s.overFullScale = 0;
    s.peak = 0;
  }

  /**
   * An independent copy in the same state; its future output is bit-identical (allocates: not for
   * the audio path).
   * @throws never (the state, the ramp length included, is copied in samples).
   */
  clone(): TrimStage {
    // The ramp length is copied in samples below; rebuilding it from seconds could round past the
    // 10 s limit at a non-whole sample rate.
    const c = new TrimStage(this.sampleRate, {
      rampSeconds: 0,
      maxSkewSamples: this.maxSkewSamples,
      maxCorrectionTaps: this.maxCorrectionTaps,
    });
    c.copyStateFrom(this);
    return c;
  }

  private copyStateFrom(o: TrimStage): void {
    this.rampDefault = o.rampDefault;
    this.targetTrims = { ...o.targetTrims };
    this.sidebandSel = o.sidebandSel;
    this.cur.set(o.cur);
    this.start.set(o.start);
    this.tgt.set(o.tgt);
    this.rampPos = o.rampPos;
    this.rampLen = o.rampLen;
    this.hI.set(o.hI);
    this.hQ.set(o.hQ);
    this.hC.set(o.hC);
    this.wp = o.wp;
    this.cQ.set(o.cQ);
    this.cI.set(o.cI);
    this.cLen = o.cLen;
    this.cOff = o.cOff;
    this.cBackfill = o.cBackfill;
    this.correctionDoc = o.correctionDoc;
    this.steadyTaps.set(o.steadyTaps);
    this.steadyInt = o.steadyInt;
    this.steadyFrac = o.steadyFrac;
    Object.assign(this.stats, o.stats);
  }

  /**
   * Applies the trims to an I/Q pair (e.g. an ideal analytic source). Allocation-free.
   * Non-finite input samples are replaced by 0 and counted; input beyond ±{@link INPUT_LIMIT} is
   * limited and counted; output is guarded (see the file comment). Method: DESIGN.md §4.
   * @param inI I input, full-scale units (1.0 = the peak of a 0 dBFS sine).
   * @param inQ Q input, full-scale units, same length.
   * @param outI I output, full-scale units, same length; delayed by {@link TrimStage.latencySamples}.
   * @param outQ Q output, full-scale units, same length.
   * @throws {OrthotoneError} BUFFER_MISMATCH when the four arrays differ in length.
   */
  process(inI: Float32Array, inQ: Float32Array, outI: Float32Array, outQ: Float32Array): void {
    const n = inI.length;
    if (inQ.length !== n || outI.length !== n || outQ.length !== n) {
      throw new OrthotoneError(
        'BUFFER_MISMATCH',
        `buffer lengths differ (inI ${n}, inQ ${inQ.length}, outI ${outI.length}, outQ ${outQ.length}): pass four arrays of the same length`,
        [n, inQ.length, outI.length, outQ.length],
      );
    }
    for (let o = 0; o < n; o += RUNTIME_CHUNK) {
      const m = Math.min(RUNTIME_CHUNK, n - o);
      sanitiseInput(inI, o, m, this.inI, this.stats);
      sanitiseInput(inQ, o, m, this.inQ, this.stats);
      this.processChunk(this.inI, this.inQ, m, outI, outQ, o);
    }
  }

  /** Corrected Q at history position p (aligned with I' at p − kc). */
  private correctedAt(p: number): number {
    const cq = this.cQ;
    const ci = this.cI;
    const hq = this.hQ;
    const hi = this.hI;
    const len = this.cLen;
    const base = p - this.cOff;
    let acc = 0;
    let acc2 = 0;
    for (let k = 0; k < len; k++) {
      acc += cq[k]! * hq[base - k]!;
      acc2 += ci[k]! * hi[base - k]!;
    }
    return acc + acc2;
  }

  /**
   * Runs one chunk (n ≤ RUNTIME_CHUNK) of network output `iIn`, `qIn` (indices 0…n−1) through the
   * trims into `outI[o…]`, `outQ[o…]`. Used by the generator; allocation-free. The input must already
   * be sanitised (finite, within ±{@link INPUT_LIMIT}: see {@link sanitiseInput}); the output is
   * guarded. Method: DESIGN.md §4.
   * @param iIn network I output, full-scale units.
   * @param qIn network Q output, full-scale units.
   * @param n number of samples, a whole number 0…RUNTIME_CHUNK.
   * @param outI I output, full-scale units; indices o…o+n−1 are written.
   * @param outQ Q output, full-scale units; indices o…o+n−1 are written.
   * @param o offset into `outI` and `outQ`, samples.
   * @throws never (hot path: `n`, `o` and the lengths are not checked; out-of-range values give
   *   unspecified output, never an exception).
   */
  processChunk(
    iIn: Float64Array,
    qIn: Float64Array,
    n: number,
    outI: Float32Array,
    outQ: Float32Array,
    o: number,
  ): void {
    const hI = this.hI;
    const hQ = this.hQ;
    const hC = this.hC;
    const keep = this.keep;
    let wp = this.wp;
    if (wp + n > hI.length) {
      hI.copyWithin(0, wp - keep, wp);
      hQ.copyWithin(0, wp - keep, wp);
      // (empty without room for a correction; without one set, unread until a backfill rewrites it)
      hC.copyWithin(0, wp - keep, wp);
      wp = keep;
    }
    const ramped = this.rampPos < this.rampLen;
    const cur = this.cur;
    const stats = this.stats;
    if (!ramped && this.cLen === 0 && this.steadyFrac === 0) {
      // The common case (steady trims, no correction, whole-sample skew) in one pass: step 1 into
      // the histories, then the delayed reads, DC and the guard. Every loop over a chunk costs
      // about a nanosecond per sample in V8 on its own, so this pass replaces two. The reads
      // reach back ioff ≥ 0 and sBase ≥ 0 samples, never past the sample just written, and give
      // exactly what the general path below gives.
      const a = cur[0]!;
      const b = cur[1]!;
      const di = cur[3]!;
      const dq = cur[4]!;
      const ioff = this.kc + this.bulk;
      const sBase = this.kc + this.steadyInt;
      steadyPass(hI, hQ, iIn, qIn, n, wp, a, b, di, dq, ioff, sBase, outI, outQ, o, stats);
      this.wp = wp + n;
      stats.samplesOut += 2 * n;
      return;
    }
    // Step 1: sideband, gain and phase, written straight into the histories (with the ramp).
    if (!ramped) {
      const a = cur[0]!;
      const b = cur[1]!;
      for (let j = 0; j < n; j++) {
        const vi = iIn[j]!;
        hI[wp + j] = vi;
        hQ[wp + j] = a * qIn[j]! + b * vi;
      }
    } else {
      const st = this.start;
      const tg = this.tgt;
      const len = this.rampLen;
      let pos = this.rampPos;
      let a = cur[0]!;
      let b = cur[1]!;
      let sk = cur[2]!;
      let di = cur[3]!;
      let dq = cur[4]!;
      for (let j = 0; j < n; j++) {
        if (pos < len) {
          pos++;
          if (pos === len) {
            a = tg[0]!;
            b = tg[1]!;
            sk = tg[2]!;
            di = tg[3]!;
            dq = tg[4]!;
          } else {
            const r = pos / len;
            a = st[0]! + (tg[0]! - st[0]!) * r;
            b = st[1]! + (tg[1]! - st[1]!) * r;
            sk = st[2]! + (tg[2]! - st[2]!) * r;
            di = st[3]! + (tg[3]! - st[3]!) * r;
            dq = st[4]! + (tg[4]! - st[4]!) * r;
          }
        }
        this.rSkew[j] = sk;
        this.rDcI[j] = di;
        this.rDcQ[j] = dq;
        const vi = iIn[j]!;
        hI[wp + j] = vi;
        hQ[wp + j] = a * qIn[j]! + b * vi;
      }
      cur[0] = a;
      cur[1] = b;
      cur[2] = sk;
      cur[3] = di;
      cur[4] = dq;
      this.rampPos = pos;
      if (pos >= len) {
        this.rampPos = 0;
        this.rampLen = 0;
        this.updateSteadySkew();
      }
    }

    // Step 1b: the correction's output history (Qc[p] aligned with I'[p − kc]).
    const corrected = this.cLen > 0;
    if (corrected) {
      if (this.cBackfill) {
        for (let p = wp - (keep - 2 * this.kc) + 1; p < wp; p++) hC[p] = this.correctedAt(p);
        this.cBackfill = false;
      }
      for (let j = 0; j < n; j++) hC[wp + j] = this.correctedAt(wp + j);
    }
    // Q is read from the corrected history, or from Q' with the correction's delay kc.
    const qh = corrected ? hC : hQ;
    const qoff = corrected ? 0 : this.kc;
    const ioff = this.kc + this.bulk;

    // Step 2 (skew) and step 3 (DC), then the output guard.
    let peak = stats.peak;
    const bulk = this.bulk;
    const sFrac = this.steadyFrac;
    const sBase = qoff + this.steadyInt;
    if (!ramped && sFrac === 0) {
      // Steady trims, whole-sample skew: pure delays, DC, guard.
      const di = cur[3]!;
      const dq = cur[4]!;
      for (let j = 0; j < n; j++) {
        const p = wp + j;
        let vi = hI[p - ioff]! + di;
        let vq = qh[p - sBase]! + dq;
        const ai = Math.abs(vi);
        const aq = Math.abs(vq);
        if (!(ai >= OUTPUT_FLUSH && ai <= 1)) vi = guard(vi, stats);
        if (!(aq >= OUTPUT_FLUSH && aq <= 1)) vq = guard(vq, stats);
        if (ai > peak) peak = Math.min(ai, OUTPUT_LIMIT);
        if (aq > peak) peak = Math.min(aq, OUTPUT_LIMIT);
        outI[o + j] = vi;
        outQ[o + j] = vq;
      }
    } else {
      const sTaps = this.steadyTaps;
      const rTaps = this.rampTaps;
      for (let j = 0; j < n; j++) {
        const p = wp + j;
        let qd: number;
        let di: number;
        let dq: number;
        if (!ramped) {
          di = cur[3]!;
          dq = cur[4]!;
          qd = fractional(sTaps, qh, p - sBase + FD_HALF);
        } else {
          di = this.rDcI[j]!;
          dq = this.rDcQ[j]!;
          if (bulk === 0) qd = qh[p - qoff]!;
          else {
            const t = bulk + this.rSkew[j]!;
            const ti = Math.floor(t);
            const frac = t - ti;
            if (frac === 0) qd = qh[p - qoff - ti]!;
            else {
              fractionalDelayTaps(frac, rTaps);
              qd = fractional(rTaps, qh, p - qoff - ti + FD_HALF);
            }
          }
        }
        let vi = hI[p - ioff]! + di;
        let vq = qd + dq;
        const ai = Math.abs(vi);
        const aq = Math.abs(vq);
        if (!(ai >= OUTPUT_FLUSH && ai <= 1)) vi = guard(vi, stats);
        if (!(aq >= OUTPUT_FLUSH && aq <= 1)) vq = guard(vq, stats);
        if (ai > peak) peak = Math.min(ai, OUTPUT_LIMIT);
        if (aq > peak) peak = Math.min(aq, OUTPUT_LIMIT);
        outI[o + j] = vi;
        outQ[o + j] = vq;
      }
    }
    this.wp = wp + n;
    stats.peak = peak;
    stats.samplesOut += 2 * n;
  }
}

/**
 * The steady pass (steady trims, no correction, whole-sample skew) as a small function of its own,
 * which V8 optimises better than the same loop inside the large `processChunk`: step 1 into the
 * histories, the delayed reads, DC and the guard. The peak is clamped to OUTPUT_LIMIT once after
 * the loop (the min of a max is the max of the mins), and the guard is entered only when a sample
 * needs it: the same output and counts as the general path.
 */
function steadyPass(
  hI: Float64Array,
  hQ: Float64Array,
  iIn: Float64Array,
  qIn: Float64Array,
  n: number,
  wp: number,
  a: number,
  b: number,
  di: number,
  dq: number,
  ioff: number,
  sBase: number,
  outI: Float32Array,
  outQ: Float32Array,
  o: number,
  stats: GeneratorStats,
): void {
  let peak = stats.peak;
  for (let j = 0; j < n; j++) {
    const p = wp + j;
    const ii = iIn[j]!;
    hI[p] = ii;
    hQ[p] = a * qIn[j]! + b * ii;
    let vi = hI[p - ioff]! + di;
    let vq = hQ[p - sBase]! + dq;
    const ai = Math.abs(vi);
    const aq = Math.abs(vq);
    const m = ai > aq ? ai : aq;
    if (m > peak) peak = m;
    if (!(ai >= OUTPUT_FLUSH && aq >= OUTPUT_FLUSH && m <= 1)) {
      if (!(ai >= OUTPUT_FLUSH && ai <= 1)) vi = guard(vi, stats);
      if (!(aq >= OUTPUT_FLUSH && aq <= 1)) vq = guard(vq, stats);
    }
    outI[o + j] = vi;
    outQ[o + j] = vq;
  }
  stats.peak = Math.min(peak, OUTPUT_LIMIT);
}

/**
 * The rare output cases: below OUTPUT_FLUSH → 0 (no subnormal floats); above full scale → counted;
 * beyond OUTPUT_LIMIT (or NaN, which cannot arise from finite input) → limited.
 */
function guard(v: number, stats: GeneratorStats): number {
  const a = Math.abs(v);
  if (a < OUTPUT_FLUSH) return 0;
  stats.overFullScale++;
  if (a <= OUTPUT_LIMIT) return v;
  return v > 0 ? OUTPUT_LIMIT : v < 0 ? -OUTPUT_LIMIT : 0;
}

/** `Σ_k taps[k]·h[base − k]` over the interpolator's taps (two accumulators, fixed order). */
function fractional(taps: Float64Array, h: Float64Array, base: number): number {
  let acc = 0;
  let acc2 = 0;
  for (let k = 0; k < FD_TAPS; k += 2) {
    acc += taps[k]! * h[base - k]!;
    acc2 += taps[k + 1]! * h[base - k - 1]!;
  }
  return acc + acc2;
}
