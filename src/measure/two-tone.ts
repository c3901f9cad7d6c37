/**
 * Two-tone readings: the two tones, their peak envelope power (PEP), and the odd-order
 * intermodulation products `m·f1 − (m−1)·f2` and `m·f2 − (m−1)·f1` (order 2m−1: 3rd, 5th, 7th…),
 * relative to one tone and to PEP.
 *
 * PEP: two tones of peak amplitudes A1, A2 have an envelope that peaks at A1 + A2, so PEP reads as
 * a sine of amplitude A1 + A2: `20·log10(A1 + A2)` dBFS. For equal tones each tone is 6.02 dB
 * below PEP and a product X dB below one tone is X + 6.02 dB below PEP (docs/REFERENCES.md §5;
 * Krauss, Bostian & Raab, Solid State Radio Engineering, p. 509: Ppeak = n²·Ptone).
 */
import { OrthotoneError } from '../core/errors.js';
import { requireInteger } from '../core/validate.js';
import { type Capture, isIqCapture } from './signal.js';
import { createToneReader, type ToneOptions, type ToneReading } from './tones.js';

/** Options for {@link measureTwoTone}. */
export interface TwoToneOptions extends ToneOptions {
  /** Highest odd product order read (3, 5, 7 or 9; default 5). */
  maxOrder: number;
}

/** One intermodulation product. */
export interface ProductReading {
  /** Odd order (3, 5, …). */
  order: number;
  /** `low` lies below the lower tone, `high` above the upper one. */
  side: 'low' | 'high';
  /** Where it was read, Hz (from the measured tone frequencies). */
  frequencyHz: number;
  reading: ToneReading;
  /** Relative to one tone (the mean power of the two tones), dBc (negative). */
  dbcTone: number;
  /** Relative to PEP, dB (negative). */
  dbPep: number;
}

/** A two-tone reading. */
export interface TwoToneReading {
  tones: [ToneReading, ToneReading];
  /** Level of one tone used as reference: mean power of the two, dBFS. */
  toneDbfs: number;
  /** Peak envelope power as the level of a sine of amplitude A1 + A2, dBFS. */
  pepDbfs: number;
  /** Tone 2 level minus tone 1 level, dB (0 for a balanced test). */
  toneImbalanceDb: number;
  /** Every product read, by order then side. Products outside the capture's band are left out. */
  products: ProductReading[];
  /** Worst (highest) 3rd-order product relative to one tone, dBc. */
  imd3Dbc: number;
  /** Worst 3rd-order product relative to PEP, dB. */
  imd3DbPep: number;
  /** Worst 5th-order product relative to one tone, dBc (NaN when not read). */
  imd5Dbc: number;
  /** Worst 5th-order product relative to PEP, dB (NaN when not read). */
  imd5DbPep: number;
}

/**
 * Reads a two-tone test: both tones, PEP, and odd-order products up to `maxOrder`.
 * @param capture real samples (receiver audio: give the tones' audio frequencies) or {i, q}.
 * @param sampleRate Hz.
 * @param tonesHz the two tone frequencies as they appear in the capture, Hz.
 * @param options merged over the tone defaults; `maxOrder` default 5.
 * @throws {OrthotoneError} INVALID_ARGUMENT (not two distinct tones, bad order, tone beyond
 *   Nyquist), CAPTURE_TOO_SHORT, TONES_UNRESOLVED (the tone spacing needs longer frames).
 * Reference: docs/REFERENCES.md §5 (PEP of two equal tones); products at m·f1 − (m−1)·f2, standard
 * intermodulation arithmetic.
 * @example
 * ```ts
 * import { createSignalSource, measureTwoTone } from 'orthotone';
 *
 * // 700 and 1900 Hz (common practice, no source) through a slightly curved transfer: x + 0.01·x³.
 * const src = createSignalSource({ kind: 'two-tone', frequenciesHz: [700, 1900], levelDbfs: -7 }, 48000);
 * const x = new Float32Array(48000);
 * src.fill(x);
 * for (let k = 0; k < x.length; k++) x[k] = x[k]! + 0.01 * x[k]! ** 3;
 * const r = measureTwoTone(x, 48000, [700, 1900]);
 * console.log(r.products.map((p) => `${p.frequencyHz} Hz ${p.dbPep.toFixed(1)} dB below PEP`).join(", "));
 * ```
 */
