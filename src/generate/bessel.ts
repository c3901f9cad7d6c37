/**
 * Modified Bessel function of the first kind, order 0, for the Kaiser windows of this layer (kept
 * internal to generate/ and not re-exported, so the package exports one public Kaiser helper).
 */

/**
 * `I0(x) = Σ ((x/2)^k / k!)²` (Abramowitz & Stegun 9.6.12), summed to full double precision.
 * @param x argument (any finite number).
 */
export function besselI0(x: number): number {
  const y = (x * x) / 4;
  let term = 1;
  let sum = 1;
  for (let k = 1; k < 500; k++) {
    term *= y / (k * k);
    sum += term;
    if (term < sum * 1e-17) break;
  }
  return sum;
}
