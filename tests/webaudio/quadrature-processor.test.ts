/**
 * The processor shell in Node with a stand-in AudioWorkletProcessor base: process() never throws
 * (a caught exception gives silence, a counter and one fault message), typed replies to messages,
 * swaps at a quantum boundary, and block-length independence (reads the length from the arrays).
 */
import { describe, expect, it } from 'vitest';
import { designNetwork } from '../../src/design/design-network.js';
import type { FromProcessor } from '../../src/webaudio/messages.js';
import { crossfade, defineQuadratureProcessor } from '../../src/webaudio/quadrature-processor.js';

const FS = 48000;
const net = designNetwork({ sampleRate: FS, band: [300, 3000], method: 'allpass', targetDb: 60 });

class FakeBase {
  readonly sent: FromProcessor[] = [];
  readonly port = {
    onmessage: null as ((ev: { data: unknown }) => void) | null,
    postMessage: (m: unknown) => {
      this.sent.push(m as FromProcessor);
    },
  };
}

function make(frame = { n: 0 }) {
  const P = defineQuadratureProcessor(FakeBase, { sampleRate: FS, currentFrame: () => frame.n });
  return new P({
    processorOptions: {
      network: net,
      sideband: 'upper',
      correction: null,
      source: { kind: 'tone', frequencyHz: 1000 },
      crossfadeSamples: 256,
    },
  });
}

const params = (v: Partial<Record<string, number>> = {}) => ({
  gainDb: new Float32Array([v.gainDb ?? 0]),
  phaseDeg: new Float32Array([v.phaseDeg ?? 0]),
  skewSamples: new Float32Array([0]),
  dcI: new Float32Array([0]),
  dcQ: new Float32Array([0]),
  levelDb: new Float32Array([v.levelDb ?? -6]),
});

describe('quadrature processor shell', () => {
  it('never throws: mismatched output buffers give silence, a counter and one fault message', () => {
    const p = make();
    const outI = new Float32Array(128).fill(9);
    const outQ = new Float32Array(64).fill(9); // a caller bug the generator refuses (BUFFER_MISMATCH)
    expect(() => p.process([[]], [[outI, outQ]], params())).not.toThrow();
    expect(outI.every((x) => x === 0)).toBe(true);
    expect(outQ.every((x) => x === 0)).toBe(true);
    expect(p.stats.faults).toBe(1);
    const faults = p.sent.filter((m) => m.type === 'fault');
    expect(faults).toHaveLength(1);
    // It keeps running afterwards with good buffers.
    const i2 = new Float32Array(128);
    const q2 = new Float32Array(128);
    for (let k = 0; k < 20; k++) expect(p.process([[]], [[i2, q2]], params())).toBe(true);
    expect(i2.some((x) => x !== 0)).toBe(true);
    expect(p.stats.faults).toBe(1);
  });

  it('output does not depend on the quantum length it is given', () => {
    const a = make();
    const b = make();
    const n = 1536;
    const ai = new Float32Array(n);
    const aq = new Float32Array(n);
    const bi = new Float32Array(n);
    const bq = new Float32Array(n);
    for (let o = 0; o < n; o += 128)
      a.process([[]], [[ai.subarray(o, o + 128), aq.subarray(o, o + 128)]], params());
    for (let o = 0; o < n; o += 512)
      b.process([[]], [[bi.subarray(o, o + 512), bq.subarray(o, o + 512)]], params());
    // The level ramps across each quantum from the previous value; with a constant level both agree.
    expect(Array.from(bi)).toEqual(Array.from(ai));
    expect(Array.from(bq)).toEqual(Array.from(aq));
  });

  it('answers messages: a bad network is rejected with its code, a good one acknowledged at the next quantum', () => {
    const frame = { n: 0 };
    const p = make(frame);
    p.handle({ type: 'network', id: 7, network: { ...net, version: 2 } });
    const rej = p.sent.find((m) => m.type === 'rejected');
    expect(rej).toMatchObject({ type: 'rejected', id: 7, request: 'network', code: 'INVALID_DOCUMENT' });
    p.handle({ type: 'network', id: 8, network: net });
    expect(p.sent.some((m) => m.type === 'ack')).toBe(false);
    frame.n = 256;
    p.process([[]], [[new Float32Array(128), new Float32Array(128)]], params());
    expect(p.sent.find((m) => m.type === 'ack')).toEqual({
      type: 'ack',
      id: 8,
      request: 'network',
      frame: 256,
    });
    p.handle({ type: 'bogus', id: 9 });
    expect(p.sent.at(-1)).toMatchObject({ type: 'rejected', id: 9, code: 'INVALID_ARGUMENT' });
    p.handle({ type: 'stats', id: 10 });
    expect(p.sent.at(-1)).toMatchObject({ type: 'stats', id: 10, stats: { blocks: 1, swaps: 1, faults: 0 } });
  });

  it('crossfade goes linearly from the old signal to the new one over the given length', () => {
    const into = new Float32Array(8).fill(1);
    const from = new Float32Array(8).fill(0);
    const left = crossfade(into, from, 4, 4);
    expect(Array.from(into)).toEqual([0.25, 0.5, 0.75, 1, 1, 1, 1, 1]);
    expect(left).toBe(0);
  });
});
