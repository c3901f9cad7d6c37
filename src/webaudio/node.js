/**
 * `createQuadratureNode`: the main-thread side of the AudioWorklet generator. Validates everything
 * at construction (OrthotoneError), loads the processor module once per context, and wraps the
 * AudioWorkletNode with typed trims (AudioParams), swaps acknowledged by the processor, and stats.
 * Works with the native AudioContext/OfflineAudioContext, standardized-audio-context's and
 * node-web-audio-api's (pass their AudioWorkletNode constructor). No Node or DOM imports.
 */
import { OrthotoneError } from '../core/errors.js';
import { validateTrims } from '../core/trims.js';
import { requireFinite, requireOneOf, requireRange, withDefaults } from '../core/validate.js';
import { validateNetwork } from '../design/network.js';
import { QUADRATURE_PARAMS, QUADRATURE_PROCESSOR_NAME, TRIM_NAMES } from './messages.js';
import { createBlockSource, createRunningGenerator } from './runtime.js';
import { loadWorkletModule, workletNodeConstructorFor } from './worklet-module.js';

const DEFAULTS = Object.freeze({
  moduleUrl: undefined,
  moduleLoaded: false,
  AudioWorkletNode: undefined,
  trims: {},
  levelDb: -6,
  sideband: 'upper',
  correction: null,
  source: { kind: 'input' },
  crossfadeSamples: 1024,
});
function checkRate(net, sampleRate) {
  if (Math.abs(net.sampleRate - sampleRate) > 1e-6 * sampleRate) {
    throw new OrthotoneError(
      'INVALID_DOCUMENT',
      `network sampleRate ${net.sampleRate} Hz differs from the audio context's ${sampleRate} Hz: design the network for ${sampleRate} Hz or open the context at ${net.sampleRate} Hz`,
      net.sampleRate,
    );
  }
}
function checkCrossfade(v) {
  requireRange('crossfadeSamples', v, 0, 48000, 'samples');
  return Math.round(v);
}
/**
 * Creates the quadrature generator node in `context`: a 90° network, trims, optional correction and
 * a source, run on the audio thread by the orthotone processor.
 *
 * The processor is a thin shell over the generate/ kernels (createQuadratureGenerator), so its
 * output is what those kernels give, quantum by quantum. Sign convention per DESIGN.md §2: for
 * input `cos(2πft)` the left channel is `I = cos(…)`, the right `Q = sin(…)` (Q lags I by 90°),
 * giving the upper sideband with `I·cos ωc t − Q·sin ωc t`.
 *
 * @param context a realtime or offline audio context (native, standardized-audio-context's, or
 *   node-web-audio-api's); its sample rate must equal the network's.
 * @param network a network document (designNetwork, or read from JSON).
 * @param options see {@link QuadratureNodeOptions}; `moduleUrl` is required unless `moduleLoaded`.
 * @returns the node wrapper, once the module is loaded and the node constructed.
 * @throws {OrthotoneError} INVALID_DOCUMENT for a bad network or a sample-rate mismatch;
 *   INVALID_ARGUMENT for bad trims, level, sideband, source, correction, a missing moduleUrl, or a
 *   context that needs `options.AudioWorkletNode`. Thrown before anything is loaded.
 * @example
 * ```ts
 * const ctx = new AudioContext({ sampleRate: 48000 });
 * const net = designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'allpass', targetDb: 60 });
 * const q = await createQuadratureNode(ctx, net, { moduleUrl: workletUrl, source: { kind: 'tone', frequencyHz: 1000 } });
 * q.node.connect(ctx.destination); // left I, right Q
 * q.setTrims({ gainDb: 0.1, phaseDeg: -0.4 });
 * ```
 */
