/**
 * The AudioWorklet processor class for the quadrature generator: a thin shell over the generate/
 * kernels (STYLE.md habit 11). It reads the block length from the arrays it is given, feeds the
 * k-rate trim AudioParams to the generator (which ramps them), swaps networks, corrections,
 * sidebands and sources at a quantum boundary with a short cross-fade, and never throws from
 * `process()`: an exception becomes a quantum of silence, a counter and a `fault` message.
 *
 * The class is made by a function that takes the base class and the scope's values, so it can be
 * exercised in Node with a stand-in base; `processor.ts` registers it inside an AudioWorkletGlobalScope.
 */
import { isOrthotoneError } from '../core/errors.js';
import type { Correction, Trims } from '../core/trims.js';
import { validateNetwork } from '../design/network.js';
import type { Sideband } from '../generate/trim-stage.js';
import type {
  FromProcessor,
  ProcessorStats,
  QuadratureProcessorOptions,
  SourceSpec,
  ToProcessor,
} from './messages.js';
import { QUADRATURE_PARAMS, TRIM_NAMES } from './messages.js';
import { createRunningGenerator, type RunningGenerator } from './runtime.js';
import { type BlockSource, createBlockSource } from './test-source.js';

/** The parts of `AudioWorkletProcessor` the shell uses. */
export interface ProcessorBase {
  readonly port: {
    postMessage(message: unknown, transfer?: Transferable[]): void;
    onmessage: ((ev: { data: unknown }) => void) | null;
  };
}

/** Values the AudioWorkletGlobalScope provides. */
export interface ProcessorScope {
  sampleRate: number;
  currentFrame(): number;
}

type Ctor<T> = new (options?: { processorOptions?: unknown }) => T;

/** The descriptors registered with the processor (k-rate: one value per quantum). */
export const QUADRATURE_PARAM_DESCRIPTORS = QUADRATURE_PARAMS.map((p) => ({
  name: p.name,
  defaultValue: p.defaultValue,
  minValue: p.minValue,
  maxValue: p.maxValue,
  automationRate: 'k-rate' as const,
}));

/** The processor instance's public surface (what `process()` and tests use). */
export interface QuadratureProcessorInstance extends ProcessorBase {
  process(
    inputs: Float32Array[][],
    outputs: Float32Array[][],
    parameters: Record<string, Float32Array>,
  ): boolean;
  /** Handles one message (also bound to `port.onmessage`). */
  handle(msg: unknown): void;
  readonly stats: ProcessorStats;
}

const FAULT_REPORT_EVERY = 1000;

/**
 * Makes the quadrature processor class over `Base` (the scope's `AudioWorkletProcessor`).
 * @param Base the base class to extend.
 * @param scope sample rate and current frame of the rendering context.
 * @returns a class to pass to `registerProcessor(QUADRATURE_PROCESSOR_NAME, …)`.
 * @throws never itself. The returned class's constructor throws `OrthotoneError`
 *   INVALID_DOCUMENT when `processorOptions.network` is missing or invalid, and INVALID_ARGUMENT for
 *   a correction or source spec the generator or source factories refuse; its `process()` and
 *   message handler never throw (faults are counted and reported).
 */
