/**
 * A typed wrapper over fft.js (radix-4, power-of-two sizes). fft.js ships loose typings (`any`
 * everywhere); this file is the only place that touches them. Storage is caller-owned, as fft.js
 * recommends, so repeated transforms allocate nothing.
 */
import FFT from 'fft.js';
import { OrthotoneError } from '../core/errors.js';

/** A planned FFT of one power-of-two size. */
export interface Fft {
  /** Transform size, points (a power of two, at least 4). */
  readonly size: number;
  /**
   * Forward transform of a real frame: `input` has `size` samples; `out` receives the full complex
   * spectrum interleaved (re, im), `2·size` values, bin k at `out[2k], out[2k+1]` (bin k is
   * `k·sampleRate/size` Hz). Unnormalised, `X[k] = Σ x[n]·e^{−j2πkn/N}`: the output is in the input's
   * units times samples (a real tone of amplitude A with window w reads `|X[k]| = A·Σw/2`, Heinzel,
   * Rüdiger & Schilling 2002). Method: fft.js radix-4 `realTransform`, then `completeSpectrum` to
   * fill the upper half by conjugate symmetry (fft.js README). Allocation-free.
   * @param input `size` real samples (not modified).
   * @param out caller-owned, `2·size` values, overwritten; must not be `input`.
   * @throws never (lengths are not checked here: callers allocate from `size`; wrong lengths give
   *   unspecified output, never an exception from this wrapper).
   */
  realForward(input: Float64Array, out: Float64Array): void;
  /**
   * Forward transform of a complex frame, both interleaved (re, im) with `2·size` values.
   * Sign convention: `X[k] = Σ x[n]·e^{−j2πkn/N}`, unnormalised (input units times samples; a
   * complex tone `A·e^{jωn}` reads `|X[k]| = A·Σw`). Method: fft.js radix-4 `transform` (fft.js
   * README). Allocation-free.
   * @param input `size` complex samples, interleaved (re, im), `2·size` values (not modified).
   * @param out caller-owned, `2·size` values, overwritten; must not be `input`.
   * @throws never (lengths are not checked here, as for `realForward`).
   */
  complexForward(input: Float64Array, out: Float64Array): void;
}

interface FftJs {
  realTransform(out: Float64Array, data: Float64Array): void;
  completeSpectrum(out: Float64Array): void;
  transform(out: Float64Array, data: Float64Array): void;
}

/**
 * True when `n` is a power of two (an integer 1, 2, 4, …).
 * @throws never
 */
export function isPowerOfTwo(n: number): boolean {
  return Number.isInteger(n) && n > 0 && (n & (n - 1)) === 0;
}

/**
 * Smallest power of two ≥ `n` (n ≥ 1; 1 for n ≤ 1). `n` must be finite (not checked: +Infinity
 * never returns).
 * @throws never
 */
export function nextPowerOfTwo(n: number): number {
  let p = 1;
  while (p < n) p *= 2;
  return p;
}

/**
 * Plans an FFT of `size` points using fft.js (F. Indutny, MIT licence).
 * @param size a power of two from 4 to 2^24.
 * @throws {OrthotoneError} INVALID_ARGUMENT when `size` is not such a power of two.
 * Reference: fft.js README (`realTransform`, `completeSpectrum`, `transform`).
 */
export function createFft(size: number): Fft {
  if (!isPowerOfTwo(size) || size < 4 || size > 1 << 24) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `FFT size ${size} must be a power of two from 4 to ${1 << 24}: use ${nextPowerOfTwo(Math.max(4, size | 0))}`,
      size,
    );
  }
  const f = new FFT(size) as unknown as FftJs;
  return {
    size,
    realForward(input, out) {
      f.realTransform(out, input);
      f.completeSpectrum(out);
    },
    complexForward(input, out) {
      f.transform(out, input);
    },
  };
}
