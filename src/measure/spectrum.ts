/**
 * Averaged power spectra of real and complex captures (Welch's method), calibrated so that a tone
 * reads its peak amplitude squared, plus the per-frame transform at any frequency that sub-bin
 * readings are refined with, and the noise floor per bin and per hertz.
 *
 * References:
 * [1] P. D. Welch, "The use of fast Fourier transform for the estimation of power spectra",
 *     IEEE Trans. Audio Electroacoust. 15(2):70, 1967 (averaging the power of overlapping frames).
 * [2] G. Heinzel, A. Rüdiger, R. Schilling, "Spectrum and spectral density estimation by the
 *     Discrete Fourier transform (DFT)…", MPI Gravitationsphysik, 2002: amplitude scaling
 *     `A = 2|X|/Σw` (real) and `|X|/Σw` (complex), NENBW `N·Σw²/(Σw)²`, power spectral density.
 * [3] AES17: a full-scale sine reads 0 dBFS.
 */
import { OrthotoneError } from '../core/errors.js';
import {
  requireInteger,
  requireOneOf,
  requirePositive,
  requireRange,
  requireSampleRate,
  stripUndefined,
} from '../core/validate.js';
import {
  createWindow,
  WINDOW_MAIN_LOBE_HALF_WIDTH_BINS,
  WINDOW_NAMES,
  WINDOW_RECOMMENDED_OVERLAP,
  type WindowName,
} from '../core/windows.js';
import { createFft, nextPowerOfTwo } from './fft.js';
import { type Capture, captureLength, isIqCapture } from './signal.js';

/** How a capture is cut into frames. */
export interface SpectrumOptions {
  /** Window (default 'blackman-harris': −92 dB sidelobes, enough for −80 dBc products). */
  window: WindowName;
  /**
   * Frame length, samples. Default: the capture length, capped at `maxFrameLength`, and never
   * shorter than the tones to be read need.
   */
  frameLength: number | undefined;
  /** Wanted resolution (bin width `fs/N`), Hz; sets the frame length when given. */
  resolutionHz: number | undefined;
  /** Longest frame chosen automatically, samples (default 16384; longer frames average fewer). */
  maxFrameLength: number;
  /** Frame overlap, fraction 0…0.95 (default: the window's recommended overlap, Heinzel 2002). */
  overlap: number | undefined;
}

/** Defaults for {@link SpectrumOptions}. */
export const DEFAULT_SPECTRUM_OPTIONS: Readonly<SpectrumOptions> = Object.freeze({
  window: 'blackman-harris',
  frameLength: undefined,
  resolutionHz: undefined,
  maxFrameLength: 16384,
  overlap: undefined,
});

/** A decided cutting of a capture into frames. */
export interface FramePlan {
  sampleRate: number;
  complex: boolean;
  window: WindowName;
  /** Frame length N, samples. */
  frameLength: number;
  /** FFT size (N zero-padded to a power of two), points. */
  fftSize: number;
  /** Hop between frame starts, samples. */
  hop: number;
  /** Number of frames averaged. */
  frames: number;
  /** Frame bin width `fs/N`, Hz (the resolution figure windows are specified in). */
  resolutionHz: number;
  /** FFT bin spacing `fs/fftSize`, Hz. */
  binHz: number;
  /** Σw over the frame. */
  windowSum: number;
  /** Normalised equivalent noise bandwidth `N·Σw²/(Σw)²`, frame bins. */
  nenbwBins: number;
  /** Equivalent noise bandwidth, Hz. */
  enbwHz: number;
  /**
   * Equivalent number of independent averages (Welch 1967, eq. for overlapped frames), which sets
   * the spread of the averaged power: relative standard deviation `1/√K`.
   */
  equivalentAverages: number;
  /** Least spacing of two tones this plan separates (`2 × main-lobe half-width` bins), Hz. */
  resolvableHz: number;
}

/** An averaged power spectrum. */
export interface Spectrum extends FramePlan {
  /**
   * Averaged power per FFT bin in "sine-peak²" units: a tone of peak amplitude A (full scale 1)
   * centred on a bin reads A². Real captures: bins 0…fftSize/2 (one-sided). Complex captures:
   * bins 0…fftSize−1 in FFT order (bins above fftSize/2 are negative frequencies).
   */
  power: Float64Array;
}

/**
 * Frequency of FFT bin `k` in a spectrum, Hz (negative for the upper half of a complex one):
 * `k·binHz`, binHz = sampleRate / fftSize.
 * @throws never
 */
export function binFrequency(s: Pick<FramePlan, 'fftSize' | 'binHz' | 'complex'>, k: number): number {
  if (s.complex && k >= s.fftSize / 2) return (k - s.fftSize) * s.binHz;
  return k * s.binHz;
}

