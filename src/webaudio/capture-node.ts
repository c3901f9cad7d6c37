/**
 * `createCaptureNode`: records exact spans of audio from any source node (receiver audio from
 * getUserMedia, or the generator's I/Q) for measurement on the main thread.
 */
import { OrthotoneError } from '../core/errors.js';
import { requireInteger, withDefaults } from '../core/validate.js';
import type { AudioContextLike, WorkletNodeConstructor, WorkletNodeLike } from './audio-types.js';
import { MAX_CAPTURE_FRAMES } from './capture-processor.js';
import { CAPTURE_PROCESSOR_NAME, type CaptureReply } from './messages.js';
import { loadWorkletModule, workletNodeConstructorFor } from './worklet-module.js';

/** Options of {@link createCaptureNode}. */
export interface CaptureNodeOptions {
  /** URL or path of the built processor module (see QuadratureNodeOptions.moduleUrl). */
  moduleUrl: string | URL | undefined;
  moduleLoaded: boolean;
  /** The AudioWorkletNode constructor matching the context (see QuadratureNodeOptions). */
  AudioWorkletNode: WorkletNodeConstructor | undefined;
  /** Channels recorded (1–8). Mono sources are up-mixed per Web Audio rules. */
  channels: number;
}

const DEFAULTS: Readonly<CaptureNodeOptions> = Object.freeze({
  moduleUrl: undefined,
  moduleLoaded: false,
  AudioWorkletNode: undefined,
  channels: 2,
});

/** A capture: one array per channel, and the context frame of its first sample. */
export interface CaptureResult {
  startFrame: number;
  channels: Float32Array[];
}

/** The capture node. Connect a source into `node`; its output passes the input through. */
export interface CaptureNode<N extends WorkletNodeLike = WorkletNodeLike> {
  readonly node: N;
  /**
   * Records `frames` frames of the node's input, starting after `skipFrames` (default 0) from the
   * next quantum the processor runs. Several captures may run at once. Samples are as the audio
   * graph carries them (full-scale units, 1.0 = the peak of a 0 dBFS sine).
   * @param frames length of the capture, sample frames at the context's sample rate, 1…2^20.
   * @param options `skipFrames`: frames to skip first, a whole number 0…2^30.
   * @returns resolves with one Float32Array per channel and `startFrame`, the context frame (samples)
   *   of the first recorded sample; rejects with OrthotoneError INVALID_ARGUMENT after `dispose`,
   *   ABORTED when the node is disposed before the capture completes, or MEASUREMENT_FAILED when the
   *   processor stops with an error (then, and for every later capture).
   * @throws {OrthotoneError} INVALID_ARGUMENT (synchronously) when `frames` is not a whole number
   *   1…2^20 or `skipFrames` is not a whole number 0…2^30.
   */
  capture(frames: number, options?: { skipFrames?: number }): Promise<CaptureResult>;
  /**
   * Stops the processor and disconnects the node; pending captures are rejected with ABORTED.
   * Idempotent: a second call does nothing.
   * @throws never (a node already disconnected is ignored).
   */
  dispose(): void;
}

/**
 * Creates a capture node in `context`.
 * @param context audio context (native, standardized-audio-context's or node-web-audio-api's).
 * @param options see {@link CaptureNodeOptions}.
 * @throws {OrthotoneError} INVALID_ARGUMENT for bad options or a context needing `AudioWorkletNode`.
 */
export async function createCaptureNode<N extends WorkletNodeLike = WorkletNodeLike>(
  context: AudioContextLike,
  options?: Partial<CaptureNodeOptions>,
): Promise<CaptureNode<N>> {
  const o = withDefaults(DEFAULTS, options);
  const channels = requireInteger('channels', o.channels, 1, 8);
  const Ctor = workletNodeConstructorFor(context, o.AudioWorkletNode) as WorkletNodeConstructor<N>;
  if (!o.moduleLoaded) {
    if (o.moduleUrl === undefined) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        'options.moduleUrl is missing: pass the URL of orthotone/worklet (dist/worklet/processor.js)',
      );
    }
    await loadWorkletModule(context, o.moduleUrl);
  }
  const node = new Ctor(context, CAPTURE_PROCESSOR_NAME, {
    numberOfInputs: 1,
    numberOfOutputs: 1,
    outputChannelCount: [channels],
    channelCount: channels,
    channelCountMode: 'explicit',
    channelInterpretation: 'speakers',
    processorOptions: { channels },
  });
  let nextId = 1;
  const pending = new Map<number, { resolve: (c: CaptureResult) => void; reject: (e: Error) => void }>();
  node.port.onmessage = (ev: MessageEvent) => {
    const m = ev.data as CaptureReply | { type: 'rejected'; id: number; message: string };
    const p = pending.get(m?.id);
    if (!p) return;
    pending.delete(m.id);
    if (m.type === 'captured') p.resolve({ startFrame: m.startFrame, channels: m.channels });
    else p.reject(new OrthotoneError('INVALID_ARGUMENT', m.message));
  };
  let disposed = false;
  let failed = false;
  // A processor that stops with an error never answers: fail what is pending and what comes next.
  node.onprocessorerror = () => {
    failed = true;
    for (const [, p] of pending) {
      p.reject(new OrthotoneError('MEASUREMENT_FAILED', 'the capture processor stopped with an error'));
    }
    pending.clear();
  };
  return {
    node,
    capture(frames, opts) {
      requireInteger('frames', frames, 1, MAX_CAPTURE_FRAMES);
      const skipFrames = requireInteger('skipFrames', opts?.skipFrames ?? 0, 0, 1 << 30);
      if (disposed) {
        return Promise.reject(new OrthotoneError('INVALID_ARGUMENT', 'the capture node was disposed'));
      }
      if (failed) {
        return Promise.reject(
          new OrthotoneError(
            'MEASUREMENT_FAILED',
            'the capture processor stopped with an error: create a new node',
          ),
        );
      }
      const id = nextId++;
      return new Promise<CaptureResult>((resolve, reject) => {
        pending.set(id, { resolve, reject });
        node.port.postMessage({ type: 'capture', id, frames, skipFrames });
      });
    },
    dispose() {
      if (disposed) return;
      disposed = true;
      node.port.postMessage({ type: 'stop' });
      try {
        node.disconnect();
      } catch {
        // already disconnected
      }
      for (const [, p] of pending) p.reject(new OrthotoneError('ABORTED', 'the capture node was disposed'));
      pending.clear();
    },
  };
}
