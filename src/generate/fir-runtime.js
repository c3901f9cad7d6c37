/**
 * Runtime for a Hilbert FIR network (DESIGN.md §3, kind 'fir'): Q is the FIR (textbook sign), I is a
 * pure delay of (N−1)/2 samples.
 *
 * For a type III filter (odd length N, `h[c] = 0`, `h[c+k] = −h[c−k]`, c = (N−1)/2) the output is
 * folded, `Q[n] = Σ_{k=1..c} h[c+k]·(x[n−c−k] − x[n−c+k])`, halving the multiplies; when every tap
 * at an even offset from the centre is zero (a band symmetric about fs/4, Reilly, Frazer & Boashash,
 * IEEE Trans. SP 42:3241, 1994) only odd k are visited, quartering them (as liquid-dsp's firhilb
 * does). Any other odd-length FIR is run as a plain convolution over its non-zero taps.
 *
 * The history is one over-allocated linear buffer: new samples are appended, every output reads one
 * contiguous span, and the last N−1 samples are moved to the front only when the buffer fills
 * (STYLE.md habit 3), so no index wraps in the inner loop.
 */
import { OrthotoneError } from '../core/errors.js';
import { RUNTIME_CHUNK } from './network-runtime.js';

/** Spare room in the history beyond the N−1 samples kept, samples (amortises the move). */
const HISTORY_SPARE = 16 * RUNTIME_CHUNK;
/**
 * Creates the runtime for a Hilbert FIR network.
 * @param taps the Q filter's taps (odd length ≥ 3, finite), textbook sign (`2/(πn)` for odd n).
 * @returns a {@link NetworkRuntime}; I is delayed by `(taps.length − 1)/2` samples.
 * @throws {OrthotoneError} INVALID_DOCUMENT when the length is even or below 3, or a tap is not finite.
 */
export function createFirRuntime(taps) {
  const n = taps.length;
  if (n < 3 || n % 2 === 0) {
    throw new OrthotoneError(
      'INVALID_DOCUMENT',
      `FIR length ${n} must be odd and at least 3 (type III Hilbert FIR)`,
      n,
    );
  }
  taps.forEach((t, k) => {
    if (!Number.isFinite(t)) {
      throw new OrthotoneError('INVALID_DOCUMENT', `taps[${k}] ${String(t)} must be a finite number`, t);
    }
  });
  const c = (n - 1) / 2;
  let antisymmetric = taps[c] === 0;
  for (let k = 1; k <= c && antisymmetric; k++) antisymmetric = taps[c + k] === -taps[c - k];
  let evenZero = antisymmetric;
  for (let k = 2; k <= c && evenZero; k += 2) evenZero = taps[c + k] === 0;
  // Folded coefficients g[j] for the visited offsets k = k0 + j·stride.
  const stride = evenZero ? 2 : 1;
  const folded = [];
  if (antisymmetric) for (let k = 1; k <= c; k += stride) folded.push(taps[c + k]);
  const g = Float64Array.from(folded);
  // General path: non-zero taps and their indices.
  const nzIdx = [];
  const nzVal = [];
  if (!antisymmetric) {
    taps.forEach((t, k) => {
      if (t !== 0) {
        nzIdx.push(k);
        nzVal.push(t);
      }
    });
  }
  const gi = Int32Array.from(nzIdx);
  const gv = Float64Array.from(nzVal);
  const keep = n - 1;
  const multipliesPerSample = antisymmetric ? g.length : gv.length;
  const make = (src) => {
    const st = {
      hist: src ? src.hist.slice() : new Float64Array(keep + HISTORY_SPARE),
      wp: src ? src.wp : keep,
    };
    return {
      kind: 'fir',
      multipliesPerSample,
      process(x, count, outI, outQ) {
        const hist = st.hist;
        let wp = st.wp;
        if (wp + count > hist.length) {
          hist.copyWithin(0, wp - keep, wp);
          wp = keep;
        }
        for (let j = 0; j < count; j++) hist[wp + j] = x[j];
        if (antisymmetric) {
          const m = g.length;
          const s2 = 2 * stride;
          const s3 = 3 * stride;
          const s4 = 4 * stride;
          for (let j = 0; j < count; j++) {
            // centre sample x[n−c] sits at index p; x[n−c−k] at p−k, x[n−c+k] at p+k.
            const p = wp + j - c;
            outI[j] = hist[p];
            // Four accumulators break the add dependency chain; the order is fixed, so the
            // result does not depend on block partitioning.
            let a0 = 0;
            let a1 = 0;
            let a2 = 0;
            let a3 = 0;
            let m4 = 0;
            let k = 1;
            for (; m4 + 3 < m; m4 += 4, k += s4) {
              a0 += g[m4] * (hist[p - k] - hist[p + k]);
              a1 += g[m4 + 1] * (hist[p - k - stride] - hist[p + k + stride]);
              a2 += g[m4 + 2] * (hist[p - k - s2] - hist[p + k + s2]);
              a3 += g[m4 + 3] * (hist[p - k - s3] - hist[p + k + s3]);
            }
            for (; m4 < m; m4++, k += stride) a0 += g[m4] * (hist[p - k] - hist[p + k]);
            outQ[j] = a0 + a1 + (a2 + a3);
          }
        } else {
          const m = gv.length;
          for (let j = 0; j < count; j++) {
            const p = wp + j;
            outI[j] = hist[p - c];
            let a0 = 0;
            for (let t = 0; t < m; t++) a0 += gv[t] * hist[p - gi[t]];
            outQ[j] = a0;
          }
        }
        st.wp = wp + count;
      },
      reset() {
        st.hist.fill(0);
        st.wp = keep;
      },
      clone() {
        return make(st);
      },
    };
  };
  return make();
}
