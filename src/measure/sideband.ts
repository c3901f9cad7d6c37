/**
 * Sideband and carrier readings of a single-tone transmission: the wanted sideband, the unwanted
 * (opposite) sideband and the carrier, captured either as I/Q (complex baseband around the
 * carrier, e.g. from an SDR) or as a receiver's audio with the carrier at a stated audio offset.
 *
 * Frequencies. A tone of `toneHz` sent on the upper sideband puts the wanted component at
 * `carrier + toneHz` and the unwanted one at `carrier − toneHz` (mirror images about the carrier);
 * on the lower sideband the other way round (DESIGN.md §2). In an I/Q capture the carrier sits at
 * `carrierHz` (default 0 Hz). In receiver audio an RF component `δ` above the carrier appears at
 * `offsetHz + δ` (receiver on its upper sideband, tuned `offsetHz` below the carrier) or
 * `offsetHz − δ` (receiver on its lower sideband, tuned above).
 *
 * Suppression figures are positive dB (DESIGN.md §2): 60 dB suppression = −60 dBc.
 */
import { OrthotoneError } from '../core/errors.js';
import { requireFinite, requireOneOf, requirePositive } from '../core/validate.js';
import type { IqCapture } from './signal.js';
import { createToneReader, type ToneOptions, type ToneReading } from './tones.js';

/** Options for {@link measureSideband}. */
export interface SidebandOptions extends ToneOptions {
  /** The modulating audio tone, Hz (> 0). Required. */
  toneHz: number;
  /** The sideband the transmitter is meant to send (default 'upper'). */
  sideband: 'upper' | 'lower';
  /** I/Q captures: the carrier's frequency in the capture, Hz (default 0). */
  carrierHz: number;
  /** Receiver-audio captures: the audio frequency at which the carrier appears, Hz. */
  offsetHz: number | undefined;
  /** Receiver-audio captures: the receiver's own demodulation sideband (default 'upper'). */
  receiverSideband: 'upper' | 'lower';
}

/** A sideband and carrier reading. */
export interface SidebandReading {
  toneHz: number;
  sideband: 'upper' | 'lower';
  /** The wanted sideband's tone. */
  wanted: ToneReading;
  /** The unwanted (opposite) sideband's tone, read at the mirror of the wanted about the carrier. */
  unwanted: ToneReading;
  /** The carrier. */
  carrier: ToneReading;
  /** Unwanted sideband relative to the wanted, dBc (negative). */
  unwantedDbc: number;
  /** Carrier relative to the wanted, dBc (negative). */
  carrierDbc: number;
  /** Opposite-sideband suppression, dB (positive): `−unwantedDbc`. */
  sidebandSuppressionDb: number;
  /** Carrier suppression, dB (positive): `−carrierDbc`. */
  carrierSuppressionDb: number;
  /** Noise floor near the wanted tone relative to it, per bin, dBc. */
  floorDbc: number;
  /** Largest suppression this capture could show: wanted level above the floor near the unwanted, dB. */
  sidebandMeasurableDb: number;
  /** Largest carrier suppression this capture could show, dB. */
  carrierMeasurableDb: number;
  /** Measured wanted frequency minus its nominal position, Hz (tuning or clock error). */
  frequencyErrorHz: number;
}

/** Defaults for the sideband-specific options. */
export const DEFAULT_SIDEBAND_OPTIONS = Object.freeze({
  sideband: 'upper' as const,
  carrierHz: 0,
  offsetHz: undefined,
  receiverSideband: 'upper' as const,
});

/**
 * Reads the wanted sideband, the unwanted sideband and the carrier of a single-tone transmission.
 *
 * With `q` given, `(i, q)` is an I/Q capture of the RF around the carrier (complex baseband). With
 * `q` null or undefined, `i` is a receiver's audio and `offsetHz` says where the carrier lands in it.
 * The wanted tone is located (within `searchHz`) and read between bins. The carrier is located
 * when it stands clear of the noise floor and of the tones' window leakage; the unwanted tone is
 * then read at the mirror of the measured wanted frequency about it (a known frequency, not sought).
 * Without a located carrier, the unwanted tone is sought between the two places a frequency error
 * can put it (moved with the wanted tone by a tuning error, or against it by an error of the tone
 * itself) when it stands clear, and the carrier is read midway between the sidebands; otherwise it
 * is read at the mirror about the nominal carrier. So tuning and clock errors do not bias the readings.
 *
 * @example
 * ```ts
 * import { measureSideband } from 'orthotone';
 *
 * // An I/Q pair with a 1° phase error: Q lags I by 89° instead of 90°.
 * const fs = 48000;
 * const n = 48000;
 * const i = Float32Array.from({ length: n }, (_, k) => 0.5 * Math.cos((2 * Math.PI * 1000 * k) / fs));
 * const q = Float32Array.from({ length: n }, (_, k) => 0.5 * Math.sin((2 * Math.PI * 1000 * k) / fs + Math.PI / 180));
 * const r = measureSideband(i, q, fs, { toneHz: 1000 });
 * console.log(r.sidebandSuppressionDb.toFixed(1), 'dB'); // about 41.2 dB (docs/REFERENCES.md §1)
 * ```
 * @param i I samples, or receiver audio, full-scale units.
 * @param q Q samples, or null for receiver audio.
 * @param sampleRate Hz.
 * @param options `toneHz` required; the rest merged over the defaults.
 * @throws {OrthotoneError} INVALID_ARGUMENT (missing or non-positive tone, a component beyond
 *   Nyquist or below 0 Hz in audio — the message names which and the offset that would fit),
 *   CAPTURE_TOO_SHORT, TONES_UNRESOLVED, BUFFER_MISMATCH.
 * Reference: levels per AES17 and Heinzel 2002 (via {@link measureTones}); suppression as in
 * K. Schmidt, QEX Aug 1994 §2 (docs/REFERENCES.md §1).
 */
