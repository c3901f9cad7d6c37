/**
 * Fault paths on the real audio engine (node-web-audio-api 1.0.9, a general-purpose Web Audio
 * implementation), with the package's built processor module: faults are injected by a test module
 * loaded into the same AudioWorklet scope first (tests/webaudio/support/fault-injector.mjs), so the
 * engine's own scheduling, message ports and `processorerror` events carry them — the stand-in
 * classes of node-factory.test.ts and quadrature-processor.test.ts beside these stay as unit tests.
 */
import { fileURLToPath } from 'node:url';
import { AudioWorkletNode, OfflineAudioContext } from 'node-web-audio-api';
import { beforeAll, describe, expect, it } from 'vitest';
import { isOrthotoneError } from '../../src/core/errors.js';
import type { AudioContextLike, WorkletNodeConstructor } from '../../src/webaudio/audio-types.js';
import { createCaptureNode } from '../../src/webaudio/capture-node.js';
import { createQuadratureNode, type ProcessorFault } from '../../src/webaudio/node.js';
import { buildWorklet } from '../browser/support/worklet-build.js';
import { allpass60 } from './support/networks.js';

const FS = 48000;
const injector = fileURLToPath(new URL('./support/fault-injector.mjs', import.meta.url));
let processorPath = '';

beforeAll(async () => {
  processorPath = await buildWorklet('worklet-faults');
});

async function context(seconds: number): Promise<OfflineAudioContext> {
  const ctx = new OfflineAudioContext({
    numberOfChannels: 2,
    length: Math.round(seconds * FS),
    sampleRate: FS,
  });
  await ctx.audioWorklet.addModule(injector);
  await ctx.audioWorklet.addModule(processorPath);
  return ctx;
}

const tick = (ms: number) => new Promise((r) => setTimeout(r, ms));

describe('fault paths on node-web-audio-api', () => {
  it('an exception inside process() gives one quantum of silence, a fault report and a clean restart', async () => {
    const ctx = await context(0.25);
    const node = await createQuadratureNode(ctx as unknown as AudioContextLike, allpass60(FS), {
      moduleLoaded: true,
      AudioWorkletNode: AudioWorkletNode as unknown as WorkletNodeConstructor,
      source: { kind: 'tone', frequencyHz: 1000 },
      levelDb: -6,
    });
    const faults: ProcessorFault[] = [];
    node.onfault = (f) => faults.push(f);
    (node.node as unknown as AudioNode).connect(ctx.destination as unknown as AudioNode);
    const at = 40 * 128; // a quantum boundary well after the network has filled
    node.node.port.postMessage({ type: 'test-fault', kind: 'generator', atFrame: at });
    const buf = await ctx.startRendering();
    await tick(100); // port messages from the audio thread arrive after the render resolves
    const i = buf.getChannelData(0);
    const q = buf.getChannelData(1);
    // The faulted quantum is silent in both channels; the quanta before and after carry the tone.
    const peak = (x: Float32Array, a: number, b: number) => {
      let m = 0;
      for (let k = a; k < b; k++) m = Math.max(m, Math.abs(x[k]!));
      return m;
    };
    expect(peak(i, at, at + 128)).toBe(0);
    expect(peak(q, at, at + 128)).toBe(0);
    expect(peak(i, at - 128, at)).toBeGreaterThan(0.1);
    expect(peak(i, at + 128 * 20, at + 128 * 21)).toBeGreaterThan(0.1);
    expect(i.every(Number.isFinite) && q.every(Number.isFinite)).toBe(true);
    // One fault report, naming the error and the frame it happened at.
    expect(faults).toHaveLength(1);
    expect(faults[0]!.message).toContain('injected generator fault');
    expect(faults[0]!.faults).toBe(1);
    expect(faults[0]!.frame).toBe(at);
  });

  it('a processor that stops with an error fails the pending capture and every later one', async () => {
    const ctx = await context(0.25);
    const cap = await createCaptureNode(ctx as unknown as AudioContextLike, {
      moduleLoaded: true,
      AudioWorkletNode: AudioWorkletNode as unknown as WorkletNodeConstructor,
      channels: 1,
    });
    (cap.node as unknown as AudioNode).connect(ctx.destination as unknown as AudioNode);
    const errors: string[] = [];
    (
      cap.node as unknown as { addEventListener(t: string, f: (e: { message: string }) => void): void }
    ).addEventListener('processorerror', (e) => errors.push(e.message));
    // A capture far longer than the render: it can only end by the processor's error.
    const pending = cap.capture(FS).then(
      () => 'resolved',
      (e: unknown) => (isOrthotoneError(e, 'MEASUREMENT_FAILED') ? 'MEASUREMENT_FAILED' : String(e)),
    );
    cap.node.port.postMessage({ type: 'test-fault', kind: 'uncaught', atFrame: 10 * 128 });
    await ctx.startRendering();
    await tick(100);
    expect(errors.join()).toMatch(/injected uncaught fault/);
    expect(await pending).toBe('MEASUREMENT_FAILED');
    const later = await cap.capture(128).then(
      () => 'resolved',
      (e: unknown) => (isOrthotoneError(e, 'MEASUREMENT_FAILED') ? 'MEASUREMENT_FAILED' : String(e)),
    );
    expect(later).toBe('MEASUREMENT_FAILED');
  });
});
