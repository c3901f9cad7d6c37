/**
 * Spectral analysis windows and their figures of merit.
 *
 * All windows are cosine sums in the periodic ("DFT-even") form used for spectrum analysis,
 * `w[n] = Σ_k c_k·cos(2πkn/N)`, n = 0…N−1, as tabulated by G. Heinzel, A. Rüdiger and
 * R. Schilling, "Spectrum and spectral density estimation by the Discrete Fourier transform (DFT),
 * including a comprehensive list of window functions and some new flat-top windows", Max-Planck-
 * Institut für Gravitationsphysik, 2002 (referred to below as Heinzel 2002). The figures (noise
 * bandwidth, scallop loss, highest sidelobe) are computed from the samples, not copied, so tests
 * can check them against the published table (docs/REFERENCES.md §4).
 */
import { OrthotoneError } from './errors.js';
import { requireInteger, requireOneOf } from './validate.js';

/** Window names accepted everywhere a window is chosen. */
export type WindowName = 'rectangular' | 'hann' | 'blackman-harris' | 'flattop';

/** All window names, in order of increasing main-lobe width. */
export const WINDOW_NAMES: readonly WindowName[] = Object.freeze([
  'rectangular',
  'hann',
  'blackman-harris',
  'flattop',
]);

/**
 * Cosine-sum coefficients `c_k` of each window: `w[n] = Σ c_k·cos(2πkn/N)`.
 * - hann: 0.5 − 0.5·cos.
 * - blackman-harris: the 4-term, −92 dB Blackman–Harris (F. J. Harris, Proc. IEEE 66(1):51, 1978):
 *   0.35875, 0.48829, 0.14128, 0.01168 with alternating signs.
 * - flattop: HFT95 of Heinzel 2002 (pinned exactly; several "flat-top" windows with other
 *   coefficients circulate): 1, −1.9383379, 1.3045202, −0.4028270, 0.0350665.
 */
export const WINDOW_COEFFICIENTS: Readonly<Record<WindowName, readonly number[]>> = Object.freeze({
  rectangular: Object.freeze([1]),
  hann: Object.freeze([0.5, -0.5]),
  'blackman-harris': Object.freeze([0.35875, -0.48829, 0.14128, -0.01168]),
  flattop: Object.freeze([1, -1.9383379, 1.3045202, -0.402827, 0.0350665]),
});

/**
 * Overlap between successive frames that Heinzel 2002 recommends for each window ("ROV"), as a
 * fraction of the frame (from memory of that report's table: Hann 50%, 4-term Blackman–Harris
 * 66.1%, HFT95 75.6%). Used as the default frame overlap for averaged spectra.
 */
export const WINDOW_RECOMMENDED_OVERLAP: Readonly<Record<WindowName, number>> = Object.freeze({
  rectangular: 0,
  hann: 0.5,
  'blackman-harris': 0.661,
  flattop: 0.756,
});

/**
 * Half-width of the main lobe, bins (first zero of the window's transform for a cosine sum of
 * K terms is at K bins). Two tones closer than twice this are not separated: their main lobes
 * overlap.
 */
export const WINDOW_MAIN_LOBE_HALF_WIDTH_BINS: Readonly<Record<WindowName, number>> = Object.freeze({
  rectangular: 1,
  hann: 2,
  'blackman-harris': 4,
  flattop: 5,
});

/**
 * Fills `out` with the periodic window `name` of length `out.length` and returns it.
 * @param name window name, one of {@link WINDOW_NAMES}.
 * @param out caller-owned buffer; its length is the frame length N (at least 2).
 * @throws {OrthotoneError} INVALID_ARGUMENT for an unknown window or a buffer shorter than 2.
 * Reference: Heinzel 2002, §C (cosine-sum windows in the DFT-even form).
 */
export function fillWindow(name: WindowName, out: Float64Array | Float32Array): Float64Array | Float32Array {
  requireOneOf('window', name, WINDOW_NAMES);
  const n = out.length;
  if (n < 2) {
    throw new OrthotoneError('INVALID_ARGUMENT', `window length ${n} must be at least 2 samples`, n);
  }
  const c = WINDOW_COEFFICIENTS[name];
  for (let i = 0; i < n; i++) {
    const z = (2 * Math.PI * i) / n;
    let s = 0;
    for (let k = 0; k < c.length; k++) s += c[k]! * Math.cos(k * z);
    out[i] = s;
  }
  return out;
}

/**
 * Creates the periodic window `name` of length `length` samples.
 * @throws {OrthotoneError} INVALID_ARGUMENT for an unknown window or a length below 2.
 * Reference: Heinzel 2002, §C.
 */
export function createWindow(name: WindowName, length: number): Float64Array {
  requireInteger('window length', length, 2, 1 << 26);
  return fillWindow(name, new Float64Array(length)) as Float64Array;
}

