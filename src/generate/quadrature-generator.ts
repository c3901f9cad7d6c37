/**
 * The real-time I/Q generator (DESIGN.md §5): a 90° network (Hilbert FIR or all-pass pair) followed
 * by the trim stage (DESIGN.md §4). Stateful, allocation-free per block, output identical for any
 * block partitioning, safe on long silence, finite output for any finite input.
 *
 * Lifecycle (STYLE.md habit 2): `createQuadratureGenerator` → `process` → `reset` → `clone`.
 */
import { OrthotoneError } from '../core/errors.js';
import { type Correction, type Trims, validateTrims, ZERO_TRIMS } from '../core/trims.js';
import { requireOneOf } from '../core/validate.js';
import { KIT_ARITHMETICS, type KitArithmetic, kitPlan, kitTrimWords } from '../design/kit-arithmetic.js';
import { type Network, validateNetwork } from '../design/network.js';
import { createAllpassRuntime } from './allpass-runtime.js';
import { createFirRuntime } from './fir-runtime.js';
import { KitModel } from './fixed-point.js';
import { type NetworkRuntime, RUNTIME_CHUNK } from './network-runtime.js';
import {
  emptyStats,
  type GeneratorStats,
  type Sideband,
  sanitiseInput,
  TrimStage,
  type TrimStageOptions,
} from './trim-stage.js';

/**
 * Arithmetic a generator runs in: 'double' (the library's runtime, default), or the firmware
 * kit's 'float' (IEEE single), 'q31' or 'q15', modelled bit for bit (see `generate/fixed-point.ts`).
 */
export type GeneratorArithmetic = 'double' | KitArithmetic;

/** Options of {@link createQuadratureGenerator}; all optional (see `TRIM_STAGE_DEFAULTS`). */
export interface QuadratureGeneratorOptions extends TrimStageOptions {
  /**
   * 'double' (default) or a firmware kit arithmetic ('float', 'q31', 'q15'). A kit arithmetic runs
   * exactly what the compiled kit computes: trims and sideband apply at once (the kit has no ramp),
   * there is no frequency-dependent correction, and the skew stage holds |skew| up to
   * `ceil(maxSkewSamples)` whole samples, 0 (no skew stage) unless `maxSkewSamples` is given.
   */
  arithmetic: GeneratorArithmetic;
}

/** A running I/Q generator. */
export interface QuadratureGenerator {
  /** The network it runs. */
  readonly network: Network;
  /** Sample rate, Hz (the network's). */
  readonly sampleRate: number;
  /**
   * Whole-sample delay the trim stage adds to both outputs (correction and skew headroom). The
   * network's own delay comes on top: `(taps−1)/2` samples for an FIR, its group delay
   * (`network.cost.latencySamples`) for an all-pass pair.
   */
  readonly trimLatencySamples: number;
  /** Counters: non-finite inputs replaced, samples over full scale, peak (live object). */
  readonly stats: Readonly<GeneratorStats>;
  /** Current target trims. */
  readonly trims: Readonly<Trims>;
  /** Selected sideband. */
  readonly sideband: Sideband;
  /** Correction in use, or null. */
  readonly correction: Correction | null;
  /** True while a trim or sideband change is ramping. */
  readonly ramping: boolean;
  /**
   * Runs one block: mono `input` in, I and Q out. Any length; `input` may be the same array as
   * `outI` or `outQ`. Non-finite input samples become 0 (counted in `stats`).
   * @throws {OrthotoneError} BUFFER_MISMATCH when the three arrays differ in length (a caller bug,
   *   raised before any sample is processed).
   */
  process(input: Float32Array, outI: Float32Array, outQ: Float32Array): void;
  /**
   * Changes some trims, ramped from the current values over `rampSeconds` (default the generator's).
   * @throws {OrthotoneError} INVALID_ARGUMENT when a trim is NaN or out of range.
   */
  setTrims(t: Partial<Trims>, opts?: { rampSeconds?: number }): void;
  /** Selects the sideband, ramped. @throws {OrthotoneError} INVALID_ARGUMENT for a bad value. */
  setSideband(sideband: Sideband, opts?: { rampSeconds?: number }): void;
  /**
   * Sets (or clears with null) the frequency-dependent correction at the next block boundary.
   * @throws {OrthotoneError} INVALID_ARGUMENT when malformed or longer than `maxCorrectionTaps`.
   */
  setCorrection(c: Correction | null): void;
  /** Zeroes the counters. @throws never */
  resetStats(): void;
  /**
   * Clears all signal state (and the counters), ending ramps at their targets; keeps settings.
   * @throws never
   */
  reset(): void;
  /**
   * An independent copy; its future output is bit-identical to this one's.
   * @throws never
   */
  clone(): QuadratureGenerator;
}

/**
 * Creates the runtime of a network document (no trims).
 * @throws {OrthotoneError} INVALID_DOCUMENT when the document is invalid.
 */
