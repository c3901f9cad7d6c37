/**
 * The two kinds of capture the measuring functions read: a real signal (receiver audio, one
 * channel) and a complex I/Q capture (an SDR's baseband, or the virtual exciter's output).
 */
import { OrthotoneError } from '../core/errors.js';
/**
 * True when `c` is an {@link IqCapture} (an object with `i` and `q` and no `length`).
 * @throws never
 */
export function isIqCapture(c) {
  return typeof c === 'object' && c !== null && 'i' in c && 'q' in c && !('length' in c);
}
/**
 * Length of a capture in samples, after checking its shape.
 * @throws {OrthotoneError} INVALID_ARGUMENT when it is not an array of samples or an {i, q} pair,
 *   or BUFFER_MISMATCH when i and q differ in length.
 */
export function captureLength(c) {
  if (isIqCapture(c)) {
    if (typeof c.i?.length !== 'number' || typeof c.q?.length !== 'number') {
      throw new OrthotoneError('INVALID_ARGUMENT', 'an I/Q capture needs arrays i and q of samples', c);
    }
    if (c.i.length !== c.q.length) {
      throw new OrthotoneError(
        'BUFFER_MISMATCH',
        `I/Q capture has ${c.i.length} I samples but ${c.q.length} Q samples: pass channels of equal length`,
        [c.i.length, c.q.length],
      );
    }
    return c.i.length;
  }
  if (c === null || typeof c !== 'object' || typeof c.length !== 'number') {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      'a capture must be an array of samples (real) or an object {i, q} of two arrays (complex)',
      c,
    );
  }
  return c.length;
}
