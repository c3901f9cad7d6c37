/**
 * Analytic steady-state response of the modelled exciter (model.ts) to an ideal I/Q tone.
 *
 * The four-phase commutating mixer. Phase p (p = 0…3 for 0°, 90°, 180°, 270°) carries
 * `v_p = Re{z·e^{−jpπ/2}}` ideally (I, Q, −I, −Q for z = I + jQ) and is connected to the output while
 * the LO phase is within ±45° of `−p·90° − δ_p` (δ_p its switching-instant error). Each switch
 * function is a 25%-duty pulse train with Fourier series
 *   `s(φ) = 1/4 + Σ_{n≥1} c_n·cos(nφ)`, `c_n = (2/(nπ))·sin(nπ/4)`,
 * so the output `y = Σ_p v_p·s(ω_LO·t + pπ/2 + δ_p)` has, around the n-th LO harmonic, the complex
 * baseband (relative to n·f_LO, normalised by the ideal fundamental 2·c_1)
 *   `z_n = (c_n/c_1)·Σ_p v_p·j^{np}·e^{jnδ_p} / 2`.
 * Fundamental (n = 1): `z_1 = [(v0 − v180) + j(v90 − v270)]/2` for δ = 0 — I_eff ∝ v0 − v180,
 * Q_eff ∝ v90 − v270 with their own gains, so `I·cos ω_LO t − Q·sin ω_LO t` gives the upper sideband
 * (DESIGN.md §2). The carrier is the differential DC `(d0 − d180)/2 + j(d90 − d270)/2`; the image
 * comes from unequal I_eff and Q_eff gains and phases.
 * Harmonics: c_2 = 1/π but j^{2p} = (−1)^p makes z_2 = [(v0 + v180) − (v90 + v270)]/2 — only
 * mismatch and offsets leak there; c_3/c_1 = 1/3 (−9.54 dB) with j^{3p} = (−j)^p: the 3rd-harmonic
 * response carries the **opposite** sideband (z_3 ∝ I − jQ); c_4 = 0; c_5/c_1 = −1/5 (−13.98 dB)
 * with j^{5p} = j^p: the 5th carries the **same** sideband; the 7th (−1/7) the opposite again.
 *
 * Writing `v_p = ±g_p·x̃_ch + d_p/V_FS`, the output is widely linear in the two analog channels:
 *   `z_n = α_n·x̃_I + β_n·x̃_Q + κ_n`, with `α_n = Σ_{p∈{0,2}} ±g_p·w_p`, `β_n = Σ_{p∈{1,3}} ±g_p·w_p`,
 *   `κ_n = Σ_p (d_p/V_FS)·w_p`, `w_p = (c_n/c_1)·j^{np}·e^{jnδ_p}/2`.
 * Each analog channel is `x̃ = G·HP(f)·LP(f)·e^{−j2πfτ}·x` (codec gain, first-order coupling
 * high-pass `jf/(jf + f_hp)`, first-order low-pass `1/(1 + jf/f_lp)`, skew τ on Q only).
 * References: switching-mixer Fourier analysis as in B. Razavi, RF Microelectronics, 2nd ed., §6
 * (passive mixers), from memory; image rejection K. Schmidt, QEX Aug 1994 §2 (docs/REFERENCES.md §1).
 */
import { type Complex, cabs, cadd, cexpj, cmul } from '../core/complex.js';
import { OrthotoneError } from '../core/errors.js';
import type { Trims } from '../core/trims.js';
import { validateTrims } from '../core/trims.js';
import { requireFinite } from '../core/validate.js';
import type { ExciterModel } from './model.js';

/** Coefficients of the widely-linear mixer output at one LO harmonic. */
export interface MixerCoefficients {
  /** Harmonic of the LO (1, 2, 3, …). */
  harmonic: number;
  alpha: Complex;
  beta: Complex;
  /** Output DC (carrier) from the phase offsets, full-scale units. */
  kappa: Complex;
}