export async function createQuadratureNode(context, network, options) {
  const o = withDefaults(DEFAULTS, options);
  if (!context || typeof context.sampleRate !== 'number') {
    throw new OrthotoneError('INVALID_ARGUMENT', 'context must be an AudioContext or OfflineAudioContext');
  }
  const net = validateNetwork(network);
  checkRate(net, context.sampleRate);
  const trims = validateTrims({ ...o.trims });
  requireRange('levelDb', o.levelDb, -140, 24, 'dB');
  requireOneOf('sideband', o.sideband, ['upper', 'lower']);
  const crossfadeSamples = checkCrossfade(o.crossfadeSamples);
  // Construct the same kernels the processor will, so every error surfaces here, not on the audio thread.
  createRunningGenerator(net, o.sideband, o.correction, { ...ZERO, ...trims });
  createBlockSource(o.source, context.sampleRate);
  const Ctor = workletNodeConstructorFor(context, o.AudioWorkletNode);
  if (!o.moduleLoaded) {
    if (o.moduleUrl === undefined) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        'options.moduleUrl is missing: pass the URL of orthotone/worklet (dist/worklet/processor.js), or set moduleLoaded: true after adding it yourself',
      );
    }
    await loadWorkletModule(context, o.moduleUrl);
  }
  const parameterData = { levelDb: o.levelDb };
  for (const k of TRIM_NAMES) parameterData[k] = trims[k] ?? 0;
  const processorOptions = {
    network: net,
    sideband: o.sideband,
    correction: o.correction,
    source: o.source,
    crossfadeSamples,
  };
  const node = new Ctor(context, QUADRATURE_PROCESSOR_NAME, {
    numberOfInputs: 1,
    numberOfOutputs: 1,
    outputChannelCount: [2],
    channelCount: 1,
    channelCountMode: 'explicit',
    channelInterpretation: 'speakers',
    parameterData,
    processorOptions,
  });
  return wrapNode(context, node, net);
}
const ZERO = { gainDb: 0, phaseDeg: 0, skewSamples: 0, dcI: 0, dcQ: 0 };
function wrapNode(context, node, initial) {
  const params = {};
  for (const p of QUADRATURE_PARAMS) {
    const ap = node.parameters.get(p.name);
    if (!ap) throw new OrthotoneError('INVALID_ARGUMENT', `the processor has no AudioParam ${p.name}`);
    params[p.name] = ap;
  }
  let nextId = 1;
  const pending = new Map();
  let network = initial;
  let disposed = false;
  const failAll = (message) => {
    for (const [, p] of pending) p.reject(new OrthotoneError('MEASUREMENT_FAILED', message));
    pending.clear();
  };
  const wrapper = {
    node,
    params,
    sampleRate: context.sampleRate,
    get network() {
      return network;
    },
    onfault: null,
    setTrims(t, opts) {
      validateTrims(t);
      const ramp = opts?.rampSeconds ?? 0;
      requireRange('rampSeconds', ramp, 0, 60, 's');
      const now = context.currentTime;
      for (const k of TRIM_NAMES) {
        const v = t[k];
        if (v === undefined) continue;
        schedule(params[k], v, now, ramp);
      }
    },
    getTrims() {
      return {
        gainDb: params.gainDb.value,
        phaseDeg: params.phaseDeg.value,
        skewSamples: params.skewSamples.value,
        dcI: params.dcI.value,
        dcQ: params.dcQ.value,
      };
    },
    setLevel(levelDb, opts) {
      requireRange('levelDb', levelDb, -140, 24, 'dB');
      const ramp = opts?.rampSeconds ?? 0.02;
      requireRange('rampSeconds', ramp, 0, 60, 's');
      schedule(params.levelDb, levelDb, context.currentTime, ramp);
    },
    setNetwork(n) {
      const v = validateNetwork(n);
      checkRate(v, context.sampleRate);
      // Build once here: a network the kernels refuse is refused before it reaches the audio thread.
      createRunningGenerator(v, 'upper', null, ZERO);
      network = v;
      return request({ type: 'network', id: 0, network: v });
    },
    setCorrection(c) {
      createRunningGenerator(network, 'upper', c, ZERO);
      return request({ type: 'correction', id: 0, correction: c });
    },
    setSource(s) {
      createBlockSource(s, context.sampleRate);
      return request({ type: 'source', id: 0, source: s });
    },
    setSideband(sb) {
      requireOneOf('sideband', sb, ['upper', 'lower']);
      return request({ type: 'sideband', id: 0, sideband: sb });
    },
    reset() {
      return request({ type: 'reset', id: 0 });
    },
    stats() {
      return request({ type: 'stats', id: 0 });
    },
    dispose() {
      if (disposed) return;
      disposed = true;
      node.port.postMessage({ type: 'stop', id: 0 });
      try {
        node.disconnect();
      } catch {
        // already disconnected
      }
      failAll('the quadrature node was disposed');
    },
  };
  function request(msg) {
    if (disposed) {
      return Promise.reject(new OrthotoneError('INVALID_ARGUMENT', 'the quadrature node was disposed'));
    }
    const id = nextId++;
    return new Promise((resolve, reject) => {
      pending.set(id, { resolve, reject });
      node.port.postMessage({ ...msg, id });
    });
  }
  node.port.onmessage = (ev) => {
    const m = ev.data;
    if (m?.type === 'fault') {
      wrapper.onfault?.({ message: m.message, faults: m.faults, frame: m.frame });
      return;
    }
    const p = pending.get(m?.id ?? -1);
    if (!p) return;
    pending.delete(m.id);
    if (m.type === 'ack') p.resolve({ frame: m.frame });
    else if (m.type === 'stats') p.resolve(m.stats);
    else if (m.type === 'rejected') {
      p.reject(new OrthotoneError(m.code, m.message));
    }
  };
  node.onprocessorerror = () => failAll('the quadrature processor stopped with an error');
  return wrapper;
}
/** Sets `param` to `value` from `now`, as a step or a linear ramp, replacing later automation. */
function schedule(param, value, now, rampSeconds) {
  requireFinite('value', value);
  param.cancelScheduledValues(now);
  if (rampSeconds > 0) {
    param.setValueAtTime(param.value, now);
    param.linearRampToValueAtTime(value, now + rampSeconds);
  } else {
    param.setValueAtTime(value, now);
  }
}
