/**
 * Test signals for driving a network: single tone, two-tone, logarithmic sweep, white and
 * band-limited noise, in full-scale units (1.0 = 0 dBFS, AES17). Each is a stateful block source
 * (`fill`), computed from the absolute sample index so output never depends on block sizes, with
 * `reset` and `clone`. {@link createAnalyticSource} gives the ideal I/Q (analytic) version of the
 * same signal, to compare a network against.
 *
 * Levels: a tone's level is its peak in dBFS (AES17: a full-scale sine reads 0 dBFS). Two-tone: each
 * tone at its own level; the peak envelope (PEP) of the I/Q pair is the sum of the amplitudes, so two
 * equal tones each sit 6.02 dB below PEP (Krauss, Bostian & Raab, Solid State Radio Engineering,
 * p. 509: Ppeak = n²·Ptone). Noise: the level is its RMS in dBFS per AES17 (RMS relative to a
 * full-scale sine's RMS, 1/√2).
 */
import { OrthotoneError } from '../core/errors.js';
import { createRng, type Rng } from '../core/rng.js';
import { dbfsToPeak, peakToDbfs, powToDb } from '../core/units.js';
import {
  requireFinite,
  requireInteger,
  requirePositive,
  requireRange,
  requireSampleRate,
} from '../core/validate.js';
import { kaiserBeta, kaiserWindow } from '../design/kaiser.js';

/** A test signal. Levels in dBFS (tones: peak; noise: RMS, AES17). */
export type SignalSpec =
  | {
      kind: 'tone';
      frequencyHz: number;
      levelDbfs: number;
      /** Starting phase of the cosine, degrees. Default 0. */
      phaseDeg?: number;
    }
  | {
      kind: 'two-tone';
      frequenciesHz: [number, number];
      /** Level of each tone, dBFS (one number for both, or one per tone). */
      levelDbfs: number | [number, number];
    }
  | {
      kind: 'sweep';
      startHz: number;
      endHz: number;
      /** Length of one sweep, seconds; the sweep repeats. */
      durationSeconds: number;
      levelDbfs: number;
    }
  | {
      kind: 'noise';
      /** RMS level, dBFS (AES17). */
      levelDbfs: number;
      /** Seed of the generator (default 1). */
      seed?: number;
      /** Band-limit to [lo, hi] Hz with a Kaiser-windowed FIR band-pass; omit for white noise. */
      band?: [number, number];
    };

/** Levels of a signal, as realised by the source. */
export interface SignalLevels {
  /** Each tone's peak level, dBFS (empty for noise and for the sweep: see `peakDbfs`). */
  toneDbfs: number[];
  /** Peak envelope of the analytic (I/Q) signal, dBFS: sum of the tone amplitudes. Noise: NaN. */
  pepDbfs: number;
  /** RMS level, dBFS (AES17: a full-scale sine reads 0). */
  rmsDbfs: number;
  /**
   * Largest magnitude of the real signal, full-scale units (tones: the sum of amplitudes).
   * Noise has no bound: 4.5 standard deviations is given (exceeded about once in 150 000 samples).
   */
  peak: number;
}

/** A block source of one real test signal. */
export interface SignalSource {
  readonly spec: Readonly<SignalSpec>;
  /** Sample rate, Hz. */
  readonly sampleRate: number;
  readonly levels: Readonly<SignalLevels>;
  /**
   * Writes the next `out.length` samples, in full-scale units (1.0 = the peak of a 0 dBFS sine,
   * AES17), and advances the source by that many samples. Tones and sweeps are computed from the
   * absolute sample index (exponential sweep: Farina, AES preprint 5093, 2000), so the output does
   * not depend on how it is split into blocks; noise is Box–Muller on the seeded generator, band-passed
   * by a Kaiser-windowed FIR when the spec has a band. Allocation-free; a zero-length `out` is a no-op.
   * @param out caller-owned buffer, overwritten in full.
   * @throws never
   */
  fill(out: Float32Array): void;
  /**
   * Back to sample 0 (noise: back to its seed, with the band-pass history cleared to silence).
   * @throws never
   */
  reset(): void;
  /**
   * An independent copy whose future output is bit-identical to this one's (allocates: not for the
   * audio path).
   * @throws never
   */
  clone(): SignalSource;
}