/**
 * Relative amplitude of a four-phase commutating mixer's response at LO harmonic `n`:
 * `c_n/c_1 = sin(nπ/4) / (n·sin(π/4))`, exact zero for multiples of 4 (dimensionless, signed).
 * Fourier series of a 25 %-duty pulse train (see the file header; common practice, no source).
 * @throws never
 */
export function mixerHarmonicRatio(n: number): number {
  if (n % 4 === 0) return 0;
  return Math.sin((n * Math.PI) / 4) / (n * Math.sin(Math.PI / 4));
}

/** j^k for integer k. */
function jPow(k: number): Complex {
  const m = ((k % 4) + 4) % 4;
  return [
    { re: 1, im: 0 },
    { re: 0, im: 1 },
    { re: -1, im: 0 },
    { re: 0, im: -1 },
  ][m]!;
}

/**
 * Mixer coefficients α, β, κ of a model at LO harmonic `n` (see the file header).
 * @throws {OrthotoneError} INVALID_ARGUMENT for a harmonic outside 1…15.
 */
export function mixerCoefficients(model: ExciterModel, n = 1): MixerCoefficients {
  if (!Number.isInteger(n) || n < 1 || n > 15) {
    throw new OrthotoneError('INVALID_ARGUMENT', `LO harmonic ${n} must be a whole number from 1 to 15`, n);
  }
  const r = mixerHarmonicRatio(n);
  const w = [0, 1, 2, 3].map((p) => {
    const e = cexpj((n * model.loPhaseErrorDeg[p]! * Math.PI) / 180);
    const c = cmul(jPow(n * p), e);
    return { re: (r * c.re) / 2, im: (r * c.im) / 2 };
  });
  const sc = (c: Complex, s: number): Complex => ({ re: c.re * s, im: c.im * s });
  const g = model.phaseGain;
  const alpha = cadd(sc(w[0]!, g[0]), sc(w[2]!, -g[2]));
  const beta = cadd(sc(w[1]!, g[1]), sc(w[3]!, -g[3]));
  let kappa: Complex = { re: 0, im: 0 };
  for (let p = 0; p < 4; p++)
    kappa = cadd(kappa, sc(w[p]!, model.phaseOffsetVolts[p]! / model.fullScaleVolts));
  return { harmonic: n, alpha, beta, kappa };
}

/**
 * Complex response of one analog channel (0 = I, 1 = Q) at frequency `hz` (signed): codec gain,
 * first-order coupling high-pass, first-order anti-imaging low-pass, and for Q the skew delay.
 * @param hz signed frequency in Hz.
 * @returns complex gain (dimensionless; codec gain included).
 * @throws never (the model is not re-validated here).
 */
export function channelResponse(model: ExciterModel, channel: 0 | 1, hz: number): Complex {
  let h: Complex = { re: model.codecGain[channel], im: 0 };
  const fh = model.couplingHighPassHz[channel];
  if (fh > 0) {
    // jf/(jf + fh) = (f² + j·f·fh)/(f² + fh²)
    const d = hz * hz + fh * fh;
    h = cmul(h, { re: (hz * hz) / d, im: (hz * fh) / d });
  }
  const fl = model.antiImagingLowPassHz[channel];
  if (Number.isFinite(fl)) {
    // 1/(1 + jf/fl) = (1 − j·x)/(1 + x²), x = f/fl
    const x = hz / fl;
    h = cmul(h, { re: 1 / (1 + x * x), im: -x / (1 + x * x) });
  }
  if (channel === 1 && model.skewSeconds !== 0) h = cmul(h, cexpj(-2 * Math.PI * hz * model.skewSeconds));
  return h;
}

/** Complex amplitudes (full-scale units) of what the receiver sees for one tone. */
export interface ToneResponse {
  /** At +toneHz relative to the LO harmonic (the wanted component at the fundamental). */
  wanted: Complex;
  /** At −toneHz (the unwanted component at the fundamental). */
  unwanted: Complex;
  /** At 0 Hz (carrier leak). */
  carrier: Complex;
}