export function measureTwoTone(
  capture: Capture,
  sampleRate: number,
  tonesHz: readonly [number, number],
  options: Partial<TwoToneOptions> = {},
): TwoToneReading {
  if (!Array.isArray(tonesHz) || tonesHz.length !== 2 || tonesHz[0] === tonesHz[1]) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `two-tone test needs two different tone frequencies, e.g. [700, 1900]; got ${JSON.stringify(tonesHz)}`,
      tonesHz,
    );
  }
  const maxOrder = requireInteger('maxOrder', options.maxOrder ?? 5, 3, 9);
  if (maxOrder % 2 === 0) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `maxOrder ${maxOrder} must be odd: use 3, 5, 7 or 9`,
      maxOrder,
    );
  }
  const [f1, f2] = [...tonesHz].sort((a, b) => a - b) as [number, number];
  const complex = isIqCapture(capture);
  const nyq = sampleRate / 2;
  const inBand = (f: number): boolean => (complex ? Math.abs(f) < nyq : f > 0 && f < nyq);
  // In a real capture a product at a negative frequency shows at its magnitude (cos is even).
  const fold = (f: number): number => (complex ? f : Math.abs(f));
  const nominal: { order: number; side: 'low' | 'high'; hz: number }[] = [];
  for (let order = 3; order <= maxOrder; order += 2) {
    const m = (order + 1) / 2;
    nominal.push({ order, side: 'low', hz: fold(m * f1 - (m - 1) * f2) });
    nominal.push({ order, side: 'high', hz: fold(m * f2 - (m - 1) * f1) });
  }
  const usable = nominal.filter(
    (p, k) => inBand(p.hz) && nominal.findIndex((o) => o.hz === p.hz) === k && p.hz !== f1 && p.hz !== f2,
  );
  const reader = createToneReader(capture, sampleRate, [f1, f2, ...usable.map((p) => p.hz)], options);
  const t1 = reader.read(f1);
  const t2 = reader.read(f2);
  const d = t2.frequencyHz - t1.frequencyHz;
  const toneP = (t1.amplitude ** 2 + t2.amplitude ** 2) / 2;
  const toneDbfs = 10 * Math.log10(toneP);
  const pepDbfs = 20 * Math.log10(t1.amplitude + t2.amplitude);
  const products: ProductReading[] = [];
  for (const p of usable) {
    const m = (p.order + 1) / 2;
    const hz = fold(p.side === 'low' ? t1.frequencyHz - (m - 1) * d : t2.frequencyHz + (m - 1) * d);
    const at = inBand(hz) ? hz : p.hz;
    const reading = reader.read({ hz: at, refine: 'never' });
    products.push({
      order: p.order,
      side: p.side,
      frequencyHz: at,
      reading,
      dbcTone: reading.levelDbfs - toneDbfs,
      dbPep: reading.levelDbfs - pepDbfs,
    });
  }
  const worst = (order: number, key: 'dbcTone' | 'dbPep'): number => {
    const v = products.filter((p) => p.order === order).map((p) => p[key]);
    return v.length ? Math.max(...v) : Number.NaN;
  };
  return {
    tones: [t1, t2],
    toneDbfs,
    pepDbfs,
    toneImbalanceDb: t2.levelDbfs - t1.levelDbfs,
    products,
    imd3Dbc: worst(3, 'dbcTone'),
    imd3DbPep: worst(3, 'dbPep'),
    imd5Dbc: worst(5, 'dbcTone'),
    imd5DbPep: worst(5, 'dbPep'),
  };
}