/**
 * Nearest FFT bin index to `hz` (Hz), wrapped into the FFT order for complex spectra. For a real
 * spectrum the index is not clamped to 0 … fftSize/2.
 * @throws never
 */
export function frequencyBin(s: Pick<FramePlan, 'fftSize' | 'binHz' | 'complex'>, hz: number): number {
  const k = Math.round(hz / s.binHz);
  return s.complex ? ((k % s.fftSize) + s.fftSize) % s.fftSize : k;
}

// Windows and FFT plans are costly to build (a cosine per sample, fft.js's twiddle table) and a
// session reads many captures of one length: keep the last few, read-only.
const windowCache = new Map<string, Float64Array>();
const fftCache = new Map<number, ReturnType<typeof createFft>>();
function remember<K, V>(m: Map<K, V>, k: K, make: () => V): V {
  let v = m.get(k);
  if (v === undefined) {
    v = make();
    if (m.size >= 8) m.delete(m.keys().next().value as K);
    m.set(k, v);
  }
  return v;
}

/**
 * The periodic window `name` of `length` samples, shared (do not modify); cached by name and length.
 * @throws {OrthotoneError} INVALID_ARGUMENT from `createWindow` for an unknown window or a length
 *   below 2.
 */
export function sharedWindow(name: WindowName, length: number): Float64Array {
  return remember(windowCache, `${name}:${length}`, () => createWindow(name, length));
}

function hopFor(n: number, overlap: number): number {
  return Math.max(1, Math.round(n * (1 - overlap)));
}

/**
 * Decides frame length, FFT size, hop and frame count for a capture, given the least spacing
 * between the features that must be separated (tones, their mirrors, DC).
 * @param length capture length, samples.
 * @param sampleRate Hz.
 * @param complex whether the capture is I/Q.
 * @param opts frame options.
 * @param minSpacingHz least spacing that must be resolved, Hz (Infinity for none).
 * @throws {OrthotoneError} CAPTURE_TOO_SHORT when the capture is shorter than the frame the
 *   requested resolution or spacing needs (the message names the samples and seconds needed);
 *   TONES_UNRESOLVED when an explicitly chosen frame length or resolution cannot separate the
 *   tones (the message names the frame length that would); INVALID_ARGUMENT for bad options.
 */
export function planFrames(
  length: number,
  sampleRate: number,
  complex: boolean,
  opts: SpectrumOptions,
  minSpacingHz = Number.POSITIVE_INFINITY,
): FramePlan {
  requireSampleRate(sampleRate);
  const window = requireOneOf('window', opts.window, WINDOW_NAMES);
  const overlap =
    opts.overlap === undefined
      ? WINDOW_RECOMMENDED_OVERLAP[window]
      : requireRange('overlap', opts.overlap, 0, 0.95);
  requireInteger('maxFrameLength', opts.maxFrameLength, 16, 1 << 22);
  const half = WINDOW_MAIN_LOBE_HALF_WIDTH_BINS[window];
  const secs = (n: number): string => `${+(n / sampleRate).toPrecision(4)} s`;
  // Frame needed to separate the closest features by two main-lobe half-widths.
  const neededForSpacing = Number.isFinite(minSpacingHz)
    ? Math.ceil((2 * half * sampleRate) / minSpacingHz)
    : 16;
  let n: number;
  let explicit = '';
  if (opts.frameLength !== undefined) {
    n = requireInteger('frameLength', opts.frameLength, 16, 1 << 24);
    explicit = `${n}-sample frames`;
  } else if (opts.resolutionHz !== undefined) {
    const r = requirePositive('resolutionHz', opts.resolutionHz, 'Hz');
    n = Math.max(16, Math.ceil(sampleRate / r));
    explicit = `${r} Hz resolution (${n}-sample frames)`;
  } else {
    n = Math.max(Math.min(length, opts.maxFrameLength), neededForSpacing, 16);
  }
  if (length < n) {
    const why = explicit || `tones ${+minSpacingHz.toPrecision(6)} Hz apart with the ${window} window`;
    const hint =
      !explicit && window !== 'hann' && window !== 'rectangular'
        ? `; the hann window needs ${Math.ceil((2 * WINDOW_MAIN_LOBE_HALF_WIDTH_BINS.hann * sampleRate) / minSpacingHz)} samples`
        : '';
    throw new OrthotoneError(
      'CAPTURE_TOO_SHORT',
      `capture of ${length} samples (${secs(length)} at ${sampleRate} Hz) is too short for ${why}: it needs at least ${n} samples (${secs(n)})${hint}`,
      length,
    );
  }
  if (explicit && n < neededForSpacing) {
    throw new OrthotoneError(
      'TONES_UNRESOLVED',
      `features ${+minSpacingHz.toPrecision(6)} Hz apart are not resolved by the ${window} window with ${explicit}, which separates ${+((2 * half * sampleRate) / n).toPrecision(4)} Hz: use frames of at least ${neededForSpacing} samples (${secs(neededForSpacing)})`,
      minSpacingHz,
    );
  }
  const fftSize = Math.max(4, nextPowerOfTwo(n));
  const hop = hopFor(n, overlap);
  const frames = Math.floor((length - n) / hop) + 1;
  const w = sharedWindow(window, n);
  let s1 = 0;
  let s2 = 0;
  for (let k = 0; k < n; k++) {
    s1 += w[k]!;
    s2 += w[k]! * w[k]!;
  }
  // Welch's variance reduction for overlapped frames: K_eff = K / (1 + 2Σ_j (1 − j/K)·ρ(jH)²),
  // ρ(d) = Σ w[n]w[n+d] / Σ w².
  let denom = 1;
  for (let j = 1; j < frames && j * hop < n; j++) {
    const d = j * hop;
    let acc = 0;
    for (let k = 0; k + d < n; k++) acc += w[k]! * w[k + d]!;
    const rho = acc / s2;
    denom += 2 * (1 - j / frames) * rho * rho;
  }
  const nenbw = (n * s2) / (s1 * s1);
  return {
    sampleRate,
    complex,
    window,
    frameLength: n,
    fftSize,
    hop,
    frames,
    resolutionHz: sampleRate / n,
    binHz: sampleRate / fftSize,
    windowSum: s1,
    nenbwBins: nenbw,
    enbwHz: (nenbw * sampleRate) / n,
    equivalentAverages: frames / denom,
    resolvableHz: (2 * half * sampleRate) / n,
  };
}

