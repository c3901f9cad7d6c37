/**
 * Test harness page (served by Vite from the repository root): renders through the built
 * AudioWorklet processor in an OfflineAudioContext and hands the samples back to the test.
 */
import {
  AudioWorkletNode as SacAudioWorkletNode,
  OfflineAudioContext as SacOfflineAudioContext,
} from 'standardized-audio-context';
import type { Network } from '../../../src/design/network.js';
import type { WorkletNodeConstructor } from '../../../src/webaudio/audio-types.js';
import type { QuadratureNodeOptions, SwapAck } from '../../../src/webaudio/node.js';
import { createQuadratureNode } from '../../../src/webaudio/node.js';

/** One AudioParam event. */
export interface ParamEvent {
  param: 'gainDb' | 'phaseDeg' | 'skewSamples' | 'dcI' | 'dcQ' | 'levelDb';
  kind: 'set' | 'ramp';
  value: number;
  /** Context time, seconds. */
  time: number;
}

export interface RenderRequest {
  processorUrl: string;
  network: Network;
  sampleRate: number;
  seconds: number;
  options: Partial<Omit<QuadratureNodeOptions, 'moduleUrl' | 'AudioWorkletNode'>>;
  events: ParamEvent[];
  /** Feed the node's input from an OscillatorNode at this frequency (source 'input'). */
  oscillatorHz?: number;
  /** Swap in this network at `swapAt` seconds (the context is suspended there). */
  swapNetwork?: Network;
  swapAt?: number;
  /** Build the graph with standardized-audio-context 25.3.77 instead of the native classes. */
  library?: 'native' | 'standardized-audio-context';
}

export interface RenderResult {
  i: Float32Array;
  q: Float32Array;
  acks: SwapAck[];
  stats: unknown;
  renderMs: number;
}

async function render(req: RenderRequest): Promise<RenderResult> {
  const fs = req.sampleRate;
  const length = Math.round(req.seconds * fs);
  const sac = req.library === 'standardized-audio-context';
  const ctx = sac
    ? (new SacOfflineAudioContext({
        numberOfChannels: 2,
        length,
        sampleRate: fs,
      }) as unknown as OfflineAudioContext)
    : new OfflineAudioContext({ numberOfChannels: 2, length, sampleRate: fs });
  const q = await createQuadratureNode(ctx, req.network, {
    ...req.options,
    moduleUrl: req.processorUrl,
    ...(sac ? { AudioWorkletNode: SacAudioWorkletNode as unknown as WorkletNodeConstructor } : {}),
  });
  q.node.connect(ctx.destination as never);
  for (const e of req.events) {
    const p = q.params[e.param];
    if (e.kind === 'set') p.setValueAtTime(e.value, e.time);
    else p.linearRampToValueAtTime(e.value, e.time);
  }
  if (req.oscillatorHz !== undefined) {
    const osc = new OscillatorNode(ctx, { frequency: req.oscillatorHz });
    osc.connect(q.node as unknown as AudioNode);
    osc.start();
  }
  const acks: SwapAck[] = [];
  if (req.swapNetwork && req.swapAt !== undefined) {
    const next = req.swapNetwork;
    ctx.suspend(req.swapAt).then(async () => {
      const ack = q.setNetwork(next);
      // Let the audio thread take the message before rendering goes on.
      await new Promise((r) => setTimeout(r, 50));
      ctx.resume();
      acks.push(await ack);
    });
  }
  const t0 = performance.now();
  const buf = await ctx.startRendering();
  const renderMs = performance.now() - t0;
  const stats = await q.stats().catch((e: Error) => ({ error: e.message }));
  return { i: buf.getChannelData(0).slice(), q: buf.getChannelData(1).slice(), acks, stats, renderMs };
}

declare global {
  interface Window {
    harness: { render: typeof render; ready: boolean };
  }
}
window.harness = { render, ready: true };
