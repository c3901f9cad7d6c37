/**
 * The virtual exciter: runs I/Q sample blocks through the modelled analog chain and commutating
 * mixer (model.ts, response.ts) and returns the complex baseband, relative to the LO (or one of its
 * harmonics), that a measuring receiver sees — including the receiver's own noise floor.
 *
 * Sampled realisation of each analog channel (why hand-written: the response must follow the
 * analog formulas closely, including corners above Nyquist and sub-sample skew, which no
 * bilinear-transform filter does):
 *  - converter: TPDF-dithered quantisation to `converterBits`, plus converter noise;
 *  - anti-imaging low-pass and skew together: a 64-tap FIR fitted by least squares to
 *    `LP(f)·e^{−j2πf(D/fs + τ)}` over 0…0.45·fs (D = 24 samples of bulk latency on both channels);
 *  - coupling high-pass: first-order bilinear transform prewarped at the corner (its corner is far
 *    below fs, where the transform's frequency warping is negligible);
 *  - codec gain, then the mixer's widely-linear combination `z = α·x̃_I + β·x̃_Q + κ`.
 * The output is delayed by {@link VirtualExciter.latencySamples}. Above 0.45·fs the FIR is not
 * constrained: keep tones below that.
 */
import { createRng, type Rng } from '../core/rng.js';
import type { Trims } from '../core/trims.js';
import { requireFinite, requireInteger, requireRange, requireSampleRate } from '../core/validate.js';
import { type ExciterModel, validateModel } from './model.js';
import { mixerCoefficients, responseLevels, toneResponse } from './response.js';

/** Options of {@link createVirtualExciter}. */
export interface VirtualExciterOptions {
  /** Sample rate of the I/Q blocks, Hz. */
  sampleRate: number;
  /** Seed of the converter dither and noise and of the receiver noise. */
  seed: number;
  /**
   * The receiver's noise floor: noise power in 1 Hz relative to a full-scale wanted tone, dBc/Hz
   * (default −130). In an FFT of N samples the floor per bin reads `floorDbc + 10·log10(ENBW)`.
   * −Infinity for a noiseless receiver.
   */
  floorDbc: number;
  /** LO harmonic the receiver is tuned to: 1 (default) or an odd/even harmonic up to 15. */
  harmonic: number;
}

