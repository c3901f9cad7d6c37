/**
 * Window leakage: how much power strong components of a capture put at another frequency through
 * the window's sidelobes, anywhere between bins.
 *
 * Why this exists. An averaged spectrum samples the window's transform only at its bins. When a
 * frame holds a whole number of cycles of a tone and the FFT is not zero-padded (power-of-two frames
 * with tones such as 1500 Hz at 48 kHz), every other bin falls on a zero of that tone's leakage, so a
 * noise-free spectrum's floor reads as rounding noise (−300 dB) although between the bins the tone
 * leaks at the window's sidelobe level (about −92 … −160 dB for the Blackman–Harris window). A tone
 * reader that compares a weak or absent tone with that floor alone finds it "clear of the floor" and
 * refines its frequency onto the sidelobes between bins. Tone readers therefore compare with the
 * floor plus the leakage bound computed here.
 *
 * Method: the transform of a periodic cosine-sum window `w[n] = Σ c_k cos(2πkn/N)` in closed form
 * (Heinzel 2002, §C; each term two Dirichlet kernels), written as `sin(πν)·F(ν)`: `|F(ν)|` is the
 * envelope the sidelobes touch at their peaks, the most a unit tone ν bins away can leak at any
 * sub-bin alignment.
 * Reference: G. Heinzel, A. Rüdiger, R. Schilling, "Spectrum and spectral density estimation by the
 * Discrete Fourier transform (DFT)…", MPI Gravitationsphysik, 2002 (cosine-sum windows); F. J. Harris,
 * Proc. IEEE 66(1):51, 1978 (leakage and sidelobes).
 */
import { WINDOW_COEFFICIENTS, WINDOW_MAIN_LOBE_HALF_WIDTH_BINS, windowFigures } from '../core/windows.js';
import { binFrequency } from './spectrum.js';
/**
 * Sidelobe envelope of a periodic cosine-sum window: the largest `|W(ν')|² / |W(0)|²` over sub-bin
 * positions around `offsetBins` (exact at the sidelobe peaks, an upper bound between them). Within
 * the main lobe (|ν| < number of cosine terms) it returns 1. Periodic in ν with period N.
 * @param window window name.
 * @param frameLength N, samples (≥ 2).
 * @param offsetBins distance from the tone, frame bins (`Δf·N/fs`), any sign.
 * @returns power ratio, 0 < r ≤ 1.
 * @throws never (an unknown window name falls through the caller's validation first).
 * Reference: Heinzel 2002 §C (closed form of the cosine-sum window's transform).
 */
export function windowLeakageEnvelope(window, frameLength, offsetBins) {
  const c = WINDOW_COEFFICIENTS[window];
  const n = frameLength;
  let v = Math.abs(offsetBins) % n;
  if (v > n / 2) v = n - v;
  if (v < c.length) return 1;
  // X(ν) = e^{−jπν(N−1)/N}·sin(πν)·F(ν), F(ν) = Σ_k (c_k/2)(−1)^k [e^{jπk(N−1)/N}/sin(π(ν−k)/N)
  //   + e^{−jπk(N−1)/N}/sin(π(ν+k)/N)]  (k = 0: c_0/sin(πν/N)).
  let re = c[0] / Math.sin((Math.PI * v) / n);
  let im = 0;
  for (let k = 1; k < c.length; k++) {
    const a = ((k % 2 ? -1 : 1) * c[k]) / 2;
    const ph = (Math.PI * k * (n - 1)) / n;
    const lo = a / Math.sin((Math.PI * (v - k)) / n);
    const hi = a / Math.sin((Math.PI * (v + k)) / n);
    re += (lo + hi) * Math.cos(ph);
    im += (lo - hi) * Math.sin(ph);
  }
  const peak = n * c[0];
  return Math.min(1, (re * re + im * im) / (peak * peak));
}
/**
 * Distance from the tone, frame bins, beyond which each window's leakage envelope only falls (up to
 * N/2). Found by scanning the envelope at 1/64 bin for N = 256 … 65536: the last rise is at 0
 * (rectangular, Hann), 36.94 (Blackman–Harris) and 19.14 bins (flat-top); tests/measure/leakage.test.ts
 * checks these bounds.
 */