/** A block source of the ideal analytic I/Q version of a test signal. */
export interface AnalyticSource {
  readonly spec: Readonly<SignalSpec>;
  /** Sample rate, Hz. */
  readonly sampleRate: number;
  readonly levels: Readonly<SignalLevels>;
  /**
   * Writes the next `outI.length` samples: I = Re, Q = Im of the analytic signal (Q lags I by 90°,
   * DESIGN.md §2), in full-scale units (1.0 = the peak of a 0 dBFS sine, AES17), and advances the
   * source by that many samples. Tones and sweeps: `A·cos φ(n)`, `A·sin φ(n)` from the absolute sample
   * index; band-limited noise: the Kaiser band-pass output and its exact Hilbert transform
   * ({@link bandNoiseFilters}). Allocation-free.
   * @param outI caller-owned buffer for I, overwritten in full.
   * @param outQ caller-owned buffer for Q, the same length as `outI`.
   * @throws {OrthotoneError} BUFFER_MISMATCH when `outI` and `outQ` differ in length (nothing is
   *   written and the source does not advance).
   */
  fill(outI: Float32Array, outQ: Float32Array): void;
  /**
   * Back to sample 0 (noise: back to its seed, with the filter history cleared to silence).
   * @throws never
   */
  reset(): void;
  /**
   * An independent copy whose future output is bit-identical to this one's (allocates: not for the
   * audio path).
   * @throws never
   */
  clone(): AnalyticSource;
}

const TWO_PI = 2 * Math.PI;

function checkFrequency(name: string, f: unknown, fs: number): number {
  const x = requirePositive(name, f, 'Hz');
  if (x >= fs / 2) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `${name} ${x} Hz must be below Nyquist ${fs / 2} Hz for sampleRate ${fs}`,
      x,
    );
  }
  return x;
}

/**
 * Validates a signal spec for a sample rate.
 * @throws {OrthotoneError} INVALID_ARGUMENT naming the field: frequencies must be in (0, fs/2),
 *   levels finite and at most +20 dBFS, durations positive, noise bands inside (0, fs/2).
 */
export function validateSignalSpec(spec: SignalSpec, sampleRate: number): SignalSpec {
  const fs = requireSampleRate(sampleRate);
  const level = (name: string, v: unknown) => requireRange(name, v, -300, 20, 'dBFS');
  switch (spec?.kind) {
    case 'tone':
      checkFrequency('frequencyHz', spec.frequencyHz, fs);
      level('levelDbfs', spec.levelDbfs);
      if (spec.phaseDeg !== undefined) requireFinite('phaseDeg', spec.phaseDeg);
      break;
    case 'two-tone': {
      if (!Array.isArray(spec.frequenciesHz) || spec.frequenciesHz.length !== 2) {
        throw new OrthotoneError('INVALID_ARGUMENT', 'frequenciesHz must be two frequencies [f1, f2] in Hz');
      }
      checkFrequency('frequenciesHz[0]', spec.frequenciesHz[0], fs);
      checkFrequency('frequenciesHz[1]', spec.frequenciesHz[1], fs);
      if (spec.frequenciesHz[0] === spec.frequenciesHz[1]) {
        throw new OrthotoneError(
          'INVALID_ARGUMENT',
          `frequenciesHz [${spec.frequenciesHz[0]}, ${spec.frequenciesHz[1]}] is one tone twice: give two different frequencies`,
          spec.frequenciesHz,
        );
      }
      const l = spec.levelDbfs;
      if (Array.isArray(l)) {
        level('levelDbfs[0]', l[0]);
        level('levelDbfs[1]', l[1]);
      } else level('levelDbfs', l);
      break;
    }
    case 'sweep':
      checkFrequency('startHz', spec.startHz, fs);
      checkFrequency('endHz', spec.endHz, fs);
      requireRange('durationSeconds', spec.durationSeconds, 1 / fs, 86400, 's');
      level('levelDbfs', spec.levelDbfs);
      break;
    case 'noise':
      level('levelDbfs', spec.levelDbfs);
      if (spec.seed !== undefined) requireInteger('seed', spec.seed, 0, 0xffffffff);
      if (spec.band !== undefined) {
        if (!Array.isArray(spec.band) || spec.band.length !== 2) {
          throw new OrthotoneError('INVALID_ARGUMENT', 'noise band must be [lo, hi] in Hz', spec.band);
        }
        checkFrequency('band[0]', spec.band[0], fs);
        checkFrequency('band[1]', spec.band[1], fs);
        if (spec.band[0] >= spec.band[1]) {
          throw new OrthotoneError(
            'INVALID_ARGUMENT',
            `noise band lower edge ${spec.band[0]} Hz must be below the upper edge ${spec.band[1]} Hz`,
            spec.band,
          );
        }
      }
      break;
    default:
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        `signal kind ${JSON.stringify((spec as { kind?: unknown })?.kind)} is not recognised: use 'tone', 'two-tone', 'sweep' or 'noise'`,
        spec,
      );
  }
  return spec;
}