/** A seeded virtual exciter and its receiver. */
export interface VirtualExciter {
  readonly model: ExciterModel;
  /** Sample rate of the I/Q blocks, Hz. */
  readonly sampleRate: number;
  /** Delay of the output relative to the input, samples. */
  readonly latencySamples: number;
  /**
   * Runs one block. `i`, `q` in full-scale units; writes the receiver's complex baseband into
   * `outRe`, `outIm` (full-scale units: an ideal device gives `I + jQ` back, delayed). Processes
   * `min` of the four lengths; allocation-free; output independent of how the stream is cut into
   * blocks; never emits NaN (non-finite input samples are read as 0). The output is delayed by
   * {@link VirtualExciter.latencySamples} samples. Method: the sampled chain of the file comment —
   * TPDF-dithered quantisation (common practice, no source), a 64-tap least-squares FIR for the
   * anti-imaging low-pass and skew (Parks & Burrus 1987 §3.2, from memory), the coupling high-pass by
   * the prewarped bilinear transform, and the four-phase mixer's widely-linear combination
   * `z = α·x̃_I + β·x̃_Q + κ` (response.ts), plus the receiver's complex noise at `floorDbc` dBc/Hz.
   * @param i I samples, full-scale units (1.0 = the peak of a 0 dBFS sine).
   * @param q Q samples, full-scale units.
   * @param outRe real part of the receiver's baseband, relative to the tuned LO harmonic, full-scale units.
   * @param outIm imaginary part, full-scale units.
   * @throws never
   */
  process(i: Float32Array, q: Float32Array, outRe: Float32Array, outIm: Float32Array): void;
  /**
   * Clears filter states to silence and restarts the dither, converter and receiver noise sequences
   * from the seed (allocates a little: not for the audio path).
   * @throws never
   */
  reset(): void;
  /**
   * An independent copy in the same state (filter histories and noise generator position): both
   * continue bit-identically. Allocates.
   * @throws never
   */
  clone(): VirtualExciter;
  /**
   * Noiseless steady-state response to an ideal I/Q tone at `toneHz` (negative = lower sideband)
   * and `toneAmplitude` (full scale 1), with `trims` applied digitally before the exciter
   * (DESIGN.md §4): wanted level in dBFS, unwanted and carrier in dBc, at the LO fundamental.
   * Analytic and fast (for Monte Carlo and calibration benches). Ignores the converter, dither and
   * receiver noise; the analog filters are the exact analog responses, not the sampled FIR that
   * `process` runs. Method: {@link toneResponse} (four-phase mixer Fourier analysis, image rejection
   * per K. Schmidt, QEX Aug 1994 §2). Levels are floored at −300 dB; a zero `toneAmplitude` gives NaN
   * for the dBc figures. The tone frequency is not checked against Nyquist.
   * @param toneHz tone frequency, Hz, signed (negative = lower sideband).
   * @param trims DESIGN.md §4 units: gainDb dB, phaseDeg degrees, skewSamples samples at this
   *   exciter's sample rate, dcI/dcQ full-scale units.
   * @param toneAmplitude peak amplitude of the I/Q tone, full-scale units (default 1 = 0 dBFS).
   * @throws {OrthotoneError} INVALID_ARGUMENT when `toneHz` or `toneAmplitude` is not finite, or a
   *   trim is non-finite or out of range (`validateTrims`).
   */
  response(
    toneHz: number,
    trims: Partial<Trims>,
    toneAmplitude?: number,
  ): { wantedDbfs: number; unwantedDbc: number; carrierDbc: number };
  /**
   * Response at LO harmonic `n`: the component at +toneHz and at −toneHz around n·f_LO and the
   * carrier leak there, each relative to the wanted tone at the fundamental, dBc (floored at −300 dB).
   * Noiseless and analytic like {@link VirtualExciter.response}. Method: the 25%-duty switching
   * functions' Fourier series `c_n = (2/(nπ))·sin(nπ/4)` (response.ts; e.g. the 3rd harmonic, −9.54 dB,
   * carries the opposite sideband, the 5th the same; multiples of 4 are nulls, −300 dBc).
   * @param toneHz tone frequency, Hz, signed (negative = lower sideband).
   * @param n LO harmonic, a whole number 1…15.
   * @param trims DESIGN.md §4 units (default none).
   * @param toneAmplitude peak amplitude, full-scale units (default 1).
   * @throws {OrthotoneError} INVALID_ARGUMENT when `n` is not a whole number 1…15, `toneHz` or
   *   `toneAmplitude` is not finite, or a trim is out of range.
   */
  harmonicResponse(
    toneHz: number,
    n: number,
    trims?: Partial<Trims>,
    toneAmplitude?: number,
  ): { sameSideDbc: number; oppositeSideDbc: number; carrierDbc: number };
}

/** Defaults for {@link VirtualExciterOptions} (sampleRate and seed are required). */
export const DEFAULT_EXCITER_OPTIONS = Object.freeze({ floorDbc: -130, harmonic: 1 });

const TAPS = 64;
const BULK = 24;

/**
 * Least-squares real FIR of `TAPS` taps fitted to `target(f)` on a grid over 0…0.45·fs.
 * Solves the normal equations by Cholesky with a tiny ridge (the band-limited Gram matrix is
 * nearly singular in the unconstrained band).
 */
function fitFir(target: (hz: number) => [number, number], fs: number): Float64Array {
  const K = 480;
  const A = new Float64Array(TAPS * TAPS);
  const b = new Float64Array(TAPS);
  const r = new Float64Array(2 * TAPS);
  for (let k = 0; k <= K; k++) {
    const hz = (0.45 * fs * k) / K;
    const w = (2 * Math.PI * hz) / fs;
    const wt = k === 0 || k === K ? 0.5 : 1;
    for (let d = 0; d < TAPS; d++) r[d]! += wt * Math.cos(w * d);
    const [tr, ti] = target(hz);
    for (let m = 0; m < TAPS; m++) b[m]! += wt * (tr * Math.cos(w * m) - ti * Math.sin(w * m));
  }
  for (let m = 0; m < TAPS; m++) for (let n = 0; n < TAPS; n++) A[m * TAPS + n] = r[Math.abs(m - n)]!;
  const ridge = 1e-10 * A[0]!;
  for (let m = 0; m < TAPS; m++) A[m * TAPS + m]! += ridge;
  // Cholesky A = L·Lᵀ in place (lower triangle).
  for (let j = 0; j < TAPS; j++) {
    let s = A[j * TAPS + j]!;
    for (let k = 0; k < j; k++) s -= A[j * TAPS + k]! ** 2;
    const d = Math.sqrt(s);
    A[j * TAPS + j] = d;
    for (let i = j + 1; i < TAPS; i++) {
      let t = A[i * TAPS + j]!;
      for (let k = 0; k < j; k++) t -= A[i * TAPS + k]! * A[j * TAPS + k]!;
      A[i * TAPS + j] = t / d;
    }
  }
  const y = new Float64Array(TAPS);
  for (let i = 0; i < TAPS; i++) {
    let t = b[i]!;
    for (let k = 0; k < i; k++) t -= A[i * TAPS + k]! * y[k]!;
    y[i] = t / A[i * TAPS + i]!;
  }
  const h = new Float64Array(TAPS);
  for (let i = TAPS - 1; i >= 0; i--) {
    let t = y[i]!;
    for (let k = i + 1; k < TAPS; k++) t -= A[k * TAPS + i]! * h[k]!;
    h[i] = t / A[i * TAPS + i]!;
  }
  return h;
}