export function createNetworkRuntime(net: Network): NetworkRuntime {
  const doc = validateNetwork(net);
  return doc.kind === 'fir' ? createFirRuntime(doc.taps) : createAllpassRuntime(doc.branches);
}

class Generator implements QuadratureGenerator {
  readonly network: Network;
  readonly sampleRate: number;
  readonly trimLatencySamples: number;
  private readonly rt: NetworkRuntime;
  private readonly trim: TrimStage;
  private readonly x = new Float64Array(RUNTIME_CHUNK);
  private readonly bi = new Float64Array(RUNTIME_CHUNK);
  private readonly bq = new Float64Array(RUNTIME_CHUNK);

  constructor(net: Network, rt: NetworkRuntime, trim: TrimStage) {
    this.network = net;
    this.sampleRate = net.sampleRate;
    this.rt = rt;
    this.trim = trim;
    this.trimLatencySamples = trim.latencySamples;
  }

  get stats(): Readonly<GeneratorStats> {
    return this.trim.stats;
  }
  get trims(): Readonly<Trims> {
    return this.trim.trims;
  }
  get sideband(): Sideband {
    return this.trim.sideband;
  }
  get correction(): Correction | null {
    return this.trim.correction;
  }
  get ramping(): boolean {
    return this.trim.ramping;
  }

  process(input: Float32Array, outI: Float32Array, outQ: Float32Array): void {
    const n = input.length;
    if (outI.length !== n || outQ.length !== n) {
      throw new OrthotoneError(
        'BUFFER_MISMATCH',
        `buffer lengths differ (input ${n}, outI ${outI.length}, outQ ${outQ.length}): pass three arrays of the same length`,
        [n, outI.length, outQ.length],
      );
    }
    const stats = this.trim.stats;
    for (let o = 0; o < n; o += RUNTIME_CHUNK) {
      const m = Math.min(RUNTIME_CHUNK, n - o);
      sanitiseInput(input, o, m, this.x, stats);
      this.rt.process(this.x, m, this.bi, this.bq);
      this.trim.processChunk(this.bi, this.bq, m, outI, outQ, o);
    }
  }

  setTrims(t: Partial<Trims>, opts?: { rampSeconds?: number }): void {
    this.trim.setTrims(t, opts);
  }
  setSideband(sideband: Sideband, opts?: { rampSeconds?: number }): void {
    this.trim.setSideband(sideband, opts);
  }
  setCorrection(c: Correction | null): void {
    this.trim.setCorrection(c);
  }
  resetStats(): void {
    this.trim.resetStats();
  }
  reset(): void {
    this.rt.reset();
    this.trim.reset();
  }
  clone(): QuadratureGenerator {
    return new Generator(this.network, this.rt.clone(), this.trim.clone());
  }
}

/**
 * Creates a real-time I/Q generator for a network document.
 *
 * Sign (DESIGN.md §2): for input `cos(2πft)` in the band, I = cos(2πft + θ), Q = sin(2πft + θ)
 * (Q lags I by 90°; upper sideband); with `sideband: 'lower'` Q is negated.
 *
 * @param net a network document (DESIGN.md §3), validated here.
 * @param options trims, sideband, ramp time, skew and correction capacity (see `TrimStageOptions`),
 *   and `arithmetic`: 'double' (default) or the firmware kit's 'float', 'q31' or 'q15' (bit-exact
 *   with the compiled kit; see {@link QuadratureGeneratorOptions.arithmetic}).
 * @returns the generator; run it at `net.sampleRate`.
 * @throws {OrthotoneError} INVALID_DOCUMENT for an invalid network, INVALID_ARGUMENT for an option
 *   out of range (trims via `validateTrims`).
 * @example
 * ```ts
 * import { createQuadratureGenerator, createSignalSource, designNetwork } from 'orthotone';
 *
 * const net = designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'allpass', targetDb: 60 });
 * const gen = createQuadratureGenerator(net, { trims: { gainDb: 0.1, phaseDeg: -0.5 } });
 * const tone = createSignalSource({ kind: 'tone', frequencyHz: 1000, levelDbfs: -6 }, 48000);
 * const audio = new Float32Array(128);
 * const i = new Float32Array(128);
 * const q = new Float32Array(128);
 * for (let block = 0; block < 10; block++) {
 *   tone.fill(audio);
 *   gen.process(audio, i, q); // I and Q for the exciter's two channels
 * }
 * ```
 */
export function createQuadratureGenerator(
  net: Network,
  options?: Partial<QuadratureGeneratorOptions>,
): QuadratureGenerator {
  const doc = validateNetwork(net);
  const { arithmetic = 'double', ...rest } = options ?? {};
  requireOneOf('arithmetic', arithmetic, ['double', ...KIT_ARITHMETICS] as const);
  if (arithmetic !== 'double') return createKitGenerator(doc, arithmetic, rest);
  const trim = new TrimStage(doc.sampleRate, rest);
  return new Generator(doc, createNetworkRuntime(doc), trim);
}

