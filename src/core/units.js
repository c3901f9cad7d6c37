/**
 * Unit conversions. Levels in dB, phase in degrees in the public API (radians inside).
 * dBFS follows AES17: a full-scale sine (peak 1.0) reads 0 dBFS.
 */
/**
 * Amplitude (voltage) ratio to dB: `20·log10(x)`. Returns -Infinity for 0 and NaN for a negative
 * ratio. Definition of the decibel for field quantities, common practice, no source.
 * @throws never
 */
export function ampToDb(x) {
  return 20 * Math.log10(x);
}
/**
 * dB to amplitude (voltage) ratio: `10^(dB/20)`.
 * @throws never
 */
export function dbToAmp(db) {
  return 10 ** (db / 20);
}
/**
 * Power ratio to dB: `10·log10(p)`. Returns -Infinity for 0 and NaN for a negative ratio.
 * @throws never
 */
export function powToDb(p) {
  return 10 * Math.log10(p);
}
/**
 * dB to power ratio: `10^(dB/10)`.
 * @throws never
 */
export function dbToPow(db) {
  return 10 ** (db / 10);
}
/**
 * Degrees to radians.
 * @throws never
 */
export function degToRad(deg) {
  return (deg * Math.PI) / 180;
}
/**
 * Radians to degrees.
 * @throws never
 */
export function radToDeg(rad) {
  return (rad * 180) / Math.PI;
}
/**
 * Wraps a phase in radians to (-π, π]. A non-finite input gives NaN.
 * @throws never
 */
export function wrapPi(rad) {
  let r = rad % (2 * Math.PI);
  if (r <= -Math.PI) r += 2 * Math.PI;
  else if (r > Math.PI) r -= 2 * Math.PI;
  return r;
}
/**
 * Opposite-sideband suppression in dB for gain ratio `g` and phase error `phiRad` between I and Q:
 * `IRR = (1 + 2g·cosφ + g²) / (1 − 2g·cosφ + g²)`.
 * `g` is the Q/I amplitude ratio (1 = balanced, dimensionless), `phiRad` the quadrature error in
 * radians; the result is wanted/unwanted power in dB (positive; +Infinity for a perfect pair).
 * Reference: K. Schmidt, "Phase-Shift Network Analysis and Optimization", QEX Aug 1994, §2.
 * @throws never
 */
export function imageRejectionDb(g, phiRad) {
  const c = 2 * g * Math.cos(phiRad);
  const num = 1 + c + g * g;
  const den = 1 - c + g * g;
  if (den <= 0) return Number.POSITIVE_INFINITY;
  return 10 * Math.log10(num / den);
}
/**
 * Peak amplitude (full-scale units) of a sine at `dbfs` dBFS (AES17: 0 dBFS = peak 1.0).
 * @throws never
 */
export function dbfsToPeak(dbfs) {
  return dbToAmp(dbfs);
}
/**
 * Level in dBFS (AES17) of a sine of peak amplitude `peak` in full-scale units.
 * @throws never
 */
export function peakToDbfs(peak) {
  return ampToDb(peak);
}
