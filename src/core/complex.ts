/**
 * Minimal complex arithmetic for response evaluation (not used in audio hot paths).
 * Written here because it is a handful of pure functions on {re, im} pairs.
 */
export interface Complex {
  re: number;
  im: number;
}

export const cadd = (a: Complex, b: Complex): Complex => ({ re: a.re + b.re, im: a.im + b.im });
export const csub = (a: Complex, b: Complex): Complex => ({ re: a.re - b.re, im: a.im - b.im });
export const cmul = (a: Complex, b: Complex): Complex => ({
  re: a.re * b.re - a.im * b.im,
  im: a.re * b.im + a.im * b.re,
});
export function cdiv(a: Complex, b: Complex): Complex {
  const d = b.re * b.re + b.im * b.im;
  return { re: (a.re * b.re + a.im * b.im) / d, im: (a.im * b.re - a.re * b.im) / d };
}
export const cabs = (a: Complex): number => Math.hypot(a.re, a.im);
export const carg = (a: Complex): number => Math.atan2(a.im, a.re);
/** e^{jθ}. */
export const cexpj = (theta: number): Complex => ({ re: Math.cos(theta), im: Math.sin(theta) });
