/**
 * `createQuadratureNode`: the main-thread side of the AudioWorklet generator. Validates everything
 * at construction (OrthotoneError), loads the processor module once per context, and wraps the
 * AudioWorkletNode with typed trims (AudioParams), swaps acknowledged by the processor, and stats.
 * Works with the native AudioContext/OfflineAudioContext, standardized-audio-context's and
 * node-web-audio-api's (pass their AudioWorkletNode constructor). No Node or DOM imports.
 */
import { OrthotoneError } from '../core/errors.js';
import { type Correction, type Trims, validateTrims } from '../core/trims.js';
import { requireFinite, requireOneOf, requireRange, withDefaults } from '../core/validate.js';
import { type Network, validateNetwork } from '../design/network.js';
import type { Sideband } from '../generate/trim-stage.js';
import type {
  AudioContextLike,
  AudioParamLike,
  WorkletNodeConstructor,
  WorkletNodeLike,
} from './audio-types.js';
import {
  type FromProcessor,
  type ProcessorStats,
  QUADRATURE_PARAMS,
  QUADRATURE_PROCESSOR_NAME,
  type QuadratureParamName,
  type QuadratureProcessorOptions,
  type SourceSpec,
  type ToProcessor,
  TRIM_NAMES,
} from './messages.js';
import { createRunningGenerator } from './runtime.js';
import { createBlockSource } from './test-source.js';
import { loadWorkletModule, workletNodeConstructorFor } from './worklet-module.js';

/** Options of {@link createQuadratureNode}. */
export interface QuadratureNodeOptions {
  /**
   * URL of the built processor module (package entry `orthotone/worklet`,
   * `dist/worklet/processor.js`). With Vite: `import url from 'orthotone/worklet?url'`; plain ESM in
   * a browser: `new URL('./node_modules/orthotone/dist/worklet/processor.js', location.href)`; Node
   * with node-web-audio-api: the file's path (`fileURLToPath(import.meta.resolve('orthotone/worklet'))`).
   * Required unless `moduleLoaded` is true.
   */
  moduleUrl: string | URL | undefined;
  /** The module was already added to this context by the caller (skip `addModule`). */
  moduleLoaded: boolean;
  /**
   * The AudioWorkletNode constructor matching the context: needed for standardized-audio-context
   * (its `AudioWorkletNode` export) and node-web-audio-api; defaults to the native global.
   */
  AudioWorkletNode: WorkletNodeConstructor | undefined;
  /** Initial trims (DESIGN.md §4). */
  trims: Partial<Trims>;
  /** Initial source level, dB (gain on the input, or test-source level in dBFS). */
  levelDb: number;
  sideband: Sideband;
  /** Frequency-dependent correction (FIR pair), or null for none. */
  correction: Correction | null;
  /** What feeds the network: the node's input (default) or an internal test source. */
  source: SourceSpec;
  /** Cross-fade when a network, correction, sideband or source is swapped, samples (0–48000). */
  crossfadeSamples: number;
}

const DEFAULTS: Readonly<QuadratureNodeOptions> = Object.freeze({
  moduleUrl: undefined,
  moduleLoaded: false,
  AudioWorkletNode: undefined,
  trims: {},
  levelDb: -6,
  sideband: 'upper' as Sideband,
  correction: null,
  source: { kind: 'input' } as SourceSpec,
  crossfadeSamples: 1024,
});

/** Acknowledgement of a swap: it took effect at the start of the quantum beginning at `frame`. */
export interface SwapAck {
  frame: number;
}

/** A fault reported by the processor (an exception caught in `process()`). */
export interface ProcessorFault {
  message: string;
  faults: number;
  frame: number;
}

