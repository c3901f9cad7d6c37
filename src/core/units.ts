/**
 * Unit conversions. Levels in dB, phase in degrees in the public API (radians inside).
 * dBFS follows AES17: a full-scale sine (peak 1.0) reads 0 dBFS.
 */

/** Amplitude ratio to dB: `20·log10(x)`. Returns -Infinity for 0. */
export function ampToDb(x: number): number {
  return 20 * Math.log10(x);
}

/** dB to amplitude ratio: `10^(dB/20)`. */
export function dbToAmp(db: number): number {
  return 10 ** (db / 20);
}

/** Power ratio to dB: `10·log10(p)`. */
export function powToDb(p: number): number {
  return 10 * Math.log10(p);
}

/** dB to power ratio: `10^(dB/10)`. */
export function dbToPow(db: number): number {
  return 10 ** (db / 10);
}

/** Degrees to radians. */
export function degToRad(deg: number): number {
  return (deg * Math.PI) / 180;
}

/** Radians to degrees. */
export function radToDeg(rad: number): number {
  return (rad * 180) / Math.PI;
}

/** Wraps a phase in radians to (-π, π]. */
export function wrapPi(rad: number): number {
  let r = rad % (2 * Math.PI);
  if (r <= -Math.PI) r += 2 * Math.PI;
  else if (r > Math.PI) r -= 2 * Math.PI;
  return r;
}

/**
 * Opposite-sideband suppression in dB for gain ratio `g` and phase error `phiRad` between I and Q:
 * `IRR = (1 + 2g·cosφ + g²) / (1 − 2g·cosφ + g²)`.
 * Reference: K. Schmidt, "Phase-Shift Network Analysis and Optimization", QEX Aug 1994, §2.
 */
export function imageRejectionDb(g: number, phiRad: number): number {
  const c = 2 * g * Math.cos(phiRad);
  const num = 1 + c + g * g;
  const den = 1 - c + g * g;
  if (den <= 0) return Number.POSITIVE_INFINITY;
  return 10 * Math.log10(num / den);
}

/** Peak amplitude of a sine at `dbfs` (AES17: 0 dBFS = peak 1.0). */
export function dbfsToPeak(dbfs: number): number {
  return dbToAmp(dbfs);
}

/** dBFS (AES17) of a sine of peak amplitude `peak`. */
export function peakToDbfs(peak: number): number {
  return ampToDb(peak);
}