/**
 * Computes the averaged power spectrum of a capture (power averaging of overlapping windowed
 * frames, never averaging dB values), scaled so that a bin-centred tone of peak amplitude A
 * reads A² (real: `(2|X|/Σw)²`, complex: `(|X|/Σw)²`). Noise of variance σ² per real channel
 * reads `4σ²·NENBW/N` per bin (real) and `2σ²·NENBW/N` (complex, σ² per channel).
 * @param capture real samples or {i, q}, full-scale units.
 * @param sampleRate Hz.
 * @param options frame options merged over {@link DEFAULT_SPECTRUM_OPTIONS}.
 * @throws {OrthotoneError} CAPTURE_TOO_SHORT, TONES_UNRESOLVED or INVALID_ARGUMENT (see {@link planFrames}).
 * Reference: Welch 1967; Heinzel 2002 §9–10.
 */
export function computeSpectrum(
  capture: Capture,
  sampleRate: number,
  options: Partial<SpectrumOptions> = {},
  minSpacingHz = Number.POSITIVE_INFINITY,
): Spectrum {
  const opts = { ...DEFAULT_SPECTRUM_OPTIONS, ...stripUndefined(options) };
  const length = captureLength(capture);
  const complex = isIqCapture(capture);
  const plan = planFrames(length, sampleRate, complex, opts, minSpacingHz);
  const { frameLength: n, fftSize, hop, frames } = plan;
  const w = sharedWindow(plan.window, n);
  const fft = remember(fftCache, fftSize, () => createFft(fftSize));
  const frame = new Float64Array(complex ? 2 * fftSize : fftSize);
  const spec = new Float64Array(2 * fftSize);
  const bins = complex ? fftSize : fftSize / 2 + 1;
  const power = new Float64Array(bins);
  // Each frame overwrites the first n samples (2n values for I/Q); the zero padding after them is
  // never written, so the buffer needs no clearing between frames.
  for (let m = 0; m < frames; m++) {
    const s = m * hop;
    if (complex) {
      const { i, q } = capture;
      for (let k = 0; k < n; k++) {
        frame[2 * k] = w[k]! * i[s + k]!;
        frame[2 * k + 1] = w[k]! * q[s + k]!;
      }
      fft.complexForward(frame, spec);
    } else {
      const x = capture as ArrayLike<number>;
      for (let k = 0; k < n; k++) frame[k] = w[k]! * x[s + k]!;
      fft.realForward(frame, spec);
    }
    for (let k = 0; k < bins; k++)
      power[k]! += spec[2 * k]! * spec[2 * k]! + spec[2 * k + 1]! * spec[2 * k + 1]!;
  }
  const scale = (complex ? 1 : 4) / (plan.windowSum * plan.windowSum * frames);
  for (let k = 0; k < bins; k++) power[k]! *= scale;
  // The DC bin of a real capture is not doubled: a DC level D reads D² there.
  if (!complex) power[0]! /= 4;
  return { ...plan, power };
}

