/**
 * The processor's internal test sources: generate/'s signal sources at unit level, with the level
 * applied afterwards by the node's `levelDb` AudioParam (so the level can be automated without
 * restarting the signal).
 */
import { OrthotoneError } from '../core/errors.js';
import { createSignalSource } from '../generate/sources.js';

/** Two equal tones with a peak envelope (PEP) of 0 dBFS: each 6.02 dB below (20·log10(1/2)). */
const HALF_DBFS = 20 * Math.log10(0.5);
/** Most tones in a `multitone` source. */
export const MAX_MULTITONE_TONES = 32;
/**
 * The generate/ spec for a test source at unit level (tone peak 0 dBFS, two-tone PEP 0 dBFS so each
 * tone is −6.02 dBFS, noise RMS 0 dBFS; dBFS per AES17). Frequencies pass through in Hz, durations
 * in seconds; values are checked later, by `createSignalSource`.
 * @throws {OrthotoneError} INVALID_ARGUMENT for a kind other than tone, two-tone, sweep or noise.
 */
export function signalSpecFor(spec) {
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
        `source kind ${JSON.stringify(spec?.kind)} is not recognised: use 'input', 'silence', 'tone', 'two-tone', 'sweep', 'noise' or 'multitone'`,
        spec,
      );
  }
}
/**
 * Creates a test source block by block.
 * @throws {OrthotoneError} INVALID_ARGUMENT for an unknown kind or values createSignalSource refuses.
 */
export function createTestSource(spec, sampleRate) {
  if (spec?.kind === 'multitone') return createMultitoneSource(spec.frequenciesHz, sampleRate);
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
/**
 * Starting phase of tone k (0-based) of K, radians: Schroeder's low-peak-factor phases
 * `φ_k = −π·k²/K` (M. R. Schroeder, "Synthesis of low-peak-factor signals and binary sequences
 * with low autocorrelation", IEEE Trans. Inf. Theory 16(1):85–89, 1970; from memory). They keep
 * the start of the signal, and tones on a harmonic grid throughout, well below the sum of the
 * amplitudes; tones off such a grid still come near it at times, which the 1/K levels allow for.
 * @throws never
 */
export function multitonePhaseRad(k, count) {
  return (-Math.PI * k * k) / count;
}
/**
 * K equal tones, each of peak 1/K (so the sum never exceeds 1), with Schroeder phases: the sum of
 * K of generate/'s tone sources. The scratch block is allocated here and grown only if a longer
 * block than any before arrives (a render quantum is 128 frames), never per block.
 * @throws {OrthotoneError} INVALID_ARGUMENT for fewer than 2 or more than 32 tones, a repeated
 *   tone, or a frequency generate/ refuses (not in (0, fs/2)).
 */
function createMultitoneSource(frequenciesHz, sampleRate) {
  if (
    !Array.isArray(frequenciesHz) ||
    frequenciesHz.length < 2 ||
    frequenciesHz.length > MAX_MULTITONE_TONES
  ) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `a multitone source needs 2 to ${MAX_MULTITONE_TONES} frequencies in Hz; got ${JSON.stringify(frequenciesHz)}`,
      frequenciesHz,
    );
  }
  if (new Set(frequenciesHz).size !== frequenciesHz.length) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `multitone frequencies must differ from each other; got ${JSON.stringify(frequenciesHz)}`,
      frequenciesHz,
    );
  }
  const count = frequenciesHz.length;
  const levelDbfs = -20 * Math.log10(count);
  const tones = frequenciesHz.map((f, k) => {
    const phaseDeg = (multitonePhaseRad(k, count) * 180) / Math.PI;
    try {
      return createSignalSource({ kind: 'tone', frequencyHz: f, levelDbfs, phaseDeg }, sampleRate);
    } catch (e) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        `multitone frequenciesHz[${k}]: ${e instanceof Error ? e.message : String(e)}`,
        f,
      );
    }
  });
  let scratch = new Float32Array(128);
  return {
    fill(out) {
      const n = out.length;
      if (scratch.length < n) scratch = new Float32Array(n);
      const s = scratch.subarray(0, n);
      tones[0].fill(out);
      for (let k = 1; k < count; k++) {
        tones[k].fill(s);
        for (let j = 0; j < n; j++) out[j] += s[j];
      }
    },
    reset() {
      for (const t of tones) t.reset();
    },
  };
}