/** A generator running the firmware kit's arithmetic through its bit-exact model. */
class KitGenerator implements QuadratureGenerator {
  readonly network: Network;
  readonly sampleRate: number;
  readonly trimLatencySamples: number;
  readonly stats = emptyStats();
  readonly correction = null;
  readonly ramping = false;
  private readonly model: KitModel;
  private readonly arithmetic: KitArithmetic;
  private current: Trims;
  private side: Sideband;
  private readonly x = new Float64Array(RUNTIME_CHUNK);
  private readonly bi = new Float64Array(RUNTIME_CHUNK);
  private readonly bq = new Float64Array(RUNTIME_CHUNK);

  constructor(net: Network, arithmetic: KitArithmetic, model: KitModel, trims: Trims, side: Sideband) {
    this.network = net;
    this.sampleRate = net.sampleRate;
    this.arithmetic = arithmetic;
    this.model = model;
    this.current = trims;
    this.side = side;
    this.trimLatencySamples = model.maxSkew > 0 ? model.maxSkew + 1 : 0;
  }
  get trims(): Readonly<Trims> {
    return this.current;
  }
  get sideband(): Sideband {
    return this.side;
  }
  process(input: Float32Array, outI: Float32Array, outQ: Float32Array): void {
    const n = input.length;
    if (outI.length !== n || outQ.length !== n) {
      throw new OrthotoneError(
        'BUFFER_MISMATCH',
        `buffer lengths differ (input ${n}, outI ${outI.length}, outQ ${outQ.length}): pass three arrays of the same length`,
        [n, outI.length, outQ.length],
      );
    }
    const m = this.model;
    const st = this.stats;
    for (let o = 0; o < n; o += RUNTIME_CHUNK) {
      const len = Math.min(RUNTIME_CHUNK, n - o);
      sanitiseInput(input, o, len, this.x, st);
      for (let j = 0; j < len; j++) this.x[j] = m.sampleFromFullScale(this.x[j]!);
      m.processSamples(this.x, this.bi, this.bq, len);
      for (let j = 0; j < len; j++) {
        const vi = m.sampleToFullScale(this.bi[j]!);
        const vq = m.sampleToFullScale(this.bq[j]!);
        outI[o + j] = vi;
        outQ[o + j] = vq;
        const ai = Math.abs(vi);
        const aq = Math.abs(vq);
        if (ai > 1) st.overFullScale++;
        if (aq > 1) st.overFullScale++;
        if (ai > st.peak) st.peak = ai;
        if (aq > st.peak) st.peak = aq;
      }
      st.samplesOut += 2 * len;
    }
  }
  setTrims(t: Partial<Trims>): void {
    validateTrims(t);
    const next = { ...this.current, ...t };
    this.model.setTrimWords(kitTrimWords(next, this.side === 'lower', this.arithmetic, this.model.maxSkew));
    this.current = next;
  }
  setSideband(sideband: Sideband): void {
    requireOneOf('sideband', sideband, ['upper', 'lower'] as const);
    this.side = sideband;
    this.model.setTrimWords({ ...this.model.trimWords, lowerSideband: sideband === 'lower' ? 1 : 0 });
  }
  setCorrection(c: Correction | null): void {
    if (c !== null) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        `the firmware kit's ${this.arithmetic} arithmetic has no frequency-dependent correction: use arithmetic 'double' for a correction`,
        c,
      );
    }
  }
  resetStats(): void {
    Object.assign(this.stats, emptyStats());
  }
  reset(): void {
    this.model.reset();
    this.resetStats();
  }
  clone(): QuadratureGenerator {
    const g = new KitGenerator(this.network, this.arithmetic, this.model.clone(), this.current, this.side);
    Object.assign(g.stats, this.stats);
    return g;
  }
}

function createKitGenerator(
  doc: Network,
  arithmetic: KitArithmetic,
  o: Partial<TrimStageOptions>,
): QuadratureGenerator {
  const maxSkew = o.maxSkewSamples === undefined ? 0 : Math.ceil(o.maxSkewSamples);
  if (!(maxSkew >= 0 && maxSkew <= 16)) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `maxSkewSamples ${String(o.maxSkewSamples)} must be from 0 to 16 samples`,
      o.maxSkewSamples,
    );
  }
  if (o.correction) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `the firmware kit's ${arithmetic} arithmetic has no frequency-dependent correction: use arithmetic 'double' for a correction`,
      o.correction,
    );
  }
  const trims: Trims = { ...ZERO_TRIMS, ...validateTrims(o.trims ?? {}) };
  const side = requireOneOf('sideband', o.sideband ?? 'upper', ['upper', 'lower'] as const);
  const words = kitTrimWords(trims, side === 'lower', arithmetic, maxSkew);
  return new KitGenerator(
    doc,
    arithmetic,
    new KitModel(kitPlan(doc, arithmetic), maxSkew, words),
    trims,
    side,
  );
}
