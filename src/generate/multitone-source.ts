/**
 * The multi-tone test signal: K equal tones with low-peak-factor starting phases, summed. The
 * across-the-band calibration reads it (calibrate/multitone.ts), the worklet plays it
 * (webaudio/test-source.ts) and `render --tones` writes it to a file: one source for all three.
 */
import { OrthotoneError } from '../core/errors.js';
import { createSignalSource, type SignalSource } from './sources.js';

/** Most tones in a multi-tone source. */
export const MAX_MULTITONE_TONES = 32;

/**
 * Starting phase of tone k (0-based) of K, radians: Schroeder's low-peak-factor phases
 * `φ_k = −π·k²/K` (M. R. Schroeder, "Synthesis of low-peak-factor signals and binary sequences
 * with low autocorrelation", IEEE Trans. Inf. Theory 16(1):85–89, 1970; from memory). They keep
 * the start of the signal, and tones on a harmonic grid throughout, well below the sum of the
 * amplitudes; tones off such a grid still come near it at times, which the 1/K levels allow for.
 * @param k tone index, 0-based.
 * @param count number of tones K.
 * @returns phase in radians.
 * @throws never
 */
export function multitonePhaseRad(k: number, count: number): number {
  return (-Math.PI * k * k) / count;
}

/** A block source of K summed tones (see {@link createMultitoneSource}). */
export interface MultitoneSource {
  /** The tone frequencies, Hz, in the order given. */
  readonly frequenciesHz: readonly number[];
  /** Sample rate, Hz. */
  readonly sampleRate: number;
  /** Each tone's peak level, dBFS (AES17): `levelDbfs − 20·log10(K)`. */
  readonly toneDbfs: number;
  /**
   * Writes the next `out.length` samples (full-scale units) and advances by that many; the output
   * does not depend on the block partitioning. Allocation-free once a block of this length has
   * been seen (the scratch block grows only for a longer block than any before).
   * @param out caller-owned buffer, overwritten in full.
   * @throws never
   */
  fill(out: Float32Array): void;
  /**
   * Back to sample 0.
   * @throws never
   */
  reset(): void;
}

/**
 * K equal tones, each of peak `10^(levelDbfs/20)/K` (so the sum never exceeds the peak of a
 * `levelDbfs` sine), with Schroeder phases ({@link multitonePhaseRad}): the sum of K of
 * generate/'s tone sources.
 * @param frequenciesHz 2 to 32 different frequencies, Hz, each in (0, fs/2).
 * @param sampleRate Hz.
 * @param levelDbfs peak of the sum at most, dBFS (AES17). Default 0.
 * @returns the source.
 * @throws {OrthotoneError} INVALID_ARGUMENT for fewer than 2 or more than 32 tones, a repeated
 *   tone, or a frequency or level generate/ refuses (not in (0, fs/2)).
 * Method: sum of sines with Schroeder phases (Schroeder 1970, see {@link multitonePhaseRad}).
 * @example
 * ```ts
 * import { createMultitoneSource } from 'orthotone';
 *
 * const src = createMultitoneSource([500, 1000, 2000], 48000, -6);
 * const block = new Float32Array(480);
 * src.fill(block); // 10 ms of three tones, each at −6 − 9.54 dBFS
 * ```
 */
export function createMultitoneSource(
  frequenciesHz: readonly number[],
  sampleRate: number,
  levelDbfs = 0,
): MultitoneSource {
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
  const toneDbfs = levelDbfs - 20 * Math.log10(count);
  const tones: SignalSource[] = frequenciesHz.map((f, k) => {
    const phaseDeg = (multitonePhaseRad(k, count) * 180) / Math.PI;
    try {
      return createSignalSource({ kind: 'tone', frequencyHz: f, levelDbfs: toneDbfs, phaseDeg }, sampleRate);
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
    frequenciesHz: [...frequenciesHz],
    sampleRate,
    toneDbfs,
    fill(out) {
      const n = out.length;
      if (scratch.length < n) scratch = new Float32Array(n);
      const s = scratch.subarray(0, n);
      tones[0]!.fill(out);
      for (let k = 1; k < count; k++) {
        tones[k]!.fill(s);
        for (let j = 0; j < n; j++) out[j]! += s[j]!;
      }
    },
    reset() {
      for (const t of tones) t.reset();
    },
  };
}
