/**
 * The real-time I/Q generator (DESIGN.md §5): a 90° network (Hilbert FIR or all-pass pair) followed
 * by the trim stage (DESIGN.md §4). Stateful, allocation-free per block, output identical for any
 * block partitioning, safe on long silence, finite output for any finite input.
 *
 * Lifecycle (STYLE.md habit 2): `createQuadratureGenerator` → `process` → `reset` → `clone`.
 */
import { OrthotoneError } from '../core/errors.js';
import { validateNetwork } from '../design/network.js';
import { createAllpassRuntime } from './allpass-runtime.js';
import { createFirRuntime } from './fir-runtime.js';
import { RUNTIME_CHUNK } from './network-runtime.js';
import { sanitiseInput, TrimStage } from './trim-stage.js';
/**
 * Creates the runtime of a network document (no trims).
 * @throws {OrthotoneError} INVALID_DOCUMENT when the document is invalid.
 */
export function createNetworkRuntime(net) {
  const doc = validateNetwork(net);
  return doc.kind === 'fir' ? createFirRuntime(doc.taps) : createAllpassRuntime(doc.branches);
}
class Generator {
  network;
  sampleRate;
  trimLatencySamples;
  rt;
  trim;
  x = new Float64Array(RUNTIME_CHUNK);
  bi = new Float64Array(RUNTIME_CHUNK);
  bq = new Float64Array(RUNTIME_CHUNK);
  constructor(net, rt, trim) {
    this.network = net;
    this.sampleRate = net.sampleRate;
    this.rt = rt;
    this.trim = trim;
    this.trimLatencySamples = trim.latencySamples;
  }
  get stats() {
    return this.trim.stats;
  }
  get trims() {
    return this.trim.trims;
  }
  get sideband() {
    return this.trim.sideband;
  }
  get correction() {
    return this.trim.correction;
  }
  get ramping() {
    return this.trim.ramping;
  }
  process(input, outI, outQ) {
    const n = input.length;
    if (outI.length !== n || outQ.length !== n) {
      throw new OrthotoneError(
        'BUFFER_MISMATCH',
        `buffer lengths differ (input ${n}, outI ${outI.length}, outQ ${outQ.length}): pass three arrays of the same length`,
        [n, outI.length, outQ.length],
      );
    }
    const stats = this.trim.stats;
    for (let o = 0; o < n; o += RUNTIME_CHUNK) {
      const m = Math.min(RUNTIME_CHUNK, n - o);
      sanitiseInput(input, o, m, this.x, stats);
      this.rt.process(this.x, m, this.bi, this.bq);
      this.trim.processChunk(this.bi, this.bq, m, outI, outQ, o);
    }
  }
  setTrims(t, opts) {
    this.trim.setTrims(t, opts);
  }
  setSideband(sideband, opts) {
    this.trim.setSideband(sideband, opts);
  }
  setCorrection(c) {
    this.trim.setCorrection(c);
  }
  resetStats() {
    this.trim.resetStats();
  }
  reset() {
    this.rt.reset();
    this.trim.reset();
  }
  clone() {
    return new Generator(this.network, this.rt.clone(), this.trim.clone());
  }
}
/**
 * Creates a real-time I/Q generator for a network document.
 *
 * Sign (DESIGN.md §2): for input `cos(2πft)` in the band, I = cos(2πft + θ), Q = sin(2πft + θ)
 * (Q lags I by 90°; upper sideband); with `sideband: 'lower'` Q is negated.
 *
 * @param net a network document (DESIGN.md §3), validated here.
 * @param options trims, sideband, ramp time, skew and correction capacity (see `TrimStageOptions`).
 * @returns the generator; run it at `net.sampleRate`.
 * @throws {OrthotoneError} INVALID_DOCUMENT for an invalid network, INVALID_ARGUMENT for an option
 *   out of range (trims via `validateTrims`).
 * @example
 * ```ts
 * const gen = createQuadratureGenerator(net, { trims: { gainDb: 0.1, phaseDeg: -0.5 } });
 * const i = new Float32Array(128), q = new Float32Array(128);
 * gen.process(audioBlock, i, q);
 * ```
 */
export function createQuadratureGenerator(net, options) {
  const doc = validateNetwork(net);
  const trim = new TrimStage(doc.sampleRate, options);
  return new Generator(doc, createNetworkRuntime(doc), trim);
}
