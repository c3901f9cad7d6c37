/**
 * Tone readings: level, frequency and height above the local noise floor of given tones in a real
 * or complex capture, read between bins.
 *
 * Method: an averaged spectrum (power averaging of overlapping windowed frames) locates each tone
 * and gives the noise floor; the tone's frequency is then refined between bins by maximising the
 * frame-averaged windowed transform evaluated directly at that frequency (iterated parabolic
 * interpolation of the log power), and its amplitude is read there, so neither scallop loss nor
 * picket-fence frequency error enters the reading.
 * References: Heinzel 2002 §10 (scaling), Welch 1967 (averaging); the direct-evaluation refinement
 * follows the maximum-likelihood single-tone estimator of D. C. Rife & R. R. Boorstyn, IEEE Trans.
 * Inf. Theory 20(5):591, 1974 (maximise the periodogram), here with a window and frame averaging.
 * The flat-top window's response peaks off the tone (its +0.0044 dB ripple), so with it the
 * frequency is sought with the Blackman–Harris window and the level read with the flat-top.
 * A tone is refined only when it stands clear of the noise floor and of the window leakage of the
 * strong components between bins (leakage.ts); otherwise it is read at its nominal frequency.
 */
import { OrthotoneError } from '../core/errors.js';
import { requireFinite, requireRange, requireSampleRate } from '../core/validate.js';
import { WINDOW_MAIN_LOBE_HALF_WIDTH_BINS } from '../core/windows.js';
import { leakageNear, strongestPeaks } from './leakage.js';
import { type Capture, isIqCapture } from './signal.js';
import {
  binFrequency,
  computeSpectrum,
  DEFAULT_SPECTRUM_OPTIONS,
  floorNear,
  frequencyBin,
  powerAt,
  type Spectrum,
  type SpectrumOptions,
  sharedWindow,
} from './spectrum.js';

/** Options for tone readings (frame options plus how tones are sought). */
export interface ToneOptions extends SpectrumOptions {
  /**
   * How far from each nominal frequency the peak is sought, Hz. Default: one main-lobe half-width
   * (2 frame bins for Hann, 4 for Blackman–Harris, 5 for the flat-top), and never more than a
   * third of the way to the nearest other tone.
   */
  searchHz: number | undefined;
  /**
   * Refine the frequency only of tones at least this far above the noise floor plus the window leakage
   * of the strong components between bins, dB (default 15); others are read at their nominal frequency.
   */
  refineAboveFloorDb: number;
  /** Subtract the expected noise power from each tone's power (default true). */
  subtractFloor: boolean;
}

/** Defaults for {@link ToneOptions}. */
export const DEFAULT_TONE_OPTIONS: Readonly<ToneOptions> = Object.freeze({
  ...DEFAULT_SPECTRUM_OPTIONS,
  searchHz: undefined,
  refineAboveFloorDb: 15,
  subtractFloor: true,
});

/** One tone reading. Levels follow AES17: a full-scale sine (real) or e^{jωt} (complex) is 0 dBFS. */
export interface ToneReading {
  /** The frequency asked for, Hz. */
  nominalHz: number;
  /** The frequency read (refined between bins when the tone stands clear of the floor), Hz. */
  frequencyHz: number;
  /** Peak amplitude, full-scale units. */
  amplitude: number;
  /** Level, dBFS. */
  levelDbfs: number;
  /** Local noise floor per FFT bin (noise in one equivalent noise bandwidth), dBFS. */
  floorDbfs: number;
  /** Local noise floor per hertz, dBFS/Hz. */
  floorDbfsPerHz: number;
  /** How far the tone stands above the local floor (per bin), dB. */
  aboveFloorDb: number;
  /** One standard deviation of `levelDbfs` from the noise, dB (estimated). */
  uncertaintyDb: number;
  /**
   * True when the frequency was refined; false when read at the nominal frequency (always for 0 Hz
   * in a real capture: DC has no frequency to refine).
   */
  refined: boolean;
  /** True when the tone is within 3 dB of the floor: the level is then an upper bound. */
  atFloor: boolean;
}

