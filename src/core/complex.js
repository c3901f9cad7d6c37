/**
 * Minimal complex arithmetic on `{ re, im }` pairs, for response evaluation (never in audio hot
 * paths). Written here because it is a handful of pure one-line functions; a library would add a
 * dependency for no gain. Reference: any text on complex numbers, e.g. Oppenheim & Schafer,
 * Discrete-Time Signal Processing, appendix on complex arithmetic.
 */
/** Sum a + b. @throws never. */
export const cadd = (a, b) => ({ re: a.re + b.re, im: a.im + b.im });
/** Difference a − b. @throws never. */
export const csub = (a, b) => ({ re: a.re - b.re, im: a.im - b.im });
/** Product a·b. @throws never. */
export const cmul = (a, b) => ({
  re: a.re * b.re - a.im * b.im,
  im: a.re * b.im + a.im * b.re,
});
/** Quotient a / b (b ≠ 0; b = 0 gives non-finite parts). @throws never. */
export function cdiv(a, b) {
  const d = b.re * b.re + b.im * b.im;
  return { re: (a.re * b.re + a.im * b.im) / d, im: (a.im * b.re - a.re * b.im) / d };
}
/** Magnitude |a|. @throws never. */
export const cabs = (a) => Math.hypot(a.re, a.im);
/** Argument of a, radians in (−π, π]. @throws never. */
export const carg = (a) => Math.atan2(a.im, a.re);
/** e^{jθ} for θ in radians. @throws never. */
export const cexpj = (theta) => ({ re: Math.cos(theta), im: Math.sin(theta) });