/** The live generator node. Connect `node` onward: output 0 is stereo, channel 0 = I, channel 1 = Q. */
export interface QuadratureNode<N extends WorkletNodeLike = WorkletNodeLike> {
  /** The AudioWorkletNode. Its input (mono) feeds the network when the source is `input`. */
  readonly node: N;
  /** The AudioParams (k-rate): gainDb, phaseDeg, skewSamples, dcI, dcQ, levelDb. Automate freely. */
  readonly params: Readonly<Record<QuadratureParamName, AudioParamLike>>;
  /** The context's sample rate, Hz (equal to the network's). */
  readonly sampleRate: number;
  /** The network currently requested (the last one passed to the factory or `setNetwork`). */
  readonly network: Network;
  /**
   * Sets trims through the AudioParams, ramping linearly over `rampSeconds` (default 0: a step in
   * the parameter, which the generator itself still ramps click-free). Trims not given keep their
   * values; automation already scheduled on a given trim's AudioParam after now is cancelled. The
   * params are k-rate, so the change is applied per 128-frame quantum (Web Audio API, AudioParam
   * automation). Works also after `dispose` (it then changes nothing audible).
   * @param trims DESIGN.md §4 units: gainDb dB, phaseDeg degrees, skewSamples samples, dcI/dcQ
   *   full-scale units.
   * @param options `rampSeconds`: ramp time, seconds, 0…60 (default 0).
   * @throws {OrthotoneError} INVALID_ARGUMENT for an out-of-range or non-finite trim (see
   *   validateTrims) or `rampSeconds` outside 0…60 s; nothing is scheduled then.
   */
  setTrims(trims: Partial<Trims>, options?: { rampSeconds?: number }): void;
  /**
   * The trims as the AudioParams hold them now (their `value`: during a ramp, the value the context
   * last computed), in DESIGN.md §4 units (gainDb dB, phaseDeg degrees, skewSamples samples, dcI/dcQ
   * full-scale units).
   * @throws never
   */
  getTrims(): Trims;
  /**
   * Sets the source level (ramped linearly over `rampSeconds`, default 0.02 s): a gain in dB on the
   * node's input, or the test source's level in dBFS (tone peak, two-tone PEP, noise RMS: see
   * `SourceSpec`).
   * @param levelDb level, dB (dBFS for a test source), −140…24.
   * @param options `rampSeconds`: ramp time, seconds, 0…60 (default 0.02).
   * @throws {OrthotoneError} INVALID_ARGUMENT when `levelDb` is not finite or outside −140…24 dB, or
   *   `rampSeconds` is outside 0…60 s.
   */
  setLevel(levelDb: number, options?: { rampSeconds?: number }): void;
  /**
   * Swaps the network at a quantum boundary, cross-faded over `crossfadeSamples`. The document is
   * validated and its kernels built here first, so a network the kernels refuse never reaches the
   * audio thread.
   * @param network a network document (DESIGN.md §3) for the context's sample rate.
   * @returns resolves with the context frame (samples) at which the processor made the swap; rejects
   *   with OrthotoneError INVALID_ARGUMENT after `dispose`, MEASUREMENT_FAILED when the node is
   *   disposed or the processor fails before acknowledging, or the processor's own code if it refuses.
   * @throws {OrthotoneError} INVALID_DOCUMENT (synchronously, not as a rejection) for a bad document,
   *   or when its sample rate differs from the context's.
   */
  setNetwork(network: Network): Promise<SwapAck>;
  /**
   * Swaps the frequency-dependent correction (widely-linear FIR pair; null removes it), cross-faded.
   * The correction is checked against the current network's generator here first.
   * @param correction the correction (taps dimensionless, odd length up to the generator's
   *   `maxCorrectionTaps`, 63 by default), or null.
   * @returns resolves with the swap frame (samples); rejects as for `setNetwork`.
   * @throws {OrthotoneError} INVALID_ARGUMENT (synchronously) for a malformed correction or one
   *   longer than the generator supports.
   */
  setCorrection(correction: Correction | null): Promise<SwapAck>;
  /**
   * Swaps the source (the node's input, silence, or a unit-level test signal scaled by `levelDb`),
   * cross-faded. The source is built here first, so a bad spec never reaches the audio thread.
   * @param source see `SourceSpec`: frequencies in Hz (below Nyquist), durations in seconds.
   * @returns resolves with the swap frame (samples); rejects as for `setNetwork`.
   * @throws {OrthotoneError} INVALID_ARGUMENT (synchronously) for an unknown kind, a bad frequency,
   *   duration or band, or a multitone list outside 2…32 tones or with a repeated tone.
   */
  setSource(source: SourceSpec): Promise<SwapAck>;
  /**
   * Selects the sideband (negates Q for lower, DESIGN.md §2), cross-faded.
   * @param sideband 'upper' or 'lower'.
   * @returns resolves with the swap frame (samples); rejects as for `setNetwork`.
   * @throws {OrthotoneError} INVALID_ARGUMENT (synchronously) for anything but 'upper' or 'lower'.
   */
  setSideband(sideband: Sideband): Promise<SwapAck>;
  /**
   * Clears the network and source state (a fresh start; may click). Settings are kept.
   * @returns resolves with the frame (samples) at which the reset took effect; rejects as for
   *   `setNetwork`.
   * @throws never (failures arrive as a rejected promise).
   */
  reset(): Promise<SwapAck>;
  /**
   * The processor's counters (quanta, frames, faults, swaps; `peak` in full-scale units).
   * @returns resolves with a snapshot; rejects with OrthotoneError INVALID_ARGUMENT after `dispose`,
   *   or MEASUREMENT_FAILED when the node is disposed or the processor fails before answering.
   * @throws never (failures arrive as a rejected promise).
   */
  stats(): Promise<ProcessorStats>;
  /** Called when the processor reports a fault (process() caught an exception). */
  onfault: ((fault: ProcessorFault) => void) | null;
  /**
   * Stops the processor and disconnects the node; every pending swap or stats request is rejected
   * with MEASUREMENT_FAILED. Idempotent: a second call does nothing.
   * @throws never (a node already disconnected is ignored).
   */
  dispose(): void;
}