/** A tone request: a frequency, or a frequency with its own refinement rule. */
export type ToneRequest = number | { hz: number; refine?: 'auto' | 'never'; searchHz?: number };

/** Readings together with the spectrum they were taken from. */
export interface ToneAnalysis {
  readings: ToneReading[];
  spectrum: Spectrum;
}

const reqHz = (r: ToneRequest): number => (typeof r === 'number' ? r : r.hz);

/**
 * Least spacing, Hz, between the features a capture's frames must separate: the tones, and for a
 * real capture each tone's mirror about 0 Hz and about Nyquist; for a complex capture spacings
 * wrap around the sample rate.
 * @throws {OrthotoneError} INVALID_ARGUMENT for a repeated frequency.
 */
export function leastSpacingHz(freqs: readonly number[], sampleRate: number, complex: boolean): number {
  const f = [...freqs].sort((a, b) => a - b);
  let least = Number.POSITIVE_INFINITY;
  for (let k = 1; k < f.length; k++) {
    const d = f[k]! - f[k - 1]!;
    if (d === 0) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        `tone ${f[k]} Hz is listed twice: list each tone once`,
        f[k],
      );
    }
    least = Math.min(least, d);
  }
  if (complex) {
    if (f.length > 1) least = Math.min(least, sampleRate - (f[f.length - 1]! - f[0]!));
  } else {
    for (const x of f) {
      if (x > 0) least = Math.min(least, 2 * x, 2 * (sampleRate / 2 - x));
    }
  }
  return least;
}

/**
 * Validates tone frequencies: finite; real captures 0 ≤ f < fs/2; complex captures |f| < fs/2.
 * @throws {OrthotoneError} INVALID_ARGUMENT naming the tone, Nyquist and the fix.
 */
export function requireToneFrequencies(freqs: readonly number[], sampleRate: number, complex: boolean): void {
  const nyq = sampleRate / 2;
  if (freqs.length === 0) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      'no tone frequencies given: list at least one, in Hz',
      freqs,
    );
  }
  for (const f of freqs) {
    requireFinite('tone frequency', f, 'give it in Hz');
    if (complex ? Math.abs(f) >= nyq : f < 0 || f >= nyq) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        complex
          ? `tone ${f} Hz is beyond Nyquist ±${nyq} Hz of this I/Q capture at sampleRate ${sampleRate}: use a frequency between ${-nyq} and ${nyq} Hz (exclusive)`
          : `tone ${f} Hz is outside 0…${nyq} Hz (Nyquist for sampleRate ${sampleRate}) of this real capture: use a frequency from 0 Hz to below ${nyq} Hz`,
        f,
      );
    }
  }
}

/** Options merged over the defaults, with undefined entries dropped. */
function mergeToneOptions(options: Partial<ToneOptions>): ToneOptions {
  const opts: ToneOptions = { ...DEFAULT_TONE_OPTIONS };
  for (const [k, v] of Object.entries(options)) {
    if (v !== undefined) (opts as unknown as Record<string, unknown>)[k] = v;
  }
  requireRange('refineAboveFloorDb', opts.refineAboveFloorDb, 0, 200, 'dB');
  return opts;
}

/** Reads tones from one capture's spectrum; several reads share one spectrum. */
export interface ToneReader {
  readonly spectrum: Spectrum;
  /**
   * Reads one tone from the shared spectrum: locates the strongest bin within the search span of the
   * nominal frequency, refines the frequency between bins when the tone stands clear of the floor
   * and the leakage of strong components (iterated parabolic interpolation of the directly evaluated,
   * frame-averaged windowed transform: Rife & Boorstyn, IEEE Trans. Inf. Theory 20(5):591, 1974),
   * and reads its level there, with the local floor subtracted when `subtractFloor` is set
   * (Heinzel, Rüdiger & Schilling 2002 §10 scaling). Validated against Nyquist like the tones given
   * at creation. The frequency need not be one of the features given at creation, but a tone closer
   * than the planned resolution to another component is not separated from it.
   * @param request the nominal frequency, Hz, or `{ hz, refine, searchHz }` (`searchHz` in Hz,
   *   capped at a third of the way to the nearest other feature; `refine: 'never'` reads at `hz`).
   * @returns the reading: frequencies in Hz, `amplitude` peak in full-scale units, `levelDbfs` and
   *   `floorDbfs` in dBFS (AES17), `floorDbfsPerHz` in dBFS/Hz, `aboveFloorDb` and `uncertaintyDb`
   *   in dB.
   * @throws {OrthotoneError} INVALID_ARGUMENT when the frequency is not finite, or is outside
   *   0…fs/2 (real capture) or beyond ±fs/2 (I/Q capture).
   */
  read(request: ToneRequest): ToneReading;
}

