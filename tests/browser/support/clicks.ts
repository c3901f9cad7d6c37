/**
 * Click detection for trim changes: the second difference `x[n] − 2x[n−1] + x[n−2]` of a sinusoid
 * of amplitude A at ω never exceeds `4A·sin²(ω/2)` in magnitude; a step in level or phase adds a
 * spike of the size of the step. Written here (a few lines) because no general library offers it.
 */

/** Largest |second difference| of `x` over [from, to). */
export function maxSecondDifference(x: ArrayLike<number>, from: number, to: number): number {
  let m = 0;
  for (let n = Math.max(2, from); n < Math.min(to, x.length); n++) {
    const d = Math.abs(x[n]! - 2 * x[n - 1]! + x[n - 2]!);
    if (d > m) m = d;
  }
  return m;
}

/** The bound `4A·sin²(ω/2)` for a sinusoid of peak `amplitude` at `frequencyHz`. */
export function sineSecondDifferenceBound(
  amplitude: number,
  frequencyHz: number,
  sampleRate: number,
): number {
  const s = Math.sin((Math.PI * frequencyHz) / sampleRate);
  return 4 * amplitude * s * s;
}
