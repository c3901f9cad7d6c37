/**
 * A Web Streams `TransformStream` from mono audio chunks to I/Q chunks, running a quadrature
 * generator (Node ≥ 18 and browsers provide `TransformStream` globally; this module lives in
 * src/node only because the streams it usually feeds are files and pipes).
 */
import { OrthotoneError } from '../core/errors.js';
import { requireInteger } from '../core/validate.js';
import type { QuadratureGenerator } from '../generate/quadrature-generator.js';

/** One chunk of generator output. */
export interface IqChunk {
  i: Float32Array;
  q: Float32Array;
}

/** Options of {@link createIqTransformStream}. */
export interface IqStreamOptions {
  /**
   * Zero samples pushed through the generator when the input ends, so the tail still inside the
   * network and trim delays comes out. Default 0 (output length = input length).
   */
  drainSamples: number;
}

/**
 * Creates a TransformStream that turns mono `Float32Array` chunks (any lengths) into `{ i, q }`
 * chunks of the same lengths. Output does not depend on how the input is chunked. Each output chunk
 * is newly allocated (it is handed to the reader); the generator itself allocates nothing.
 * @param gen the generator to run (the stream owns it from now on).
 * @param options `drainSamples` (whole number, 0 to 10 000 000).
 * @throws {OrthotoneError} INVALID_ARGUMENT for a bad option; a chunk that is not a Float32Array
 *   errors the stream with INVALID_ARGUMENT.
 */
export function createIqTransformStream(
  gen: QuadratureGenerator,
  options: Partial<IqStreamOptions> = {},
): TransformStream<Float32Array, IqChunk> {
  const drain = requireInteger('drainSamples', options.drainSamples ?? 0, 0, 10_000_000);
  return new TransformStream<Float32Array, IqChunk>({
    transform(chunk, controller) {
      if (!(chunk instanceof Float32Array)) {
        controller.error(
          new OrthotoneError('INVALID_ARGUMENT', 'stream chunks must be Float32Array mono samples', chunk),
        );
        return;
      }
      const i = new Float32Array(chunk.length);
      const q = new Float32Array(chunk.length);
      gen.process(chunk, i, q);
      controller.enqueue({ i, q });
    },
    flush(controller) {
      if (drain === 0) return;
      const zeros = new Float32Array(drain);
      const i = new Float32Array(drain);
      const q = new Float32Array(drain);
      gen.process(zeros, i, q);
      controller.enqueue({ i, q });
    },
  });
}