/**
 * Plans frames for a capture that must separate `featuresHz` (the tones to read and anything else
 * near them, such as a carrier), computes its averaged spectrum once, and returns a reader.
 * @param capture real samples or {i, q}, full-scale units.
 * @param sampleRate Hz.
 * @param featuresHz every frequency that will be read or must be kept apart, Hz.
 * @param options merged over {@link DEFAULT_TONE_OPTIONS}.
 * @throws {OrthotoneError} INVALID_ARGUMENT (frequency beyond Nyquist, repeated frequency, bad
 *   option), CAPTURE_TOO_SHORT, TONES_UNRESOLVED (see {@link planFrames}).
 * Reference: see the file header.
 */
export function createToneReader(
  capture: Capture,
  sampleRate: number,
  featuresHz: readonly number[],
  options: Partial<ToneOptions> = {},
): ToneReader {
  requireSampleRate(sampleRate);
  const opts = mergeToneOptions(options);
  if (opts.searchHz !== undefined) requireRange('searchHz', opts.searchHz, 0, sampleRate / 2, 'Hz');
  const complex = isIqCapture(capture);
  requireToneFrequencies(featuresHz, sampleRate, complex);
  const features = [...featuresHz];
  const spacing = leastSpacingHz(features, sampleRate, complex);
  const spectrum = computeSpectrum(capture, sampleRate, opts, spacing);
  const window = sharedWindow(spectrum.window, spectrum.frameLength);
  // The frequency is found where the windowed transform peaks. A flat-top window's response is flat
  // to ±0.0044 dB over ±0.5 bin and peaks off the tone, so its maximum does not locate the tone:
  // with it, the frequency is sought with the Blackman–Harris window (peaked, sidelobes −92 dB,
  // main lobe narrower than the flat-top's) and the level is still read with the flat-top.
  const peakWindow =
    spectrum.window === 'flattop' ? sharedWindow('blackman-harris', spectrum.frameLength) : window;
  // One Float64 copy so the direct evaluations below run on a single array type.
  const f64 = (a: ArrayLike<number>): Float64Array => (a instanceof Float64Array ? a : Float64Array.from(a));
  const data: Capture = isIqCapture(capture) ? { i: f64(capture.i), q: f64(capture.q) } : f64(capture);
  const half = WINDOW_MAIN_LOBE_HALF_WIDTH_BINS[spectrum.window];
  const res = spectrum.resolutionHz;
  // In a real capture a feature's mirrors (−f, fs − f) need no entry of their own: the part of the
  // spectrum within excludeHz of them (0…excludeHz − f, fs − f − excludeHz…fs/2) lies within excludeHz
  // of the feature itself.
  const exclude: number[] = [...features, 0];
  const excludeHz = (half + 1) * res;
  const spanHz = Math.max(64 * res, 8 * excludeHz);
  const nyq = sampleRate / 2;
  const clampHz = (f: number): number =>
    complex ? Math.max(-nyq + res, Math.min(nyq - res, f)) : Math.max(0, Math.min(nyq - res, f));
  // The strongest components, whose window leakage between bins a weak tone must stand clear of.
  const peaks = strongestPeaks(spectrum, 16);
  const pw = spectrum.power;
  const nb = pw.length;
  const binPower = (k: number): number => (spectrum.complex ? pw[((k % nb) + nb) % nb]! : (pw[k] ?? 0));
  const read = (t: ToneRequest): ToneReading => {
    const hz = reqHz(t);
    requireToneFrequencies([hz], sampleRate, complex);
    // Features within a main-lobe half-width of hz are this tone itself (read again near its nominal
    // frequency, e.g. at the mirror of a measured one); features are planned farther apart than that.
    const nearest = features.reduce(
      (m, f) => (Math.abs(f - hz) > half * res ? Math.min(m, Math.abs(f - hz)) : m),
      Number.POSITIVE_INFINITY,
    );
    const ownSearch = typeof t === 'number' ? undefined : t.searchHz;
    let search = ownSearch ?? opts.searchHz ?? half * res;
    search = Math.min(search, nearest / 3);
    const floor = floorNear(spectrum, hz, spanHz, exclude, excludeHz);
    // DC in a real capture has no frequency to refine: read it at exactly 0 Hz, where a real
    // capture's power is not doubled (a step off 0 Hz would read a DC level D as 2D).
    const mayRefine = (typeof t === 'number' || t.refine !== 'never') && (complex || hz !== 0);
    // Locate the strongest bin within the search span.
    let bestK = frequencyBin(spectrum, hz);
    let bestP = -1;
    const k0 = Math.floor((hz - search) / spectrum.binHz);
    const k1 = Math.ceil((hz + search) / spectrum.binHz);
    for (let kk = k0; kk <= k1; kk++) {
      // For a real spectrum k may fall below 0 or past the last bin: pw[k] is then undefined and never
      // taken as the strongest (a complex spectrum's index is wrapped into range).
      const k = frequencyBin(spectrum, kk * spectrum.binHz);
      const f = binFrequency(spectrum, k);
      if (Math.abs(f - hz) > search + spectrum.binHz / 2) continue;
      if (pw[k]! > bestP) {
        bestP = pw[k]!;
        bestK = k;
      }
    }
    // A tone is refined only when its bin is a peak (not the flank of something outside the span)
    // standing clear of the noise floor plus the leakage of every strong component between bins
    // (leakage.ts): against the floor alone, a noise-free capture's weak or absent tone "stands clear"
    // of rounding noise and the refinement climbs the strong tones' sidelobes.
    const isPeak = bestP > 0 && bestP >= binPower(bestK - 1) && bestP >= binPower(bestK + 1);
    const clutter =
      (Number.isFinite(floor) ? floor : 0) +
      leakageNear(spectrum, peaks, hz, search, search + spectrum.binHz);
    let freq = hz;
    let refined = false;
    if (mayRefine && isPeak && 10 * Math.log10(bestP / clutter) >= opts.refineAboveFloorDb) {
      // Start from the parabola through the averaged spectrum's log power at the peak bin and its
      // neighbours, then iterate parabolas through the directly evaluated power at spacings of 0.1
      // and 0.01 bin, each until the vertex falls inside its bracket (a clamped step means the
      // maximum lies farther out).
      const memo = new Map<number, number>();
      const lp = (f: number): number => {
        let v = memo.get(f);
        if (v === undefined) {
          v = Math.log(Math.max(powerAt(data, spectrum, peakWindow, clampHz(f)), 1e-300));
          memo.set(f, v);
        }
        return v;
      };
      const vertex = (c: number, h: number, a: number, b: number, d: number): number => {
        const den = a - 2 * b + d;
        if (!(den < 0)) return a > d ? c - h : d > a ? c + h : c; // not a maximum: step uphill
        return c + Math.max(-1, Math.min(1, (0.5 * (a - d)) / den)) * h;
      };
      const at = (k: number): number => Math.log(Math.max(binPower(k), 1e-300));
      const fk = binFrequency(spectrum, bestK);
      let f = fk;
      if (spectrum.complex || (bestK > 0 && bestK < nb - 1)) {
        f = vertex(f, spectrum.binHz, at(bestK - 1), at(bestK), at(bestK + 1));
      }
      for (const [h, tries] of [
        [0.1 * res, 6],
        [0.01 * res, 4],
      ] as const) {
        for (let it = 0; it < tries; it++) {
          const next = vertex(f, h, lp(f - h), lp(f), lp(f + h));
          const step = Math.abs(next - f);
          f = next;
          if (step < 0.999 * h) break;
        }
      }
      if (Math.abs(f - hz) <= search + res && Math.abs(f - fk) <= res) {
        freq = clampHz(f);
        refined = true;
      }
    }
    const p = powerAt(data, spectrum, window, freq);
    let pc = p;
    let atFloor = false;
    if (opts.subtractFloor && Number.isFinite(floor)) {
      if (p > 2 * floor) pc = p - floor;
      else {
        pc = p / 2;
        atFloor = true;
      }
    } else if (p <= 2 * floor) atFloor = true;
    const levelDbfs = 10 * Math.log10(pc);
    const floorDbfs = 10 * Math.log10(floor);
    const sigmaP = Math.sqrt(2 * pc * floor + floor * floor) / Math.sqrt(spectrum.equivalentAverages);
    return {
      nominalHz: hz,
      frequencyHz: freq,
      amplitude: Math.sqrt(pc),
      levelDbfs,
      floorDbfs,
      floorDbfsPerHz: floorDbfs - 10 * Math.log10(spectrum.enbwHz),
      aboveFloorDb: levelDbfs - floorDbfs,
      uncertaintyDb: Math.min(99, (10 / Math.LN10) * (sigmaP / pc)),
      refined,
      atFloor,
    };
  };
  return { spectrum, read };
}

