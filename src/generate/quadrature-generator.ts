/**
 * The real-time I/Q generator (DESIGN.md §5): a 90° network (Hilbert FIR or all-pass pair) followed
 * by the trim stage (DESIGN.md §4). Stateful, allocation-free per block, output identical for any
 * block partitioning, safe on long silence, finite output for any finite input.
 *
 * Lifecycle (STYLE.md habit 2): `createQuadratureGenerator` → `process` → `reset` → `clone`.
 */
import { OrthotoneError } from '../core/errors.js';
import type { Correction, Trims } from '../core/trims.js';
import { type Network, validateNetwork } from '../design/network.js';
import { createAllpassRuntime } from './allpass-runtime.js';
import { createFirRuntime } from './fir-runtime.js';
import { type NetworkRuntime, RUNTIME_CHUNK } from './network-runtime.js';
import {
  type GeneratorStats,
  type Sideband,
  sanitiseInput,
  TrimStage,
  type TrimStageOptions,
} from './trim-stage.js';

/** Options of {@link createQuadratureGenerator}; all optional (see `TRIM_STAGE_DEFAULTS`). */
export type QuadratureGeneratorOptions = TrimStageOptions;

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
 * @param options trims, sideband, ramp time, skew and correction capacity (see `TrimStageOptions`).
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
  const trim = new TrimStage(doc.sampleRate, options);
  return new Generator(doc, createNetworkRuntime(doc), trim);
}
