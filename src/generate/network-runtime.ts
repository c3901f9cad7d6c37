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
   * Output depends only on the samples so far, never on how they were split into calls. The network
   * is linear, so the outputs are in the units of the input (full-scale units in this library). Method:
   * the branch filters of DESIGN.md §3 — kind 'fir': I a pure delay of (N−1)/2 samples, Q the type III
   * FIR folded on its antisymmetry (Reilly, Frazer & Boashash, IEEE Trans. SP 42:3241, 1994); kind
   * 'allpass': each branch a delay and a cascade of first/second-order all-pass sections.
   * Allocation-free.
   * @param x input samples (indices 0…n−1 are read).
   * @param n number of samples, a whole number 0…{@link RUNTIME_CHUNK}.
   * @param outI I output (branch i), at least `n` long; indices 0…n−1 are written.
   * @param outQ Q output (branch q, lagging I by 90° in the band), at least `n` long.
   * @throws never (hot path: `n` and the array lengths are not checked; a larger `n` or shorter
   *   arrays give unspecified output, so callers split blocks into chunks of at most RUNTIME_CHUNK).
   */
  process(x: Float64Array, n: number, outI: Float64Array, outQ: Float64Array): void;
  /**
   * Clears the state (history, section states, branch delays) to silence.
   * @throws never
   */
  reset(): void;
  /**
   * An independent copy whose future output is bit-identical to this one's (allocates: not for the
   * audio path).
   * @throws never
   */
  clone(): NetworkRuntime;
}