export function defineQuadratureProcessor<B extends ProcessorBase>(
  Base: Ctor<B>,
  scope: ProcessorScope,
): Ctor<B & QuadratureProcessorInstance> & { parameterDescriptors: typeof QUADRATURE_PARAM_DESCRIPTORS } {
  const Shell = class extends (Base as Ctor<ProcessorBase>) {
    static get parameterDescriptors() {
      return QUADRATURE_PARAM_DESCRIPTORS;
    }

    readonly stats: ProcessorStats = {
      blocks: 0,
      frames: 0,
      faults: 0,
      lastFault: '',
      swaps: 0,
      peak: 0,
      overFullScale: 0,
      nonFiniteInputs: 0,
    };

    private running = true;
    private crossfadeSamples: number;
    private network: QuadratureProcessorOptions['network'];
    private sideband: Sideband;
    private correction: Correction | null;
    private gen: RunningGenerator;
    /** The generator being faded out after a swap, with its remaining fade frames. */
    private oldGen: RunningGenerator | null = null;
    private source: BlockSource;
    private oldSource: BlockSource | null = null;
    private fadeLeft = 0;
    private sourceFadeLeft = 0;
    /** Swaps that take effect at the start of the next quantum. */
    private pendingGen: { gen: RunningGenerator; id: number; request: ToProcessor['type'] } | null = null;
    private pendingSource: { source: BlockSource; id: number } | null = null;
    private readonly trims: Trims = { gainDb: 0, phaseDeg: 0, skewSamples: 0, dcI: 0, dcQ: 0 };
    private levelGain = -1;
    // Scratch buffers, grown only when a longer quantum than ever before arrives.
    private src = new Float32Array(128);
    private src2 = new Float32Array(128);
    private fadeI = new Float32Array(128);
    private fadeQ = new Float32Array(128);
    private spareQ = new Float32Array(128);

    constructor(options?: { processorOptions?: unknown }) {
      super(options);
      const o = (options?.processorOptions ?? {}) as Partial<QuadratureProcessorOptions>;
      this.network = validateNetwork(o.network);
      this.sideband = o.sideband === 'lower' ? 'lower' : 'upper';
      this.correction = o.correction ?? null;
      this.crossfadeSamples = Math.max(0, Math.min(48000, Math.round(o.crossfadeSamples ?? 1024)));
      this.gen = createRunningGenerator(this.network, this.sideband, this.correction, this.trims);
      this.source = createBlockSource(o.source ?? { kind: 'input' }, scope.sampleRate);
      this.port.onmessage = (ev) => this.handle(ev.data);
    }

    private post(m: FromProcessor, transfer?: Transferable[]): void {
      this.port.postMessage(m, transfer);
    }

    handle(raw: unknown): void {
      const msg = raw as ToProcessor;
      const id = typeof msg?.id === 'number' ? msg.id : -1;
      const type = msg?.type;
      try {
        switch (type) {
          case 'network': {
            const net = validateNetwork(msg.network);
            const gen = createRunningGenerator(net, this.sideband, this.correction, this.trims);
            this.network = net;
            this.queueGen(gen, id, type);
            return;
          }
          case 'correction': {
            const gen = this.gen.withCorrection(msg.correction ?? null);
            this.correction = msg.correction ?? null;
            this.queueGen(gen, id, type);
            return;
          }
          case 'sideband': {
            // The generator ramps a sideband change itself (Q through zero), so no swap is needed;
            // message handlers run between quanta, so this too takes effect at a block boundary.
            const sb: Sideband = msg.sideband === 'lower' ? 'lower' : 'upper';
            this.gen.setSideband(sb);
            this.oldGen?.setSideband(sb);
            this.pendingGen?.gen.setSideband(sb);
            this.sideband = sb;
            this.stats.swaps++;
            this.post({ type: 'ack', id, request: type, frame: scope.currentFrame() });
            return;
          }
          case 'source': {
            const source = createBlockSource(msg.source as SourceSpec, scope.sampleRate);
            this.pendingSource = { source, id };
            return;
          }
          case 'reset':
            this.gen.reset();
            this.oldGen = null;
            this.fadeLeft = 0;
            this.source.reset();
            this.post({ type: 'ack', id, request: type, frame: scope.currentFrame() });
            return;
          case 'stats': {
            const g = this.gen.stats;
            this.stats.peak = g.peak;
            this.stats.overFullScale = g.overFullScale;
            this.stats.nonFiniteInputs = g.nonFiniteInputs;
            this.post({ type: 'stats', id, stats: { ...this.stats } });
            return;
          }
          case 'stop':
            this.running = false;
            this.post({ type: 'ack', id, request: type, frame: scope.currentFrame() });
            return;
          default:
            this.post({
              type: 'rejected',
              id,
              request: type,
              code: 'INVALID_ARGUMENT',
              message: `unknown message type ${JSON.stringify(type)}`,
            });
        }
      } catch (e) {
        this.post({
          type: 'rejected',
          id,
          request: type,
          code: isOrthotoneError(e) ? e.code : 'INVALID_ARGUMENT',
          message: e instanceof Error ? e.message : String(e),
        });
      }
    }

    private queueGen(gen: RunningGenerator, id: number, request: ToProcessor['type']): void {
      // A swap requested before the previous one took effect replaces it; the earlier one is
      // acknowledged as superseded by the same frame.
      this.pendingGen = { gen, id, request };
    }

    private grow(n: number): void {
      if (this.src.length >= n) return;
      this.src = new Float32Array(n);
      this.src2 = new Float32Array(n);
      this.fadeI = new Float32Array(n);
      this.fadeQ = new Float32Array(n);
      this.spareQ = new Float32Array(n);
    }

    process(
      inputs: Float32Array[][],
      outputs: Float32Array[][],
      parameters: Record<string, Float32Array>,
    ): boolean {
      const out = outputs[0];
      try {
        if (!out || out.length === 0) return this.running;
        const outI = out[0]!;
        const outQ = out[1] ?? this.spareQ;
        const n = outI.length;
        this.grow(n);
        const frame = scope.currentFrame();
        this.applySwaps(frame);
        this.readTrims(parameters);

        // Source: the node's input (first channel; the node down-mixes to mono) or a test source.
        const input = inputs[0]?.[0];
        const src = this.src.length === n ? this.src : this.src.subarray(0, n);
        this.source.fill(src, input);
        if (this.oldSource) {
          const src2 = this.src2.length === n ? this.src2 : this.src2.subarray(0, n);
          this.oldSource.fill(src2, input);
          this.sourceFadeLeft = crossfade(src, src2, this.sourceFadeLeft, this.crossfadeSamples);
          if (this.sourceFadeLeft <= 0) this.oldSource = null;
        }
        this.applyLevel(src, parameters);

        this.gen.process(src, outI, outQ);
        if (this.oldGen) {
          const fi = this.fadeI.length === n ? this.fadeI : this.fadeI.subarray(0, n);
          const fq = this.fadeQ.length === n ? this.fadeQ : this.fadeQ.subarray(0, n);
          this.oldGen.process(src, fi, fq);
          const left = this.fadeLeft;
          crossfade(outI, fi, left, this.crossfadeSamples);
          this.fadeLeft = crossfade(outQ, fq, left, this.crossfadeSamples);
          if (this.fadeLeft <= 0) this.oldGen = null;
        }
        this.stats.blocks++;
        this.stats.frames += n;
      } catch (e) {
        this.fault(e, outputs);
      }
      return this.running;
    }

    private applySwaps(frame: number): void {
      const pg = this.pendingGen;
      if (pg) {
        this.pendingGen = null;
        pg.gen.setTrims(this.trims, true);
        this.oldGen = this.crossfadeSamples > 0 ? this.gen : null;
        this.fadeLeft = this.crossfadeSamples;
        this.gen = pg.gen;
        this.stats.swaps++;
        this.post({ type: 'ack', id: pg.id, request: pg.request, frame });
      }
      const ps = this.pendingSource;
      if (ps) {
        this.pendingSource = null;
        this.oldSource = this.crossfadeSamples > 0 ? this.source : null;
        this.sourceFadeLeft = this.crossfadeSamples;
        this.source = ps.source;
        this.stats.swaps++;
        this.post({ type: 'ack', id: ps.id, request: 'source', frame });
      }
    }

    private readTrims(parameters: Record<string, Float32Array>): void {
      let changed = false;
      for (const name of TRIM_NAMES) {
        const arr = parameters[name];
        if (!arr || arr.length === 0) continue;
        const v = arr[0]!;
        if (!Number.isNaN(v) && v !== this.trims[name]) {
          this.trims[name] = v;
          changed = true;
        }
      }
      if (changed) {
        this.gen.setTrims(this.trims, false);
        this.oldGen?.setTrims(this.trims, false);
      }
    }

    /**
     * Level: gain ramped linearly across the quantum from the previous value. Non-finite samples are
     * left to the generator, which replaces them by 0 and counts them.
     */
    private applyLevel(src: Float32Array, parameters: Record<string, Float32Array>): void {
      const arr = parameters['levelDb'];
      const db = arr && arr.length > 0 ? arr[0]! : -6;
      const target = Number.isNaN(db) ? 0 : 10 ** (db / 20);
      const start = this.levelGain < 0 ? target : this.levelGain;
      const n = src.length;
      const step = (target - start) / n;
      let g = start;
      for (let k = 0; k < n; k++) {
        g += step;
        src[k] = src[k]! * g;
      }
      this.levelGain = target;
    }

    private fault(e: unknown, outputs: Float32Array[][]): void {
      for (const o of outputs) for (const ch of o) ch.fill(0);
      this.stats.faults++;
      this.stats.lastFault = e instanceof Error ? e.message : String(e);
      try {
        // Start clean: a generator whose state went bad must not keep emitting it.
        this.gen.reset();
        this.oldGen = null;
        if (this.stats.faults === 1 || this.stats.faults % FAULT_REPORT_EVERY === 0) {
          this.post({
            type: 'fault',
            message: this.stats.lastFault,
            faults: this.stats.faults,
            frame: scope.currentFrame(),
          });
        }
      } catch {
        // Nothing more can be done on the audio thread; the counter records the fault.
      }
    }
  };
  return Shell as unknown as Ctor<B & QuadratureProcessorInstance> & {
    parameterDescriptors: typeof QUADRATURE_PARAM_DESCRIPTORS;
  };
}

/**
 * Linear cross-fade in place: `into[k] = w·into[k] + (1−w)·from[k]`, w rising from the fade position
 * to 1 over `total` samples; `left` samples of fade remain at entry. Returns the samples left after.
 * `from` must be at least as long as `into` (not checked: the processor's scratch buffers are).
 * Common practice, no source.
 * @throws never
 */
export function crossfade(into: Float32Array, from: Float32Array, left: number, total: number): number {
  const n = into.length;
  if (total <= 0 || left <= 0) return 0;
  let pos = total - left;
  for (let k = 0; k < n; k++) {
    if (pos >= total) break;
    const w = (pos + 1) / total;
    into[k] = w * into[k]! + (1 - w) * from[k]!;
    pos++;
  }
  return Math.max(0, total - pos);
}