function checkRate(net: Network, sampleRate: number): void {
  if (Math.abs(net.sampleRate - sampleRate) > 1e-6 * sampleRate) {
    throw new OrthotoneError(
      'INVALID_DOCUMENT',
      `network sampleRate ${net.sampleRate} Hz differs from the audio context's ${sampleRate} Hz: design the network for ${sampleRate} Hz or open the context at ${net.sampleRate} Hz`,
      net.sampleRate,
    );
  }
}

function checkCrossfade(v: unknown): number {
  requireRange('crossfadeSamples', v, 0, 48000, 'samples');
  return Math.round(v as number);
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
 * import { createQuadratureNode, designNetwork } from 'orthotone';
 *
 * // Where your page serves the package's `orthotone/worklet` file (dist/worklet/processor.js).
 * const workletUrl = '/orthotone/worklet/processor.js';
 * const ctx = new AudioContext({ sampleRate: 48000 });
 * const net = designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'allpass', targetDb: 60 });
 * const q = await createQuadratureNode(ctx, net, {
 *   moduleUrl: workletUrl,
 *   source: { kind: 'tone', frequencyHz: 1000 },
 * });
 * // The node is typed structurally (native, standardized-audio-context or node-web-audio-api).
 * q.node.connect(ctx.destination as never); // left I, right Q
 * q.setTrims({ gainDb: 0.1, phaseDeg: -0.4 });
 * ```
 */
export async function createQuadratureNode<N extends WorkletNodeLike = WorkletNodeLike>(
  context: AudioContextLike,
  network: Network,
  options?: Partial<QuadratureNodeOptions>,
): Promise<QuadratureNode<N>> {
  const o = withDefaults(DEFAULTS, options);
  if (!context || typeof context.sampleRate !== 'number') {
    throw new OrthotoneError('INVALID_ARGUMENT', 'context must be an AudioContext or OfflineAudioContext');
  }
  const net = validateNetwork(network);
  checkRate(net, context.sampleRate);
  const trims = validateTrims({ ...o.trims });
  requireRange('levelDb', o.levelDb, -140, 24, 'dB');
  requireOneOf('sideband', o.sideband, ['upper', 'lower'] as const);
  const crossfadeSamples = checkCrossfade(o.crossfadeSamples);
  // Construct the same kernels the processor will, so every error surfaces here, not on the audio thread.
  createRunningGenerator(net, o.sideband, o.correction, { ...ZERO, ...trims });
  createBlockSource(o.source, context.sampleRate);
  const Ctor = workletNodeConstructorFor(context, o.AudioWorkletNode) as WorkletNodeConstructor<N>;
  if (!o.moduleLoaded) {
    if (o.moduleUrl === undefined) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        'options.moduleUrl is missing: pass the URL of orthotone/worklet (dist/worklet/processor.js), or set moduleLoaded: true after adding it yourself',
      );
    }
    await loadWorkletModule(context, o.moduleUrl);
  }
  const parameterData: Record<string, number> = { levelDb: o.levelDb };
  for (const k of TRIM_NAMES) parameterData[k] = trims[k] ?? 0;
  const processorOptions: QuadratureProcessorOptions = {
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

const ZERO: Trims = { gainDb: 0, phaseDeg: 0, skewSamples: 0, dcI: 0, dcQ: 0 };

function wrapNode<N extends WorkletNodeLike>(
  context: AudioContextLike,
  node: N,
  initial: Network,
): QuadratureNode<N> {
  const params = {} as Record<QuadratureParamName, AudioParamLike>;
  for (const p of QUADRATURE_PARAMS) {
    const ap = node.parameters.get(p.name);
    if (!ap) throw new OrthotoneError('INVALID_ARGUMENT', `the processor has no AudioParam ${p.name}`);
    params[p.name] = ap;
  }
  let nextId = 1;
  const pending = new Map<number, { resolve: (v: unknown) => void; reject: (e: Error) => void }>();
  let network = initial;
  let disposed = false;

  const failAll = (message: string): void => {
    for (const [, p] of pending) p.reject(new OrthotoneError('MEASUREMENT_FAILED', message));
    pending.clear();
  };

  const wrapper: QuadratureNode<N> = {
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
      return request({ type: 'network', id: 0, network: v }) as Promise<SwapAck>;
    },
    setCorrection(c) {
      createRunningGenerator(network, 'upper', c, ZERO);
      return request({ type: 'correction', id: 0, correction: c }) as Promise<SwapAck>;
    },
    setSource(s) {
      createBlockSource(s, context.sampleRate);
      return request({ type: 'source', id: 0, source: s }) as Promise<SwapAck>;
    },
    setSideband(sb) {
      requireOneOf('sideband', sb, ['upper', 'lower'] as const);
      return request({ type: 'sideband', id: 0, sideband: sb }) as Promise<SwapAck>;
    },
    reset() {
      return request({ type: 'reset', id: 0 }) as Promise<SwapAck>;
    },
    stats() {
      return request({ type: 'stats', id: 0 }) as Promise<ProcessorStats>;
    },
    dispose() {
      if (disposed) return;
      disposed = true;
      node.port.postMessage({ type: 'stop', id: 0 } satisfies ToProcessor);
      try {
        node.disconnect();
      } catch {
        // already disconnected
      }
      failAll('the quadrature node was disposed');
    },
  };

  function request(msg: ToProcessor): Promise<unknown> {
    if (disposed) {
      return Promise.reject(new OrthotoneError('INVALID_ARGUMENT', 'the quadrature node was disposed'));
    }
    const id = nextId++;
    return new Promise((resolve, reject) => {
      pending.set(id, { resolve, reject });
      node.port.postMessage({ ...msg, id });
    });
  }

  node.port.onmessage = (ev: MessageEvent) => {
    const m = ev.data as FromProcessor;
    if (m?.type === 'fault') {
      wrapper.onfault?.({ message: m.message, faults: m.faults, frame: m.frame });
      return;
    }
    const p = pending.get((m as { id?: number })?.id ?? -1);
    if (!p) return;
    pending.delete((m as { id: number }).id);
    if (m.type === 'ack') p.resolve({ frame: m.frame });
    else if (m.type === 'stats') p.resolve(m.stats);
    else if (m.type === 'rejected') {
      p.reject(new OrthotoneError(m.code as OrthotoneError['code'], m.message));
    }
  };
  node.onprocessorerror = () => failAll('the quadrature processor stopped with an error');
  return wrapper;
}

/** Sets `param` to `value` from `now`, as a step or a linear ramp, replacing later automation. */
function schedule(param: AudioParamLike, value: number, now: number, rampSeconds: number): void {
  requireFinite('value', value);
  param.cancelScheduledValues(now);
  if (rampSeconds > 0) {
    param.setValueAtTime(param.value, now);
    param.linearRampToValueAtTime(value, now + rampSeconds);
  } else {
    param.setValueAtTime(value, now);
  }
}
