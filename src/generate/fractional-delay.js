/**
 * Fractional-delay interpolator for the skew trim (DESIGN.md §4 step 2): a Kaiser-windowed sinc of
 * {@link FRACTIONAL_DELAY_TAPS} taps, tabulated at {@link FRACTIONAL_DELAY_PHASES} fractional
 * positions and linearly interpolated between them, so a delay can change every sample (a ramped
 * skew) without evaluating Bessel functions in the audio path.
 *
 * Method: band-limited interpolation with a windowed sinc table (J. O. Smith, "Digital Audio
 * Resampling", CCRMA, and T. I. Laakso, V. Välimäki, M. Karjalainen & U. K. Laine, "Splitting the
 * unit delay", IEEE Signal Processing Magazine 13(1), 1996, §III.B windowed sinc). Kaiser window:
 * J. F. Kaiser, "Nonrecursive digital filter design using the I0-sinh window function", 1974.
 *
 * Accuracy (complex error `|H(e^{jω}) − e^{−jωd}|` over every fractional delay, checked in
 * tests/generate/fractional-delay.test.ts): below {@link FRACTIONAL_DELAY_ACCURACY}.errorDbTo025 for
 * frequencies up to 0.25·fs and below errorDbTo04 up to 0.4·fs. An error e limits opposite-sideband
 * suppression to about `20·log10(2/e)`, so skew never limits suppression at audio frequencies.
 * Above 0.4·fs the error grows quickly (the window's transition band): do not rely on skew there.
 * At integer delays the taps are an exact unit impulse, so whole-sample skew is an exact delay.
 *
 * Written here rather than taken from a library: it needs a precomputed table shared by every
 * generator, tap interpolation without allocation, and exactness at integer delays.
 */
import { besselI0 } from '../design/kaiser.js';
/** Number of taps of the interpolator (even). */
export const FRACTIONAL_DELAY_TAPS = 32;
/** Number of tabulated fractional positions per sample. */
export const FRACTIONAL_DELAY_PHASES = 512;
/** Kaiser window β (chosen to minimise the worst error up to 0.4·fs for 32 taps). */
export const FRACTIONAL_DELAY_KAISER_BETA = 9;
/** Documented worst complex error of the interpolator, dB re the ideal delay (see module doc). */
export const FRACTIONAL_DELAY_ACCURACY = Object.freeze({ errorDbTo025: -90, errorDbTo04: -80 });
/**
 * The windowed-sinc kernel at `t` samples from its centre: `sinc(t)·w(t)`, w the Kaiser window of
 * half-width {@link FRACTIONAL_DELAY_TAPS}/2 and β = {@link FRACTIONAL_DELAY_KAISER_BETA}.
 * @param t offset from the kernel centre, samples.
 * @returns the kernel value (dimensionless; 1 at the centre, 0 at and beyond ±TAPS/2 samples).
 * @throws never
 */
export function windowedSinc(t) {
  const half = FRACTIONAL_DELAY_TAPS / 2;
  const u = t / half;
  if (u <= -1 || u >= 1) return 0;
  const w =
    besselI0(FRACTIONAL_DELAY_KAISER_BETA * Math.sqrt(1 - u * u)) / besselI0(FRACTIONAL_DELAY_KAISER_BETA);
  if (t === 0) return 1;
  const x = Math.PI * t;
  return (Math.sin(x) / x) * w;
}
let table = null;
/**
 * The shared tap table, built on first use: `(PHASES + 1)` rows of TAPS taps; row p realises the
 * delay `TAPS/2 − 1 + p/PHASES` samples. Row 0 is exactly a unit impulse at tap TAPS/2 − 1 and the
 * last row exactly a unit impulse at tap TAPS/2.
 */
function tapTable() {
  if (table) return table;
  const m = FRACTIONAL_DELAY_TAPS;
  const p = FRACTIONAL_DELAY_PHASES;
  const t = new Float64Array((p + 1) * m);
  const centre = m / 2 - 1;
  for (let r = 0; r <= p; r++) {
    const frac = r / p;
    for (let k = 0; k < m; k++) {
      const off = k - centre - frac;
      // sinc is exactly zero at the other integers: keep the integer rows exact impulses.
      t[r * m + k] = Number.isInteger(off) ? (off === 0 ? 1 : 0) : windowedSinc(off);
    }
  }
  table = t;
  return t;
}
/**
 * Writes the interpolator taps for a fractional position into `out[offset … offset+TAPS−1]`.
 * Filtering `y[n] = Σ_k out[k]·x[n − k]` delays by `TAPS/2 − 1 + frac` samples. Allocation-free
 * after the first call (which builds the shared table).
 * @param frac fractional delay in [0, 1]; values outside are clamped.
 * @param out destination, length ≥ offset + TAPS.
 * @param offset first index written.
 * @throws never (NaN `frac` reads as 0; writes past the end of `out` are dropped, as for any typed
 *   array).
 */
export function fractionalDelayTaps(frac, out, offset = 0) {
  const m = FRACTIONAL_DELAY_TAPS;
  const tbl = tapTable();
  let x = frac * FRACTIONAL_DELAY_PHASES;
  if (!(x > 0)) x = 0;
  else if (x > FRACTIONAL_DELAY_PHASES) x = FRACTIONAL_DELAY_PHASES;
  let r = Math.floor(x);
  if (r >= FRACTIONAL_DELAY_PHASES) r = FRACTIONAL_DELAY_PHASES - 1;
  const w = x - r;
  const a = r * m;
  const b = a + m;
  if (w === 0) {
    for (let k = 0; k < m; k++) out[offset + k] = tbl[a + k];
  } else if (w === 1) {
    for (let k = 0; k < m; k++) out[offset + k] = tbl[b + k];
  } else {
    const v = 1 - w;
    for (let k = 0; k < m; k++) out[offset + k] = v * tbl[a + k] + w * tbl[b + k];
  }
}