/**
 * The channel FIR: the first-order anti-imaging low-pass (corner `antiImagingLowPassHz`, Hz) times the
 * channel's delay (a bulk 24 samples, plus `skewSeconds` for Q), fitted as a 64-tap least-squares FIR
 * over 0 … 0.45·`sampleRate` (least-squares frequency-domain fit by the normal equations, common
 * practice, no source).
 * @param channel 0 = I, 1 = Q.
 * @param sampleRate Hz.
 * @returns 64 taps (dimensionless).
 * @throws never (the model is not re-validated; non-finite fields give NaN taps).
 */
export function designChannelFir(model: ExciterModel, channel: 0 | 1, sampleRate: number): Float64Array {
  const fl = model.antiImagingLowPassHz[channel];
  const delay = BULK / sampleRate + (channel === 1 ? model.skewSeconds : 0);
  return fitFir((hz) => {
    let re = 1;
    let im = 0;
    if (Number.isFinite(fl)) {
      const x = hz / fl;
      re = 1 / (1 + x * x);
      im = -x / (1 + x * x);
    }
    const th = -2 * Math.PI * hz * delay;
    return [re * Math.cos(th) - im * Math.sin(th), re * Math.sin(th) + im * Math.cos(th)];
  }, sampleRate);
}

interface State {
  histI: Float64Array;
  histQ: Float64Array;
  pos: number;
  hpI: [number, number];
  hpQ: [number, number];
  rng: Rng;
}

/**
 * Creates a virtual exciter for a device model.
 * @param model the device (e.g. from {@link drawDevice}).
 * @param options `sampleRate` and `seed` required; `floorDbc` (dBc/Hz, default −130) and
 *   `harmonic` (default 1) optional.
 * @throws {OrthotoneError} INVALID_ARGUMENT for a bad model or option.
 * Reference: see model.ts and response.ts; least-squares FIR design (T. W. Parks & C. S. Burrus,
 * Digital Filter Design, Wiley 1987, §3.2, from memory); bilinear transform with prewarping.
 * @example
 * ```ts
 * import { createAnalyzer, createVirtualExciter, homebrewBenchDevice } from 'orthotone';
 *
 * // An invented bench: a hand-built exciter near 34 dB carrier and 44 dB sideband suppression.
 * const exciter = createVirtualExciter(homebrewBenchDevice(), { sampleRate: 48000, seed: 1 });
 * const analyzer = createAnalyzer(exciter, { seed: 2 });
 * console.log(analyzer.readSideband(1000, {}).toFixed(1), 'dBc unwanted sideband at zero trims');
 * ```
 */