/** Tone amplitudes (peak, full-scale units) of a tone or two-tone spec. */
function toneAmplitudes(spec: SignalSpec): number[] {
  if (spec.kind === 'tone') return [dbfsToPeak(spec.levelDbfs)];
  if (spec.kind === 'two-tone') {
    const l = spec.levelDbfs;
    const [l1, l2] = Array.isArray(l) ? l : [l, l];
    return [dbfsToPeak(l1), dbfsToPeak(l2)];
  }
  return [];
}

/**
 * The levels a signal spec realises (see {@link SignalLevels}).
 * @throws {OrthotoneError} INVALID_ARGUMENT for an invalid spec.
 */
export function signalLevels(spec: SignalSpec, sampleRate: number): SignalLevels {
  validateSignalSpec(spec, sampleRate);
  if (spec.kind === 'noise') {
    const rms = dbfsToPeak(spec.levelDbfs) / Math.SQRT2;
    return { toneDbfs: [], pepDbfs: Number.NaN, rmsDbfs: spec.levelDbfs, peak: 4.5 * rms };
  }
  if (spec.kind === 'sweep') {
    return {
      toneDbfs: [],
      pepDbfs: spec.levelDbfs,
      rmsDbfs: spec.levelDbfs,
      peak: dbfsToPeak(spec.levelDbfs),
    };
  }
  const amps = toneAmplitudes(spec);
  const sum = amps.reduce((s, a) => s + a, 0);
  // Mean power of a sum of sines at distinct frequencies: Σ a²/2; AES17 dBFS re a full-scale sine (1/2).
  const pow = amps.reduce((s, a) => s + a * a, 0);
  return { toneDbfs: amps.map(peakToDbfs), pepDbfs: peakToDbfs(sum), rmsDbfs: powToDb(pow), peak: sum };
}

/**
 * A Kaiser-windowed band-pass FIR and its Hilbert transform (Oppenheim & Schafer; Kaiser β from
 * the stopband attenuation, 80 dB: β = 0.1102·(A − 8.7)). Ideal band-pass
 * `h[n] = (sin ω2n − sin ω1n)/(πn)`; its Hilbert transform `(cos ω1n − cos ω2n)/(πn)` (0 at n = 0),
 * both windowed and scaled together so the band-pass has unit power gain (Σh² = 1, white noise of
 * variance σ² comes out with variance σ²). Length: about 10·fs/lo (transition ≈ lo/2), odd, 63…2047.
 * @param band [lo, hi] in Hz, 0 < lo < hi < fs/2 (checked by the caller, not here).
 * @param sampleRate Hz.
 * @returns the band-pass `bp` and its Hilbert transform `hb`, taps (dimensionless).
 * @throws never (the length is always a valid window length).
 */
export function bandNoiseFilters(
  band: [number, number],
  sampleRate: number,
): { bp: Float64Array; hb: Float64Array } {
  const [lo, hi] = band;
  let n = Math.ceil((10 * sampleRate) / lo);
  n = Math.min(2047, Math.max(63, n | 1));
  const c = (n - 1) / 2;
  const win = kaiserWindow(n, kaiserBeta(80));
  const w1 = (TWO_PI * lo) / sampleRate;
  const w2 = (TWO_PI * hi) / sampleRate;
  const bp = new Float64Array(n);
  const hb = new Float64Array(n);
  for (let m = 0; m < n; m++) {
    const k = m - c;
    const w = win[m]!;
    if (k === 0) {
      bp[m] = ((w2 - w1) / Math.PI) * w;
      hb[m] = 0;
    } else {
      bp[m] = ((Math.sin(w2 * k) - Math.sin(w1 * k)) / (Math.PI * k)) * w;
      hb[m] = ((Math.cos(w1 * k) - Math.cos(w2 * k)) / (Math.PI * k)) * w;
    }
  }
  let e = 0;
  for (let m = 0; m < n; m++) e += bp[m]! * bp[m]!;
  const s = 1 / Math.sqrt(e);
  for (let m = 0; m < n; m++) {
    bp[m]! *= s;
    hb[m]! *= s;
  }
  return { bp, hb };
}