/**
 * Steady-state complex amplitudes for an ideal I/Q tone `I = a·cos 2πft`, `Q = a·sin 2πft`
 * (negative `toneHz` = lower sideband) with trims applied digitally in the order of DESIGN.md §4
 * (gain/phase on Q, then skew of Q by `skewSamples` at `sampleRate`, then DC).
 * @throws {OrthotoneError} INVALID_ARGUMENT for non-finite inputs or trims out of range.
 * Reference: see the file header.
 */
export function toneResponse(
  model: ExciterModel,
  toneHz: number,
  trims: Partial<Trims>,
  toneAmplitude: number,
  sampleRate: number,
  harmonic = 1,
): ToneResponse {
  requireFinite('toneHz', toneHz, 'give it in Hz');
  requireFinite('toneAmplitude', toneAmplitude);
  validateTrims(trims);
  const { alpha, beta, kappa } = mixerCoefficients(model, harmonic);
  const a = toneAmplitude;
  const gain = 10 ** ((trims.gainDb ?? 0) / 20);
  const phi = ((trims.phaseDeg ?? 0) * Math.PI) / 180;
  // Phasors of the real signals at +f: I = Re{a·e^{jωt}}, Q = Re{−j·a·e^{jωt}}.
  const xi: Complex = { re: a, im: 0 };
  const xqRaw: Complex = { re: 0, im: -a };
  let xq: Complex = {
    re: gain * (xqRaw.re * Math.cos(phi) + xi.re * Math.sin(phi)),
    im: gain * (xqRaw.im * Math.cos(phi) + xi.im * Math.sin(phi)),
  };
  const skew = trims.skewSamples ?? 0;
  if (skew !== 0) xq = cmul(xq, cexpj((-2 * Math.PI * toneHz * skew) / sampleRate));
  const ti = cmul(channelResponse(model, 0, toneHz), xi);
  const tq = cmul(channelResponse(model, 1, toneHz), xq);
  const conj = (c: Complex): Complex => ({ re: c.re, im: -c.im });
  const half = (c: Complex): Complex => ({ re: c.re / 2, im: c.im / 2 });
  const wanted = half(cadd(cmul(alpha, ti), cmul(beta, tq)));
  const unwanted = half(cadd(cmul(alpha, conj(ti)), cmul(beta, conj(tq))));
  const dcI = (trims.dcI ?? 0) * channelResponse(model, 0, 0).re;
  const dcQ = (trims.dcQ ?? 0) * channelResponse(model, 1, 0).re;
  const carrier = cadd(
    kappa,
    cadd({ re: alpha.re * dcI, im: alpha.im * dcI }, { re: beta.re * dcQ, im: beta.im * dcQ }),
  );
  return { wanted, unwanted, carrier };
}

/**
 * Levels of a tone response: wanted in dBFS (AES17), unwanted and carrier in dBc (floored at −300 dB).
 * @throws never
 */
export function responseLevels(r: ToneResponse): {
  wantedDbfs: number;
  unwantedDbc: number;
  carrierDbc: number;
} {
  const w = cabs(r.wanted);
  const db = (x: number): number => Math.max(-300, 20 * Math.log10(x));
  return { wantedDbfs: db(w), unwantedDbc: db(cabs(r.unwanted) / w), carrierDbc: db(cabs(r.carrier) / w) };
}

/**
 * Predicted opposite-sideband and carrier suppression of a device with zero trims, for a full-scale
 * tone on the upper sideband at each frequency.
 * @param model the device.
 * @param frequenciesHz tone frequencies, Hz (> 0).
 * @returns positive dB figures (DESIGN.md §2).
 * @throws {OrthotoneError} INVALID_ARGUMENT for a non-finite frequency.
 * Reference: see the file header; docs/REFERENCES.md §1 for the image-rejection and carrier formulas.
 */
export function predictedSuppression(
  model: ExciterModel,
  frequenciesHz: number[],
): { frequencyHz: number; sidebandDb: number; carrierDb: number }[] {
  return frequenciesHz.map((f) => {
    // The sample rate only scales a skew trim, and trims are zero here.
    const l = responseLevels(toneResponse(model, f, {}, 1, 48000));
    return { frequencyHz: f, sidebandDb: -l.unwantedDbc, carrierDb: -l.carrierDbc };
  });
}