export function measureSideband(
  i: ArrayLike<number>,
  q: ArrayLike<number> | null | undefined,
  sampleRate: number,
  options: Partial<SidebandOptions> & { toneHz: number },
): SidebandReading {
  const toneHz = requirePositive('toneHz', options?.toneHz, 'Hz');
  const sideband = requireOneOf('sideband', options.sideband ?? 'upper', ['upper', 'lower'] as const);
  const s = sideband === 'upper' ? 1 : -1;
  const iq = q !== null && q !== undefined;
  let at: (deltaHz: number) => number;
  if (iq) {
    if (options.offsetHz !== undefined) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        'offsetHz applies to receiver audio: for an I/Q capture give carrierHz (default 0), or pass q = null for audio',
        options.offsetHz,
      );
    }
    const carrierHz = requireFinite('carrierHz', options.carrierHz ?? 0, 'give it in Hz');
    at = (d) => carrierHz + d;
  } else {
    if (options.offsetHz === undefined) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        'receiver audio needs offsetHz, the audio frequency where the carrier lands (e.g. 1500 for a 700 Hz tone): or pass q for an I/Q capture',
        undefined,
      );
    }
    const offsetHz = requireFinite('offsetHz', options.offsetHz, 'give it in Hz');
    const rx = requireOneOf('receiverSideband', options.receiverSideband ?? 'upper', [
      'upper',
      'lower',
    ] as const);
    const r = rx === 'upper' ? 1 : -1;
    at = (d) => offsetHz + r * d;
    const nyq = sampleRate / 2;
    for (const [name, d] of [
      ['wanted tone', s * toneHz],
      ['unwanted tone', -s * toneHz],
      ['carrier', 0],
    ] as const) {
      const f = at(d);
      if (!(f > 0 && f < nyq)) {
        throw new OrthotoneError(
          'INVALID_ARGUMENT',
          `the ${name} falls at ${f} Hz in the audio, outside 0…${nyq} Hz: with a ${toneHz} Hz tone use an offset between ${toneHz} and ${nyq - toneHz} Hz (offsetHz ${offsetHz} given)`,
          offsetHz,
        );
      }
    }
  }
  const capture = iq ? ({ i, q } as IqCapture) : i;
  const fw = at(s * toneHz);
  const fu = at(-s * toneHz);
  const fc = at(0);
  const reader = createToneReader(capture, sampleRate, [fw, fu, fc], options);
  const res = reader.spectrum.resolutionHz;
  const nyq = sampleRate / 2;
  const inRange = (f: number): boolean => (iq ? Math.abs(f) < nyq : f > 0 && f < nyq);
  const wanted = reader.read(fw);
  let carrier = reader.read({ hz: fc });
  let unwanted: ToneReading;
  if (carrier.refined) {
    // The carrier located: the unwanted tone is the mirror of the wanted about it, a known frequency.
    const mirror = 2 * carrier.frequencyHz - wanted.frequencyHz;
    unwanted = reader.read({ hz: inRange(mirror) ? mirror : fu, refine: 'never' });
  } else {
    // No carrier to go by. A tuning (or clock) error moves the unwanted tone with the wanted one,
    // to fu + δ; an error in the tone's own frequency moves it the other way, to fu − δ (the mirror
    // about the nominal carrier). Seek it over that span when it stands clear of floor and leakage.
    const shift = wanted.frequencyHz - fw;
    unwanted = reader.read({ hz: fu, searchHz: Math.abs(shift) + res / 2 });
    if (unwanted.refined) {
      // The carrier lies midway between the two sidebands: read it there.
      const mid = (wanted.frequencyHz + unwanted.frequencyHz) / 2;
      if (inRange(mid) && Math.abs(mid - fc) > 0.001 * res)
        carrier = reader.read({ hz: mid, refine: 'never' });
    } else {
      const mirror = 2 * fc - wanted.frequencyHz;
      unwanted = reader.read({ hz: inRange(mirror) ? mirror : fu, refine: 'never' });
    }
  }
  const unwantedDbc = unwanted.levelDbfs - wanted.levelDbfs;
  const carrierDbc = carrier.levelDbfs - wanted.levelDbfs;
  return {
    toneHz,
    sideband,
    wanted,
    unwanted,
    carrier,
    unwantedDbc,
    carrierDbc,
    sidebandSuppressionDb: -unwantedDbc,
    carrierSuppressionDb: -carrierDbc,
    floorDbc: wanted.floorDbfs - wanted.levelDbfs,
    sidebandMeasurableDb: wanted.levelDbfs - unwanted.floorDbfs,
    carrierMeasurableDb: wanted.levelDbfs - carrier.floorDbfs,
    frequencyErrorHz: wanted.frequencyHz - fw,
  };
}