/** Internal generator state shared by the real and analytic sources. */
interface Core {
  spec: SignalSpec;
  fs: number;
  levels: SignalLevels;
  n: number;
  rng: Rng | null;
  spare: number;
  seed: number;
  hist: Float64Array | null;
  wp: number;
  bp: Float64Array | null;
  hb: Float64Array | null;
}

const NOISE_SPARE = 4096;

function makeCore(spec: SignalSpec, fs: number): Core {
  validateSignalSpec(spec, fs);
  const levels = signalLevels(spec, fs);
  const core: Core = {
    spec,
    fs,
    levels,
    n: 0,
    rng: null,
    spare: Number.NaN,
    seed: 1,
    hist: null,
    wp: 0,
    bp: null,
    hb: null,
  };
  if (spec.kind === 'noise') {
    core.seed = spec.seed ?? 1;
    core.rng = createRng(core.seed);
    if (spec.band) {
      const f = bandNoiseFilters(spec.band, fs);
      core.bp = f.bp;
      core.hb = f.hb;
      core.hist = new Float64Array(f.bp.length - 1 + NOISE_SPARE);
      core.wp = f.bp.length - 1;
    }
  }
  return core;
}

function copyCore(c: Core): Core {
  return {
    ...c,
    rng: c.rng ? createRng(c.seed, c.rng.state()) : null,
    hist: c.hist ? c.hist.slice() : null,
  };
}

function resetCore(c: Core): void {
  c.n = 0;
  c.spare = Number.NaN;
  if (c.rng) c.rng = createRng(c.seed);
  if (c.hist && c.bp) {
    c.hist.fill(0);
    c.wp = c.bp.length - 1;
  }
}

/** One standard normal, Box–Muller on the core's uniform generator (spare kept in the core for clone). */
function normal(c: Core): number {
  if (!Number.isNaN(c.spare)) {
    const v = c.spare;
    c.spare = Number.NaN;
    return v;
  }
  const rng = c.rng!;
  let u = rng.uniform();
  while (u === 0) u = rng.uniform();
  const v = rng.uniform();
  const r = Math.sqrt(-2 * Math.log(u));
  c.spare = r * Math.sin(TWO_PI * v);
  return r * Math.cos(TWO_PI * v);
}

/** Phase in radians at absolute sample n of a deterministic signal (tone 1 or the sweep). */
function phaseAt(spec: SignalSpec, fs: number, n: number, f: number, phi0: number): number {
  if (spec.kind === 'sweep') {
    // Exponential sweep (A. Farina, AES 108th Convention, 2000, preprint 5093):
    // φ(t) = 2π·f1·T/L·(e^{t·L/T} − 1), L = ln(f2/f1); repeats every T.
    const len = Math.max(1, Math.round(spec.durationSeconds * fs));
    const t = (n % len) / fs;
    const T = len / fs;
    const L = Math.log(spec.endHz / spec.startHz);
    if (Math.abs(L) < 1e-12) return TWO_PI * spec.startHz * t;
    return ((TWO_PI * spec.startHz * T) / L) * Math.expm1((t * L) / T);
  }
  // Reduce the cycle count first so the phase stays exact for long runs.
  const cyc = (f * n) / fs;
  return TWO_PI * (cyc - Math.floor(cyc)) + phi0;
}

