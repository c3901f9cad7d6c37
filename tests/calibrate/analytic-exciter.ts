/**
 * Analytic test surfaces for the calibration tests (no simulate/ dependency): the exact
 * opposite-sideband suppression of a Q path with gain ratio g and phase error φ,
 * IRR = (1 + 2g·cosφ + g²)/(1 − 2g·cosφ + g²) (K. Schmidt, QEX Aug 1994 §2, via
 * core imageRejectionDb), and the carrier of a tone of peak amplitude A with DC (dI, dQ),
 * 20·log10(|d|/A) dBc (docs/REFERENCES.md §1). Readings add a floor and Gaussian noise in dB.
 */
import { createRng, type Rng } from '../../src/core/rng.js';
import type { Trims } from '../../src/core/trims.js';
import { degToRad, imageRejectionDb } from '../../src/core/units.js';

/** An imperfect I/Q path: Q gain ratio and phase error, DC offsets, tone amplitude, DC gain per channel. */
export interface AnalyticDevice {
  gain: number;
  phaseRad: number;
  dcI: number;
  dcQ: number;
  toneAmplitude: number;
  /** Gain of DC on the Q channel relative to I (1 = equal); 0 on both = AC coupled. */
  dcGainI: number;
  dcGainQ: number;
}

/** Draws a device whose sideband and carrier start between `lo` and `hi` dB down. */
export function drawAnalyticDevice(rng: Rng, lo = 30, hi = 45): AnalyticDevice {
  const sb = lo + (hi - lo) * rng.uniform();
  const cr = lo + (hi - lo) * rng.uniform();
  const m = 2 * 10 ** (-sb / 20);
  const a = 2 * Math.PI * rng.uniform();
  const A = 10 ** (-(3 + 17 * rng.uniform()) / 20);
  const d = A * 10 ** (-cr / 20);
  const b = 2 * Math.PI * rng.uniform();
  return {
    gain: 1 + m * Math.cos(a),
    phaseRad: m * Math.sin(a),
    dcI: d * Math.cos(b),
    dcQ: d * Math.sin(b),
    toneAmplitude: A,
    dcGainI: 1,
    dcGainQ: 1 + 0.02 * rng.normal(),
  };
}

/** True (noiseless, floorless) unwanted sideband with trims applied, dBc. */
export function trueSidebandDbc(dev: AnalyticDevice, t: Pick<Trims, 'gainDb' | 'phaseDeg'>): number {
  return -imageRejectionDb(dev.gain * 10 ** (t.gainDb / 20), dev.phaseRad + degToRad(t.phaseDeg));
}

/** True carrier with DC trims applied, dBc. */
export function trueCarrierDbc(dev: AnalyticDevice, t: Pick<Trims, 'dcI' | 'dcQ'>): number {
  const x = dev.dcI + dev.dcGainI * t.dcI;
  const y = dev.dcQ + dev.dcGainQ * t.dcQ;
  return 20 * Math.log10(Math.hypot(x, y) / dev.toneAmplitude);
}

/**
 * A noisy analyzer over a device: floor (dBc), noise (dB), outliers of `outlierDb` with probability
 * `outlierRate`, all high (`outlierSign` 'high', the default) or high or low with equal odds ('either').
 */
export function analyzer(
  dev: AnalyticDevice,
  opts: {
    seed: number;
    floorDbc?: number;
    noiseDb?: number;
    outlierRate?: number;
    outlierDb?: number;
    outlierSign?: 'high' | 'either';
  },
): { sideband(t: Trims): number; carrier(t: Trims): number; calls: number } {
  const rng = createRng(opts.seed);
  const floor = 10 ** ((opts.floorDbc ?? -70) / 10);
  const noise = opts.noiseDb ?? 0.5;
  const read = (db: number): number => {
    let v = 10 * Math.log10(10 ** (db / 10) + floor) + noise * rng.normal();
    if (rng.uniform() < (opts.outlierRate ?? 0)) {
      const sign = opts.outlierSign === 'either' && rng.uniform() < 0.5 ? -1 : 1;
      v += sign * (opts.outlierDb ?? 10);
    }
    return v;
  };
  const a = {
    calls: 0,
    sideband(t: Trims) {
      a.calls++;
      return read(trueSidebandDbc(dev, t));
    },
    carrier(t: Trims) {
      a.calls++;
      return read(trueCarrierDbc(dev, t));
    },
  };
  return a;
}

/** Quantile of a list (nearest rank, q in 0…1). */
export function quantile(xs: readonly number[], q: number): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.max(0, Math.round(q * (s.length - 1))))]!;
}
