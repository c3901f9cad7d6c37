/**
 * The processor's internal test sources: generate/'s signal sources at unit level, with the level
 * applied afterwards by the node's `levelDb` AudioParam (so the level can be automated without
 * restarting the signal).
 */
import { OrthotoneError } from '../core/errors.js';
import { createSignalSource, type SignalSpec } from '../generate/sources.js';
import type { SourceSpec } from './messages.js';
import type { BlockSource } from './runtime.js';

/** Two equal tones with a peak envelope (PEP) of 0 dBFS: each 6.02 dB below (20·log10(1/2)). */
const HALF_DBFS = 20 * Math.log10(0.5);

/** The generate/ spec for a test source at unit level (tone peak 0 dBFS, two-tone PEP 0 dBFS, noise RMS 0 dBFS). */
export function signalSpecFor(spec: SourceSpec): SignalSpec {
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
        `source kind ${JSON.stringify((spec as { kind?: unknown })?.kind)} is not recognised: use 'input', 'silence', 'tone', 'two-tone', 'sweep' or 'noise'`,
        spec,
      );
  }
}

/**
 * Creates a test source block by block.
 * @throws {OrthotoneError} INVALID_ARGUMENT for an unknown kind or values createSignalSource refuses.
 */
export function createTestSource(spec: SourceSpec, sampleRate: number): BlockSource {
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