function fillCore(
  c: Core,
  out: Float32Array | null,
  outI: Float32Array | null,
  outQ: Float32Array | null,
): void {
  const spec = c.spec;
  const len = (out ?? outI)!.length;
  if (spec.kind === 'noise') {
    const sigma = dbfsToPeak(spec.levelDbfs) / Math.SQRT2;
    if (!c.bp) {
      for (let j = 0; j < len; j++) {
        const v = sigma * normal(c);
        if (out) out[j] = v;
        else {
          // White noise has no band-limited analytic version; the analytic source refuses it.
          outI![j] = v;
          outQ![j] = 0;
        }
      }
      return;
    }
    const bp = c.bp;
    const hb = c.hb!;
    const h = c.hist!;
    const keep = bp.length - 1;
    const m = bp.length;
    for (let j = 0; j < len; j++) {
      if (c.wp >= h.length) {
        h.copyWithin(0, c.wp - keep, c.wp);
        c.wp = keep;
      }
      h[c.wp] = sigma * normal(c);
      const p = c.wp;
      let a = 0;
      for (let k = 0; k < m; k++) a += bp[k]! * h[p - k]!;
      if (out) out[j] = a;
      else {
        let b = 0;
        for (let k = 0; k < m; k++) b += hb[k]! * h[p - k]!;
        outI![j] = a;
        outQ![j] = b;
      }
      c.wp++;
    }
    return;
  }
  const amps = spec.kind === 'sweep' ? [dbfsToPeak(spec.levelDbfs)] : toneAmplitudes(spec);
  const a0 = amps[0]!;
  const a1 = amps[1] ?? 0;
  const f0 = spec.kind === 'tone' ? spec.frequencyHz : spec.kind === 'two-tone' ? spec.frequenciesHz[0] : 0;
  const f1 = spec.kind === 'two-tone' ? spec.frequenciesHz[1] : 0;
  const phi0 = spec.kind === 'tone' ? ((spec.phaseDeg ?? 0) * Math.PI) / 180 : 0;
  for (let j = 0; j < len; j++) {
    const n = c.n + j;
    const p0 = phaseAt(spec, c.fs, n, f0, phi0);
    if (out) {
      let v = a0 * Math.cos(p0);
      if (a1 !== 0) v += a1 * Math.cos(phaseAt(spec, c.fs, n, f1, 0));
      out[j] = v;
    } else {
      let vi = a0 * Math.cos(p0);
      let vq = a0 * Math.sin(p0);
      if (a1 !== 0) {
        const p1 = phaseAt(spec, c.fs, n, f1, 0);
        vi += a1 * Math.cos(p1);
        vq += a1 * Math.sin(p1);
      }
      outI![j] = vi;
      outQ![j] = vq;
    }
  }
  c.n += len;
}

/**
 * Creates a block source of a real test signal.
 * @param spec the signal (see {@link SignalSpec}).
 * @param sampleRate Hz.
 * @throws {OrthotoneError} INVALID_ARGUMENT for an invalid spec or sample rate.
 * @example
 * ```ts
 * import { createSignalSource } from 'orthotone';
 *
 * const src = createSignalSource({ kind: 'two-tone', frequenciesHz: [700, 1900], levelDbfs: -7 }, 48000);
 * console.log(src.levels.pepDbfs.toFixed(2)); // −0.98 dBFS
 * const block = new Float32Array(480);
 * src.fill(block); // the next 10 ms
 * ```
 */
export function createSignalSource(spec: SignalSpec, sampleRate: number): SignalSource {
  const wrap = (c: Core): SignalSource => ({
    spec: c.spec,
    sampleRate: c.fs,
    levels: c.levels,
    fill(out) {
      fillCore(c, out, null, null);
    },
    reset() {
      resetCore(c);
    },
    clone() {
      return wrap(copyCore(c));
    },
  });
  return wrap(makeCore(spec, sampleRate));
}

/**
 * Creates the ideal analytic I/Q source of a test signal: `I + jQ = Σ A·e^{jφ(t)}` for tones and
 * sweeps (for the sweep this is the analytic signal to within the slowly-varying-envelope
 * approximation), and for band-limited noise the band-pass output paired with its exact Hilbert
 * transform (same noise sequence as {@link createSignalSource} with the same seed, so I equals the
 * real source's output). White noise has no analytic counterpart and is refused.
 * @param spec the signal; `sampleRate` Hz.
 * @throws {OrthotoneError} INVALID_ARGUMENT for an invalid spec, or white (unbanded) noise.
 */
export function createAnalyticSource(spec: SignalSpec, sampleRate: number): AnalyticSource {
  if (spec?.kind === 'noise' && !spec.band) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      'white noise has no analytic (I/Q) version: give the noise a band, e.g. band: [300, 3000]',
      spec,
    );
  }
  const wrap = (c: Core): AnalyticSource => ({
    spec: c.spec,
    sampleRate: c.fs,
    levels: c.levels,
    fill(outI, outQ) {
      if (outI.length !== outQ.length) {
        throw new OrthotoneError(
          'BUFFER_MISMATCH',
          `outI has ${outI.length} samples but outQ has ${outQ.length}: pass arrays of the same length`,
        );
      }
      fillCore(c, null, outI, outQ);
    },
    reset() {
      resetCore(c);
    },
    clone() {
      return wrap(copyCore(c));
    },
  });
  return wrap(makeCore(spec, sampleRate));
}