/** Figures of merit of a window (Heinzel 2002, §10 and appendix tables). */
export interface WindowFigures {
  name: WindowName;
  /** Frame length the figures were computed for, samples. */
  length: number;
  /** Coherent gain `Σw/N` (the amplitude a bin-centred tone keeps), linear. */
  coherentGain: number;
  /** Normalised equivalent noise bandwidth `N·Σw²/(Σw)²`, bins. */
  nenbwBins: number;
  /** Scallop loss: level drop of a tone half-way between bins, dB (positive). */
  scallopLossDb: number;
  /**
   * Amplitude flatness: the largest deviation (signed, dB) of a tone's reading from its bin-centred
   * value as the tone moves from a bin centre to half-way between bins. For a flat-top window
   * this is Heinzel's "flatness" (HFT95: +0.0044 dB); for the others it equals −scallop loss.
   */
  amplitudeFlatnessDb: number;
  /** Highest sidelobe relative to the main-lobe peak, dB (negative). */
  highestSidelobeDb: number;
  /** Half-width of the main lobe (first zero), bins. */
  mainLobeHalfWidthBins: number;
  /** Recommended overlap of successive frames, fraction. */
  recommendedOverlap: number;
}

/**
 * |DTFT| of the periodic cosine-sum window `c` of length `n` at `bins` (frequency in bins of the
 * frame), in closed form: each cosine term contributes two shifted Dirichlet kernels
 * `D(x) = Σ_{m<n} e^{−j2πxm/n} = e^{−jπx(n−1)/n}·sin(πx)/sin(πx/n)`. Exact and O(terms) per point,
 * so the sidelobe scan below is cheap.
 */
function windowTransformMagnitude(c: readonly number[], n: number, bins: number): number {
  let re = 0;
  let im = 0;
  const add = (x: number, amp: number): void => {
    const den = Math.sin((Math.PI * x) / n);
    const mag = Math.abs(x) < 1e-12 ? n : Math.sin(Math.PI * x) / den;
    const ph = (-Math.PI * x * (n - 1)) / n;
    re += amp * mag * Math.cos(ph);
    im += amp * mag * Math.sin(ph);
  };
  add(bins, c[0]!);
  for (let k = 1; k < c.length; k++) {
    add(bins - k, c[k]! / 2);
    add(bins + k, c[k]! / 2);
  }
  return Math.hypot(re, im);
}

const figuresCache = new Map<string, WindowFigures>();

/**
 * Computes the figures of merit of a window from its samples: coherent gain, NENBW, scallop loss
 * and highest sidelobe (the sidelobe is found by scanning the window's transform (closed form) from the first
 * zero out to 64 bins in steps of 1/64 bin, then refining the peak by golden-section search).
 * @param name window name.
 * @param length frame length N, samples (default 4096; the figures converge to Heinzel's large-N values as N grows).
 * @throws {OrthotoneError} INVALID_ARGUMENT for an unknown window or a length outside 16…65536.
 * Reference: Heinzel 2002, §10 (definitions) and Table/appendix D (published values).
 */
export function windowFigures(name: WindowName, length = 4096): WindowFigures {
  requireOneOf('window', name, WINDOW_NAMES);
  requireInteger('window length', length, 16, 65536);
  const key = `${name}:${length}`;
  const cached = figuresCache.get(key);
  if (cached) return cached;
  const w = createWindow(name, length);
  const c = WINDOW_COEFFICIENTS[name];
  let s1 = 0;
  let s2 = 0;
  for (let i = 0; i < length; i++) {
    s1 += w[i]!;
    s2 += w[i]! * w[i]!;
  }
  const peak = windowTransformMagnitude(c, length, 0);
  const scallopLossDb = -20 * Math.log10(windowTransformMagnitude(c, length, 0.5) / peak);
  let flatness = 0;
  for (let d = 0; d <= 0.5 + 1e-9; d += 1 / 2000) {
    const dev = 20 * Math.log10(windowTransformMagnitude(c, length, d) / peak);
    if (Math.abs(dev) > Math.abs(flatness)) flatness = dev;
  }
  const half = WINDOW_MAIN_LOBE_HALF_WIDTH_BINS[name];
  // Scan beyond the main lobe for the highest sidelobe; refine the best bracket.
  let best = 0;
  let bestF = half;
  const df = 1 / 64;
  const fMax = Math.min(64, length / 2 - 1);
  for (let f = half + df; f < fMax; f += df) {
    const m = windowTransformMagnitude(c, length, f);
    if (m > best) {
      best = m;
      bestF = f;
    }
  }
  let a = bestF - df;
  let b = bestF + df;
  const g = (Math.sqrt(5) - 1) / 2;
  for (let it = 0; it < 40; it++) {
    const x1 = b - g * (b - a);
    const x2 = a + g * (b - a);
    if (windowTransformMagnitude(c, length, x1) > windowTransformMagnitude(c, length, x2)) b = x2;
    else a = x1;
  }
  best = Math.max(best, windowTransformMagnitude(c, length, (a + b) / 2));
  const fig: WindowFigures = Object.freeze({
    name,
    length,
    coherentGain: s1 / length,
    nenbwBins: (length * s2) / (s1 * s1),
    scallopLossDb,
    amplitudeFlatnessDb: flatness,
    highestSidelobeDb: 20 * Math.log10(best / peak),
    mainLobeHalfWidthBins: half,
    recommendedOverlap: WINDOW_RECOMMENDED_OVERLAP[name],
  });
  figuresCache.set(key, fig);
  return fig;
}