export function createVirtualExciter(
  model: ExciterModel,
  options: Partial<VirtualExciterOptions> & { sampleRate: number; seed: number },
): VirtualExciter {
  validateModel(model);
  const fs = requireSampleRate(options?.sampleRate);
  const seed = requireFinite('seed', options.seed);
  const floorDbc = options.floorDbc ?? DEFAULT_EXCITER_OPTIONS.floorDbc;
  if (floorDbc !== Number.NEGATIVE_INFINITY) requireRange('floorDbc', floorDbc, -250, 0, 'dBc/Hz');
  const harmonic = requireInteger('harmonic', options.harmonic ?? DEFAULT_EXCITER_OPTIONS.harmonic, 1, 15);
  const hi = designChannelFir(model, 0, fs);
  const hq = designChannelFir(model, 1, fs);
  const { alpha, beta, kappa } = mixerCoefficients(model, harmonic);
  const hpCoef = (fc: number): [number, number] => {
    if (!(fc > 0)) return [1, 0];
    const wc = 2 * Math.PI * fc;
    const k = wc / Math.tan(wc / fs / 2);
    return [k / (k + wc), (k - wc) / (k + wc)];
  };
  const [bI, aI] = hpCoef(model.couplingHighPassHz[0]);
  const [bQ, aQ] = hpCoef(model.couplingHighPassHz[1]);
  const useHpI = model.couplingHighPassHz[0] > 0;
  const useHpQ = model.couplingHighPassHz[1] > 0;
  const gI = model.codecGain[0];
  const gQ = model.codecGain[1];
  const quant = model.converterBits < 32;
  const lsbScale = 2 ** (model.converterBits - 1);
  const convSigma = Number.isFinite(model.converterNoiseDbfs)
    ? Math.sqrt(0.5 * 10 ** (model.converterNoiseDbfs / 10))
    : 0;
  // Complex receiver noise of density N0 (per Hz, relative to a full-scale tone): σ² per part = N0·fs/2.
  const rxSigma = Number.isFinite(floorDbc) ? Math.sqrt((10 ** (floorDbc / 10) * fs) / 2) : 0;

  const fresh = (): State => ({
    histI: new Float64Array(2 * TAPS),
    histQ: new Float64Array(2 * TAPS),
    pos: 0,
    hpI: [0, 0],
    hpQ: [0, 0],
    rng: createRng(seed),
  });

  const build = (st: State): VirtualExciter => {
    const convert = (x: number): number => {
      let v = Number.isFinite(x) ? x : 0;
      if (quant) {
        const d = st.rng.uniform() - st.rng.uniform();
        v = Math.round(v * lsbScale + d) / lsbScale;
        if (v > 1 - 1 / lsbScale) v = 1 - 1 / lsbScale;
        else if (v < -1) v = -1;
      }
      if (convSigma > 0) v += convSigma * st.rng.normal();
      return v;
    };
    const ex: VirtualExciter = {
      model,
      sampleRate: fs,
      latencySamples: BULK,
      process(i, q, outRe, outIm) {
        const n = Math.min(i.length, q.length, outRe.length, outIm.length);
        const { histI, histQ } = st;
        for (let s = 0; s < n; s++) {
          const xi = convert(i[s]!);
          const xq = convert(q[s]!);
          // Newest sample at index pos and pos+TAPS; taps read histX[pos + k] = x[n − k].
          st.pos = st.pos === 0 ? TAPS - 1 : st.pos - 1;
          const p = st.pos;
          histI[p] = xi;
          histI[p + TAPS] = xi;
          histQ[p] = xq;
          histQ[p + TAPS] = xq;
          let fi = 0;
          let fq = 0;
          for (let k = 0; k < TAPS; k++) {
            fi += hi[k]! * histI[p + k]!;
            fq += hq[k]! * histQ[p + k]!;
          }
          if (useHpI) {
            let y = bI * (fi - st.hpI[0]) + aI * st.hpI[1];
            if (Math.abs(y) < 1e-30) y = 0;
            st.hpI[0] = fi;
            st.hpI[1] = y;
            fi = y;
          }
          if (useHpQ) {
            let y = bQ * (fq - st.hpQ[0]) + aQ * st.hpQ[1];
            if (Math.abs(y) < 1e-30) y = 0;
            st.hpQ[0] = fq;
            st.hpQ[1] = y;
            fq = y;
          }
          fi *= gI;
          fq *= gQ;
          let re = alpha.re * fi + beta.re * fq + kappa.re;
          let im = alpha.im * fi + beta.im * fq + kappa.im;
          if (rxSigma > 0) {
            re += rxSigma * st.rng.normal();
            im += rxSigma * st.rng.normal();
          }
          outRe[s] = re;
          outIm[s] = im;
        }
      },
      reset() {
        const f = fresh();
        st.histI.fill(0);
        st.histQ.fill(0);
        st.pos = 0;
        st.hpI = [0, 0];
        st.hpQ = [0, 0];
        st.rng = f.rng;
      },
      clone() {
        return build({
          histI: Float64Array.from(st.histI),
          histQ: Float64Array.from(st.histQ),
          pos: st.pos,
          hpI: [st.hpI[0], st.hpI[1]],
          hpQ: [st.hpQ[0], st.hpQ[1]],
          rng: createRng(seed, st.rng.state()),
        });
      },
      response(toneHz, trims, toneAmplitude = 1) {
        return responseLevels(toneResponse(model, toneHz, trims, toneAmplitude, fs, 1));
      },
      harmonicResponse(toneHz, n, trims = {}, toneAmplitude = 1) {
        const ref = toneResponse(model, toneHz, trims, toneAmplitude, fs, 1);
        const h = toneResponse(model, toneHz, trims, toneAmplitude, fs, n);
        const w = Math.hypot(ref.wanted.re, ref.wanted.im);
        const db = (c: { re: number; im: number }): number =>
          Math.max(-300, 20 * Math.log10(Math.hypot(c.re, c.im) / w));
        return { sameSideDbc: db(h.wanted), oppositeSideDbc: db(h.unwanted), carrierDbc: db(h.carrier) };
      },
    };
    return ex;
  };
  return build(fresh());
}
