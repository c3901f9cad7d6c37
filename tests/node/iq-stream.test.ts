import { describe, expect, it } from 'vitest';
import { createQuadratureGenerator } from '../../src/generate/quadrature-generator.js';
import { createIqTransformStream, type IqChunk } from '../../src/node/iq-stream.js';
import { bitDiffs } from '../generate/dft.js';
import { niemitaloNetwork } from '../generate/reference-networks.js';
import { expectOrthotoneError } from '../support/errors.js';

async function collect(chunks: Float32Array[], drain = 0): Promise<IqChunk[]> {
  const gen = createQuadratureGenerator(niemitaloNetwork(false, 48000));
  const ts = createIqTransformStream(gen, { drainSamples: drain });
  const src = new ReadableStream<Float32Array>({
    start(c) {
      for (const ch of chunks) c.enqueue(ch);
      c.close();
    },
  });
  const out: IqChunk[] = [];
  const reader = src.pipeThrough(ts).getReader();
  for (;;) {
    const r = await reader.read();
    if (r.done) break;
    out.push(r.value);
  }
  return out;
}

const join = (cs: Float32Array[]) => {
  const n = cs.reduce((s, c) => s + c.length, 0);
  const o = new Float32Array(n);
  let p = 0;
  for (const c of cs) {
    o.set(c, p);
    p += c.length;
  }
  return o;
};

describe('TransformStream mono → I/Q', () => {
  const x = new Float32Array(10000);
  for (let k = 0; k < x.length; k++) x[k] = 0.5 * Math.cos((2 * Math.PI * 1000 * k) / 48000);
  it('gives the generator output, independent of chunking', async () => {
    const gen = createQuadratureGenerator(niemitaloNetwork(false, 48000));
    const i = new Float32Array(x.length);
    const q = new Float32Array(x.length);
    gen.process(x, i, q);
    const a = await collect([x.subarray(0, 3), x.subarray(3, 4000), x.subarray(4000)]);
    expect(bitDiffs(join(a.map((c) => c.i)), i)).toBe(0);
    expect(bitDiffs(join(a.map((c) => c.q)), q)).toBe(0);
    expect(a.map((c) => c.i.length)).toEqual([3, 3997, 6000]);
  });
  it('drains the tail on close when asked', async () => {
    const a = await collect([x], 500);
    expect(a.length).toBe(2);
    expect(a[1]!.i.length).toBe(500);
    expect(a[1]!.i.some((v) => v !== 0)).toBe(true);
  });
  it('a non-Float32Array chunk errors the stream with a typed error', async () => {
    const e = await collect([[1, 2, 3] as unknown as Float32Array]).catch((x) => x);
    expect(e).toMatchObject({
      code: 'INVALID_ARGUMENT',
      message: 'stream chunks must be Float32Array mono samples',
    });
  });
  it('refuses a drain length that is not a whole number from 0 to 10 000 000, naming the option', () => {
    const gen = createQuadratureGenerator(niemitaloNetwork(false, 48000));
    for (const bad of [-1, 2.5, 10_000_001]) {
      expectOrthotoneError(
        () => createIqTransformStream(gen, { drainSamples: bad }),
        'INVALID_ARGUMENT',
        new RegExp(`^drainSamples ${bad} must be a whole number from 0 to 10000000$`),
      );
    }
  });
});
