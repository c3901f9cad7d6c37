/**
 * The contract shared by the two network runtimes (Hilbert FIR and all-pass pair): a stateful
 * processor that turns a chunk of mono samples into the I and Q branch outputs, in double precision,
 * without allocating. Kernels here know nothing of Web Audio or Node (STYLE.md habit 8).
 */

/** Largest chunk a runtime's `process` accepts, samples. Callers split longer blocks. */
export const RUNTIME_CHUNK = 128;

/** A running 90° network (one of {@link createFirRuntime} or {@link createAllpassRuntime}). */
export interface NetworkRuntime {
  /** Which network kind this runs. */
  readonly kind: 'fir' | 'allpass';
  /** Multiplies per input sample actually executed by the kernel (both branches). */
  readonly multipliesPerSample: number;
  /**
   * Processes `n` samples (n ≤ {@link RUNTIME_CHUNK}) of `x` into `outI` and `outQ` (indices 0…n−1).
   * Output depends only on the samples so far, never on how they were split into calls.
   */
  process(x: Float64Array, n: number, outI: Float64Array, outQ: Float64Array): void;
  /** Clears the state to silence. */
  reset(): void;
  /** An independent copy whose future output is bit-identical to this one's. */
  clone(): NetworkRuntime;
}