/**
 * Reads tones and returns them with the spectrum they were read from.
 * @param capture real samples (receiver audio) or {i, q} (I/Q), full-scale units.
 * @param sampleRate Hz.
 * @param tones frequencies, Hz (negative allowed for I/Q), or requests with their own search rule.
 * @param options merged over {@link DEFAULT_TONE_OPTIONS}.
 * @throws {OrthotoneError} INVALID_ARGUMENT (tone beyond Nyquist, repeated tone, bad option),
 *   CAPTURE_TOO_SHORT (the capture is shorter than the frame the tones need), TONES_UNRESOLVED
 *   (explicit frame length or resolution too coarse for the tone spacing).
 * Reference: see the file header (Heinzel 2002; Welch 1967; Rife & Boorstyn 1974).
 */
export function analyzeTones(
  capture: Capture,
  sampleRate: number,
  tones: readonly ToneRequest[],
  options: Partial<ToneOptions> = {},
): ToneAnalysis {
  const reader = createToneReader(capture, sampleRate, tones.map(reqHz), options);
  return { readings: tones.map((t) => reader.read(t)), spectrum: reader.spectrum };
}

/**
 * Reads the level of each given tone in a real capture (receiver audio) or a complex I/Q capture,
 * between bins, with the local noise floor and the height above it.
 *
 * @example
 * ```ts
 * import { measureTones } from 'orthotone';
 *
 * const fs = 48000;
 * const x = Float32Array.from({ length: 65536 }, (_, n) => 0.5 * Math.sin((2 * Math.PI * 1000.3 * n) / fs));
 * const [r] = measureTones(x, fs, [1000]);
 * console.log(r?.levelDbfs.toFixed(2), 'dBFS at', r?.frequencyHz.toFixed(2), 'Hz'); // −6.02 dBFS at 1000.30 Hz
 * ```
 * @param capture real samples or {i, q}, full-scale units.
 * @param sampleRate Hz.
 * @param frequencies tone frequencies, Hz (negative allowed for I/Q captures).
 * @param options merged over {@link DEFAULT_TONE_OPTIONS}.
 * @returns one {@link ToneReading} per frequency, in the order given.
 * @throws {OrthotoneError} INVALID_ARGUMENT (tone beyond Nyquist, repeated tone, bad option),
 *   CAPTURE_TOO_SHORT, TONES_UNRESOLVED — each naming the samples or window needed.
 * Reference: Heinzel 2002 §10; Welch 1967; Rife & Boorstyn 1974.
 */
export function measureTones(
  capture: Capture,
  sampleRate: number,
  frequencies: readonly ToneRequest[],
  options: Partial<ToneOptions> = {},
): ToneReading[] {
  return analyzeTones(capture, sampleRate, frequencies, options).readings;
}
