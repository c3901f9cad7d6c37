/**
 * The typed message protocol between {@link createQuadratureNode} (main thread) and the AudioWorklet
 * processor (audio thread), and the names and ranges of the processor's AudioParams.
 * Shared by both sides so the two cannot drift apart. No DOM or Node APIs.
 */
import type { Correction, Trims } from '../core/trims.js';
import { TRIM_LIMITS } from '../core/trims.js';
import type { Network } from '../design/network.js';
import type { Sideband } from '../generate/trim-stage.js';

/** Name under which the quadrature generator processor is registered. */
export const QUADRATURE_PROCESSOR_NAME = 'orthotone-quadrature';
/** Name under which the capture (recorder) processor is registered. */
export const CAPTURE_PROCESSOR_NAME = 'orthotone-capture';

/**
 * What feeds the 90° network: the node's own input (any source node connected to it), or one of the
 * internal test sources. Levels come from the `levelDb` AudioParam, not from the spec.
 */
export type SourceSpec =
  | { kind: 'input' }
  | { kind: 'silence' }
  /** One tone at `frequencyHz`; its peak is `levelDb` dBFS. */
  | { kind: 'tone'; frequencyHz: number }
  /** Two equal tones; their peak envelope (PEP) is `levelDb` dBFS, each tone 6.02 dB below. */
  | { kind: 'two-tone'; frequenciesHz: [number, number] }
  /** A logarithmic sweep from `startHz` to `endHz` over `durationSeconds`, repeating. */
  | { kind: 'sweep'; startHz: number; endHz: number; durationSeconds: number }
  /** Seeded noise, white or band-limited to `band` (Hz); `levelDb` is its RMS in dBFS (AES17). */
  | { kind: 'noise'; seed: number; band?: [number, number] }
  /**
   * 2–32 equal tones (e.g. spread across the band, for multi-tone calibration): each tone's peak is
   * `levelDb − 20·log10(K)` dBFS, so the sum never exceeds `levelDb`. Starting phases are spread
   * (Schroeder); for tones off a common harmonic grid the sum still comes near the bound at times.
   */
  | { kind: 'multitone'; frequenciesHz: number[] };

/** The AudioParams of the quadrature node, all k-rate (one value per 128-frame quantum). */
export const QUADRATURE_PARAMS = Object.freeze([
  { name: 'gainDb', defaultValue: 0, minValue: -TRIM_LIMITS.gainDb, maxValue: TRIM_LIMITS.gainDb },
  { name: 'phaseDeg', defaultValue: 0, minValue: -TRIM_LIMITS.phaseDeg, maxValue: TRIM_LIMITS.phaseDeg },
  {
    name: 'skewSamples',
    defaultValue: 0,
    minValue: -TRIM_LIMITS.skewSamples,
    maxValue: TRIM_LIMITS.skewSamples,
  },
  { name: 'dcI', defaultValue: 0, minValue: -TRIM_LIMITS.dc, maxValue: TRIM_LIMITS.dc },
  { name: 'dcQ', defaultValue: 0, minValue: -TRIM_LIMITS.dc, maxValue: TRIM_LIMITS.dc },
  /** Source level, dB: gain on the node input, or the test source level in dBFS. */
  { name: 'levelDb', defaultValue: -6, minValue: -140, maxValue: 24 },
] as const);

/** Names of the node's AudioParams. */
export type QuadratureParamName = (typeof QUADRATURE_PARAMS)[number]['name'];

/** The trim names, in the order of {@link Trims}. */
export const TRIM_NAMES: readonly (keyof Trims)[] = Object.freeze([
  'gainDb',
  'phaseDeg',
  'skewSamples',
  'dcI',
  'dcQ',
]);

/** Options the node passes to the processor at construction (`processorOptions`). */
export interface QuadratureProcessorOptions {
  network: Network;
  sideband: Sideband;
  correction: Correction | null;
  source: SourceSpec;
  /** Cross-fade length used when a network, correction, sideband or source is swapped, samples. */
  crossfadeSamples: number;
}

/** Messages the main thread sends to the processor. Every one is acknowledged or rejected by `id`. */
export type ToProcessor =
  | { type: 'network'; id: number; network: Network }
  | { type: 'correction'; id: number; correction: Correction | null }
  | { type: 'source'; id: number; source: SourceSpec }
  | { type: 'sideband'; id: number; sideband: Sideband }
  | { type: 'reset'; id: number }
  | { type: 'stats'; id: number }
  | { type: 'stop'; id: number };

/** Counters kept by the processor. */
export interface ProcessorStats {
  /** Render quanta processed. */
  blocks: number;
  /** Frames processed. */
  frames: number;
  /** Times `process()` caught an exception and output silence instead. */
  faults: number;
  /** The message of the last fault, or ''. */
  lastFault: string;
  /** Networks, corrections, sidebands and sources swapped in. */
  swaps: number;
  /** From the running generator: largest output magnitude, full-scale units (1.0 = 0 dBFS). */
  peak: number;
  /** From the running generator: output samples beyond full scale (I and Q counted separately). */
  overFullScale: number;
  /** From the running generator: non-finite input samples replaced by 0. */
  nonFiniteInputs: number;
}

/** Messages the processor sends back. */
export type FromProcessor =
  /** The request took effect at the start of the quantum beginning at `frame`. */
  | { type: 'ack'; id: number; request: ToProcessor['type']; frame: number }
  /** The request was refused; the processor kept running as before. */
  | { type: 'rejected'; id: number; request: ToProcessor['type']; code: string; message: string }
  | { type: 'stats'; id: number; stats: ProcessorStats }
  /** process() caught an exception (first one, then every 1000th); the quantum was output as silence. */
  | { type: 'fault'; message: string; faults: number; frame: number };

/** Capture processor requests: record `frames` frames of the input, after skipping `skipFrames`. */
export interface CaptureRequest {
  type: 'capture';
  id: number;
  frames: number;
  skipFrames: number;
}

/** Capture processor reply: one Float32Array per input channel (transferred). */
export interface CaptureReply {
  type: 'captured';
  id: number;
  /** Context frame at which the first captured sample was rendered. */
  startFrame: number;
  channels: Float32Array[];
}