export const ENVELOPE_MONOTONE_BEYOND_BINS = Object.freeze({
  rectangular: 1,
  hann: 2,
  'blackman-harris': 40,
  flattop: 24,
});
/**
 * The `count` strongest local maxima of an averaged spectrum, strongest first, each raised by the
 * window's scallop loss (plus 0.5 dB) so it bounds the component's true power wherever it sits
 * between bins.
 * @param s an averaged spectrum ({@link computeSpectrum}).
 * @param count how many peaks to keep (≥ 1).
 * @throws never.
 * Reference: Heinzel 2002 §10 (scallop loss); the figure is computed by `windowFigures`.
 */
export function strongestPeaks(s, count) {
  const p = s.power;
  const nb = p.length;
  const topK = [];
  const topV = [];
  for (let k = 0; k < nb; k++) {
    const v = p[k];
    if (!(v > 0)) continue;
    const before = k > 0 ? p[k - 1] : s.complex ? p[nb - 1] : 0;
    const after = k < nb - 1 ? p[k + 1] : s.complex ? p[0] : 0;
    if (v < before || v < after) continue;
    if (topV.length === count && v <= topV[count - 1]) continue;
    // Insertion into the short list kept strongest first.
    let j = topV.length < count ? topV.length : count - 1;
    while (j > 0 && topV[j - 1] < v) {
      topV[j] = topV[j - 1];
      topK[j] = topK[j - 1];
      j--;
    }
    topV[j] = v;
    topK[j] = k;
  }
  const margin = 10 ** ((Math.max(0, windowFigures(s.window).scallopLossDb) + 0.5) / 10);
  return topK.map((k, j) => ({ hz: binFrequency(s, k), power: topV[j] * margin }));
}
/**
 * Upper bound of the power that the given peaks leak to frequencies within `±spanHz` of `hz`
 * through the window's sidelobes, in the spectrum's units (amplitudes summed, since leakage of
 * several components adds coherently within a frame). Peaks within `ownHz` of `hz` (the
 * component being read) are left out. For a real capture each peak's image at −f counts too.
 * @param s the spectrum the peaks came from.
 * @param peaks from {@link strongestPeaks}.
 * @param hz where the reading is made, Hz.
 * @param spanHz how far the reading may move from `hz`, Hz (≥ 0).
 * @param ownHz peaks this close to `hz` belong to the component itself, Hz.
 * @throws never.
 * Reference: see the file header.
 */
export function leakageNear(s, peaks, hz, spanHz, ownHz) {
  const half = WINDOW_MAIN_LOBE_HALF_WIDTH_BINS[s.window];
  // The peak's bin is within half an FFT bin of the component; the reading may move by spanHz.
  const slack = (spanHz + s.binHz / 2) / s.resolutionHz;
  const fs = s.sampleRate;
  const fromDistance = (dHz, power) => {
    let d = ((dHz % fs) + fs) % fs;
    if (d > fs / 2) d = fs - d;
    const v = d / s.resolutionHz;
    if (v - slack < half) return power;
    const nearest = v - slack;
    // Beyond ENVELOPE_MONOTONE_BEYOND_BINS the envelope only falls: its value at the near end bounds the span.
    if (nearest >= ENVELOPE_MONOTONE_BEYOND_BINS[s.window]) {
      return power * Math.min(1, windowLeakageEnvelope(s.window, s.frameLength, nearest));
    }
    // Nearer, it is not monotone (Blackman–Harris and flat-top sidelobes dip and rise again): take
    // its largest value over the span, sampled at ≤ 1/4 bin (it varies on the scale of a bin), with
    // 0.1 dB to spare for the sampling.
    const steps = Math.min(256, Math.ceil(8 * slack) + 1);
    let worst = 0;
    for (let j = 0; j <= steps; j++) {
      const u = v - slack + (2 * slack * j) / steps;
      worst = Math.max(worst, windowLeakageEnvelope(s.window, s.frameLength, u));
    }
    return power * Math.min(1, 1.025 * worst);
  };
  // Leakage of different components adds coherently in each frame: sum amplitudes, not powers.
  let amp = 0;
  for (const pk of peaks) {
    if (Math.abs(pk.hz - hz) <= ownHz) continue;
    amp += Math.sqrt(fromDistance(pk.hz - hz, pk.power));
    if (!s.complex && pk.hz > 0) amp += Math.sqrt(fromDistance(pk.hz + hz, pk.power));
  }
  return amp * amp;
}
