/**
 * A plain single-bin DFT for the tests, written here so the tests do not depend on the measure
 * module: `X(f) = Σ x[n]·e^{−j2πfn/fs}` over `count` samples from `from`. With a whole number of
 * cycles in the window there is no leakage, so a tone of amplitude A reads |X| = A·count/2 (real)
 * or A·count (complex).
 */
export function dftBin(
  x: ArrayLike<number>,
  from: number,
  count: number,
  frequencyHz: number,
  sampleRate: number,
): { re: number; im: number } {
  let re = 0;
  let im = 0;
  const w = (2 * Math.PI * frequencyHz) / sampleRate;
  for (let n = 0; n < count; n++) {
    const v = x[from + n]!;
    re += v * Math.cos(w * n);
    im -= v * Math.sin(w * n);
  }
  return { re, im };
}

/** Complex single-bin DFT of I + jQ at `frequencyHz` (negative for the image). */
export function dftBinIq(
  i: ArrayLike<number>,
  q: ArrayLike<number>,
  from: number,
  count: number,
  frequencyHz: number,
  sampleRate: number,
): { re: number; im: number } {
  const a = dftBin(i, from, count, frequencyHz, sampleRate);
  const b = dftBin(q, from, count, frequencyHz, sampleRate);
  // X_I + j·X_Q
  return { re: a.re - b.im, im: a.im + b.re };
}

/** Number of positions where two float arrays differ bitwise (NaN-safe, −0 ≠ +0). */
export function bitDiffs(a: Float32Array, b: Float32Array): number {
  const ua = new Uint32Array(a.buffer, a.byteOffset, a.length);
  const ub = new Uint32Array(b.buffer, b.byteOffset, b.length);
  let d = a.length === b.length ? 0 : Math.abs(a.length - b.length);
  for (let k = 0; k < Math.min(a.length, b.length); k++) if (ua[k] !== ub[k]) d++;
  return d;
}
