/**
 * `createCaptureNode`: records exact spans of audio from any source node (receiver audio from
 * getUserMedia, or the generator's I/Q) for measurement on the main thread.
 */
import { OrthotoneError } from '../core/errors.js';
import { requireInteger, withDefaults } from '../core/validate.js';
import { MAX_CAPTURE_FRAMES } from './capture-processor.js';
import { CAPTURE_PROCESSOR_NAME } from './messages.js';
import { loadWorkletModule, workletNodeConstructorFor } from './worklet-module.js';

const DEFAULTS = Object.freeze({
  moduleUrl: undefined,
  moduleLoaded: false,
  AudioWorkletNode: undefined,
  channels: 2,
});
/**
 * Creates a capture node in `context`.
 * @param context audio context (native, standardized-audio-context's or node-web-audio-api's).
 * @param options see {@link CaptureNodeOptions}.
 * @throws {OrthotoneError} INVALID_ARGUMENT for bad options or a context needing `AudioWorkletNode`.
 */
export async function createCaptureNode(context, options) {
  const o = withDefaults(DEFAULTS, options);
  const channels = requireInteger('channels', o.channels, 1, 8);
  const Ctor = workletNodeConstructorFor(context, o.AudioWorkletNode);
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
  const pending = new Map();
  node.port.onmessage = (ev) => {
    const m = ev.data;
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
      return new Promise((resolve, reject) => {
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
