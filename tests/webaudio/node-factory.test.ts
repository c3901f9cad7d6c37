/** createQuadratureNode / createTrimReader validation: every bad input is refused up front. */
import { describe, expect, it } from 'vitest';
import { isOrthotoneError } from '../../src/core/errors.js';
import { designNetwork } from '../../src/design/design-network.js';
import { createQuadratureNode } from '../../src/webaudio/node.js';
import { createTrimReader } from '../../src/webaudio/trim-reader.js';

const net = designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'allpass', targetDb: 60 });
const ctx = { sampleRate: 48000, currentTime: 0, audioWorklet: { addModule: async () => {} } };

async function code(p: Promise<unknown>): Promise<string> {
  try {
    await p;
    return 'resolved';
  } catch (e) {
    return isOrthotoneError(e) ? e.code : `other: ${String(e)}`;
  }
}

describe('createQuadratureNode validation', () => {
  it('refuses a network for another sample rate, naming both rates', async () => {
    const other = designNetwork({ sampleRate: 44100, band: [300, 3000], method: 'allpass', targetDb: 40 });
    await expect(createQuadratureNode(ctx, other, { moduleUrl: 'x.js' })).rejects.toThrow(
      /44100 Hz.*48000 Hz/,
    );
  });
  it('refuses bad documents, trims, level, sideband and sources', async () => {
    expect(await code(createQuadratureNode(ctx, { ...net, kind: 'iir' } as never, { moduleUrl: 'x' }))).toBe(
      'INVALID_DOCUMENT',
    );
    expect(await code(createQuadratureNode(ctx, net, { moduleUrl: 'x', trims: { phaseDeg: 90 } }))).toBe(
      'INVALID_ARGUMENT',
    );
    expect(await code(createQuadratureNode(ctx, net, { moduleUrl: 'x', levelDb: Number.NaN }))).toBe(
      'INVALID_ARGUMENT',
    );
    expect(await code(createQuadratureNode(ctx, net, { moduleUrl: 'x', sideband: 'both' as never }))).toBe(
      'INVALID_ARGUMENT',
    );
    expect(
      await code(
        createQuadratureNode(ctx, net, { moduleUrl: 'x', source: { kind: 'tone', frequencyHz: 30000 } }),
      ),
    ).toBe('INVALID_ARGUMENT');
  });
  it('asks for AudioWorkletNode when the context is not native, and for moduleUrl', async () => {
    await expect(createQuadratureNode(ctx, net, { moduleUrl: 'x' })).rejects.toThrow(
      /options\.AudioWorkletNode/,
    );
    const Fake = class {} as never;
    await expect(createQuadratureNode(ctx, net, { AudioWorkletNode: Fake })).rejects.toThrow(/moduleUrl/);
  });
});

describe('createTrimReader validation', () => {
  const node = { sampleRate: 48000, setTrims: () => {} };
  const capture = { capture: async () => ({ startFrame: 0, channels: [new Float32Array(10)] }) };
  it('refuses a settle time shorter than the ramp', () => {
    expect(() =>
      createTrimReader({ node, capture, read: () => 0, rampSeconds: 0.1, settleSeconds: 0.05 }),
    ).toThrow(/settleSeconds/);
  });
  it('turns a failing or non-finite read into MEASUREMENT_FAILED, and honours abort', async () => {
    const bad = createTrimReader({ node, capture, read: () => Number.NaN });
    expect(await code(bad({}))).toBe('MEASUREMENT_FAILED');
    const throwing = createTrimReader({
      node,
      capture,
      read: () => {
        throw new Error('no tone');
      },
    });
    expect(await code(throwing({}))).toBe('MEASUREMENT_FAILED');
    const ac = new AbortController();
    ac.abort();
    const aborted = createTrimReader({ node, capture, read: () => 0, signal: ac.signal });
    expect(await code(aborted({}))).toBe('ABORTED');
  });
  it('sets the trims, then captures after the settle frames, and returns what read gives', async () => {
    const calls: string[] = [];
    const r = createTrimReader<{ a: number }>({
      node: { sampleRate: 48000, setTrims: (t) => calls.push(`trims ${JSON.stringify(t)}`) },
      capture: {
        capture: async (frames, o) => {
          calls.push(`capture ${frames} after ${o?.skipFrames}`);
          return { startFrame: 0, channels: [new Float32Array(frames)] };
        },
      },
      read: (c) => ({ a: c.channels[0]!.length }),
      settleSeconds: 0.1,
      captureSeconds: 0.05,
    });
    expect(await r({ gainDb: 0.1 })).toEqual({ a: 2400 });
    expect(calls).toEqual(['trims {"gainDb":0.1}', 'capture 2400 after 4800']);
  });
});

describe('createCaptureNode', () => {
  /** A stand-in AudioWorkletNode whose processor never answers, so only errors settle captures. */
  class SilentWorkletNode {
    onprocessorerror: ((ev: Event) => void) | null = null;
    readonly posted: unknown[] = [];
    readonly port = {
      onmessage: null as ((ev: MessageEvent) => void) | null,
      postMessage: (m: unknown) => this.posted.push(m),
    };
    connect() {}
    disconnect() {}
  }

  it('fails pending and later captures when the processor stops with an error, instead of hanging', async () => {
    const { createCaptureNode } = await import('../../src/webaudio/capture-node.js');
    const cap = await createCaptureNode<SilentWorkletNode & never>(ctx, {
      moduleLoaded: true,
      AudioWorkletNode: SilentWorkletNode as never,
    });
    const pending = code(cap.capture(128));
    (cap.node as unknown as SilentWorkletNode).onprocessorerror?.(new Event('processorerror'));
    expect(await pending).toBe('MEASUREMENT_FAILED');
    expect(await code(cap.capture(128))).toBe('MEASUREMENT_FAILED');
    cap.dispose();
    expect(await code(cap.capture(128))).toBe('INVALID_ARGUMENT');
  });
});
