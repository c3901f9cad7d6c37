/**
 * A typed wrapper over fft.js (radix-4, power-of-two sizes). fft.js ships loose typings (`any`
 * everywhere); this file is the only place that touches them. Storage is caller-owned, as fft.js
 * recommends, so repeated transforms allocate nothing.
 */
import FFT from 'fft.js';
import { OrthotoneError } from '../core/errors.js';
/**
 * True when `n` is a power of two (an integer 1, 2, 4, …).
 * @throws never
 */
export function isPowerOfTwo(n) {
  return Number.isInteger(n) && n > 0 && (n & (n - 1)) === 0;
}
/**
 * Smallest power of two ≥ `n` (n ≥ 1; 1 for n ≤ 1). `n` must be finite (not checked: +Infinity
 * never returns).
 * @throws never
 */
export function nextPowerOfTwo(n) {
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
export function createFft(size) {
  if (!isPowerOfTwo(size) || size < 4 || size > 1 << 24) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `FFT size ${size} must be a power of two from 4 to ${1 << 24}: use ${nextPowerOfTwo(Math.max(4, size | 0))}`,
      size,
    );
  }
  const f = new FFT(size);
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