/**
 * Averaged power at an arbitrary frequency (sub-bin), in the same units as {@link Spectrum.power}:
 * the windowed transform of every frame evaluated directly at `hz` (Goertzel-like recurrence of a
 * unit phasor), `|X|²` averaged over frames.
 * Reference: Heinzel 2002 §10 (scaling); direct DTFT evaluation.
 * @param hz frequency in Hz (any real value; negative for the lower half of an I/Q capture).
 * @returns power in sine-peak² units (full scale² for a full-scale sine).
 * @throws never (the capture is not re-checked against the plan: samples past its end read as NaN).
 */
export function powerAt(capture: Capture, plan: FramePlan, window: Float64Array, hz: number): number {
  const { frameLength: n, hop, frames } = plan;
  const theta = (-2 * Math.PI * hz) / plan.sampleRate;
  const cr = Math.cos(theta);
  const ci = Math.sin(theta);
  let acc = 0;
  const complex = isIqCapture(capture);
  for (let m = 0; m < frames; m++) {
    const s = m * hop;
    let pr = 1;
    let pi = 0;
    let re = 0;
    let im = 0;
    if (complex) {
      const { i, q } = capture;
      for (let k = 0; k < n; k++) {
        const a = window[k]! * i[s + k]!;
        const b = window[k]! * q[s + k]!;
        re += a * pr - b * pi;
        im += a * pi + b * pr;
        const t = pr * cr - pi * ci;
        pi = pr * ci + pi * cr;
        pr = t;
      }
    } else {
      const x = capture as ArrayLike<number>;
      for (let k = 0; k < n; k++) {
        const a = window[k]! * x[s + k]!;
        re += a * pr;
        im += a * pi;
        const t = pr * cr - pi * ci;
        pi = pr * ci + pi * cr;
        pr = t;
      }
    }
    acc += re * re + im * im;
  }
  const gain = complex || hz === 0 ? 1 : 4;
  return (gain * acc) / (plan.windowSum * plan.windowSum * frames);
}

/**
 * Median of Gamma(K) divided by its mean, for converting a median of averaged noise power to
 * its mean (K equivalent averages, each bin a χ² with 2K degrees of freedom).
 * Reference (from memory): K. P. Choi, "On the medians of gamma distributions and an equation of
 * Ramanujan", Proc. AMS 121(1):245, 1994 — median ≈ K − 1/3 + 8/(405K); exact ln 2 for K = 1.
 * @param k equivalent number of averages (values below 1 are taken as 1).
 * @returns the dimensionless ratio median/mean, in [ln 2, 1) for finite `k` (NaN for NaN).
 * @throws never
 */
export function gammaMedianToMean(k: number): number {
  const kk = Math.max(k, 1);
  // At K = 1 the series gives 0.6864, below ln 2, so the floor of ln 2 makes it exact there.
  return Math.max(Math.LN2, (kk - 1 / 3 + 8 / (405 * kk)) / kk);
}

/**
 * Noise floor of a spectrum near `centreHz`: the median of the averaged power over bins within
 * ±`spanHz`, skipping bins within `excludeHz` of each frequency in `exclude` (tones, mirrors, DC),
 * converted from median to mean. In sine-peak² units per FFT bin (i.e. per ENBW).
 * Falls back to the whole spectrum when fewer than 16 bins remain.
 * @throws never; returns NaN only for an empty spectrum.
 */
export function floorNear(
  s: Spectrum,
  centreHz: number,
  spanHz: number,
  exclude: readonly number[],
  excludeHz: number,
): number {
  const pick = (lo: number, hi: number): number[] => {
    const vals: number[] = [];
    const bins = s.power.length;
    for (let k = 0; k < bins; k++) {
      const f = binFrequency(s, k);
      if (f < lo || f > hi) continue;
      if (!s.complex && (k === 0 || k === bins - 1)) continue;
      let skip = false;
      for (const e of exclude) {
        if (Math.abs(f - e) <= excludeHz) {
          skip = true;
          break;
        }
      }
      if (!skip) vals.push(s.power[k]!);
    }
    return vals;
  };
  let vals = pick(centreHz - spanHz, centreHz + spanHz);
  if (vals.length < 16) vals = pick(Number.NEGATIVE_INFINITY, Number.POSITIVE_INFINITY);
  if (vals.length === 0) return Number.NaN;
  vals.sort((a, b) => a - b);
  const mid = vals.length >> 1;
  const median = vals.length % 2 ? vals[mid]! : (vals[mid - 1]! + vals[mid]!) / 2;
  return median / gammaMedianToMean(s.equivalentAverages);
}
