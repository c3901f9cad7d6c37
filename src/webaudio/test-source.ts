/**
 * The processor's block sources: the node input, silence, or a test signal. Test signals are
 * generate/'s signal sources (and its multi-tone source) at unit level, with the level applied
 * afterwards by the node's `levelDb` AudioParam (so the level can be automated without restarting
 * the signal).
 */
import { OrthotoneError } from '../core/errors.js';
import { createMultitoneSource } from '../generate/multitone-source.js';
import { createSignalSource, type SignalSpec } from '../generate/sources.js';
import type { SourceSpec } from './messages.js';

/** Two equal tones with a peak envelope (PEP) of 0 dBFS: each 6.02 dB below (20·log10(1/2)). */
const HALF_DBFS = 20 * Math.log10(0.5);

/** Fills a block with the source signal; `input` is the node's first input channel, if connected. */
export interface BlockSource {
  fill(out: Float32Array, input: Float32Array | undefined): void;
  reset(): void;
}

const inputSource: BlockSource = {
  fill(out, input) {
    if (input && input.length === out.length) out.set(input);
    else out.fill(0);
  },
  reset() {},
};

const silence: BlockSource = {
  fill(out) {
    out.fill(0);
  },
  reset() {},
};

/**
 * Creates the source a spec describes. Test sources are unit-level (peak 1 for a tone, PEP 1 for
 * two tones, RMS 1 for noise, sum of peaks 1 for several tones); the processor's `levelDb` sets
 * the level.
 * @throws {OrthotoneError} INVALID_ARGUMENT for an unknown kind or a bad frequency or duration.
 */
export function createBlockSource(spec: SourceSpec, sampleRate: number): BlockSource {
  if (spec?.kind === 'input') return inputSource;
  if (spec?.kind === 'silence') return silence;
  return createTestSource(spec, sampleRate);
}

/**
 * The generate/ spec for a test source at unit level (tone peak 0 dBFS, two-tone PEP 0 dBFS so each
 * tone is −6.02 dBFS, noise RMS 0 dBFS; dBFS per AES17). Frequencies pass through in Hz, durations
 * in seconds; values are checked later, by `createSignalSource`.
 * @throws {OrthotoneError} INVALID_ARGUMENT for a kind other than tone, two-tone, sweep or noise.
 */
export function signalSpecFor(spec: Exclude<SourceSpec, { kind: 'multitone' }>): SignalSpec {
  switch (spec?.kind) {
    case 'tone':
      return { kind: 'tone', frequencyHz: spec.frequencyHz, levelDbfs: 0 };
    case 'two-tone':
      return { kind: 'two-tone', frequenciesHz: spec.frequenciesHz, levelDbfs: HALF_DBFS };
    case 'sweep':
      return {
        kind: 'sweep',
        startHz: spec.startHz,
        endHz: spec.endHz,
        durationSeconds: spec.durationSeconds,
        levelDbfs: 0,
      };
    case 'noise':
      return spec.band
        ? { kind: 'noise', levelDbfs: 0, seed: spec.seed, band: spec.band }
        : { kind: 'noise', levelDbfs: 0, seed: spec.seed };
    default:
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        `source kind ${JSON.stringify((spec as { kind?: unknown })?.kind)} is not recognised: use 'input', 'silence', 'tone', 'two-tone', 'sweep', 'noise' or 'multitone'`,
        spec,
      );
  }
}

/**
 * Creates a test source block by block.
 * @throws {OrthotoneError} INVALID_ARGUMENT for an unknown kind or values createSignalSource refuses.
 */
export function createTestSource(spec: SourceSpec, sampleRate: number): BlockSource {
  if (spec?.kind === 'multitone') {
    const m = createMultitoneSource(spec.frequenciesHz, sampleRate);
    return { fill: (out) => m.fill(out), reset: () => m.reset() };
  }
  const src = createSignalSource(signalSpecFor(spec), sampleRate);
  return {
    fill(out) {
      src.fill(out);
    },
    reset() {
      src.reset();
    },
  };
}
