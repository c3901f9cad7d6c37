/**
 * The frequency-dependent sideband correction (DESIGN.md §4 `Correction`): a short widely-linear
 * FIR pair `Q_c = qFromQ ∗ Q' + qFromI ∗ I'` designed to realise a smooth model of the gain and
 * phase trims a tone needs versus audio frequency, and the evaluation of such a pair at one
 * frequency as the scalar trims it amounts to. FIR design, so it lives in design/; the
 * across-the-band calibration (calibrate/multitone.ts) fits the model and calls these.
 *
 * Correction design: with trims zero, the corrected Q of a tone at ω has the phasor
 * `e^{jωD}·(−j·H_QQ(ω) + H_QI(ω))`, D = (L−1)/2, while the ideal correction is
 * `Q' = α(ω)·Q + β(ω)·I` with `α + jβ = G(ω)·e^{jφ(ω)}`. Taking `H_QQ = α·e^{−jωD}` and
 * `H_QI = β·e^{−jωD}` in the form `e^{−jωD}·(C(ω) − j·S(ω))` (cosine series from symmetric taps,
 * sine series from antisymmetric ones) and fitting α and β by least squares over the band gives
 * the pair: `α = C_QQ + S_QI`, `β = C_QI − S_QQ`. References: widely-linear frequency-selective
 * I/Q correction, Anttila, Valkama & Renfors, IEEE TCAS-II 55(4), Apr 2008; least-squares FIR
 * design on a frequency grid, Parks & Burrus, Digital Filter Design (1987), ch. 3.
 */
import { OrthotoneError } from '../core/errors.js';
import { weightedLeastSquares } from '../core/small-linear.js';
import type { Correction, Trims } from '../core/trims.js';
import { ZERO_TRIMS } from '../core/trims.js';
import { degToRad, radToDeg } from '../core/units.js';
import { requireInteger, requireSampleRate } from '../core/validate.js';
import { firResponseInto } from './response.js';

/** Smooth model of the required correction versus frequency. */
export interface ImbalanceModel {
  /** `gainDb(f) = g0 + g1·(f/f0)² + g2·(f0/f)²` coefficients, dB. */
  gainDb: [number, number, number];
  /** `phase(f) = p0 + p1·f + p2/f` coefficients (rad, rad/Hz, rad·Hz). */
  phase: [number, number, number];
  /** Reference frequency f0, Hz (geometric centre of the tones). */
  f0: number;
  /** The linear-phase term as the channel skew it compensates: Q lagging I by this, seconds. */
  skewSeconds: number;
}

/**
 * Evaluates an imbalance model: the gain and phase trim that nulls a tone at `hz` (Hz, > 0).
 * @param m the model.
 * @param hz frequency, Hz.
 * @returns `{ gainDb, phaseDeg }` in dB and degrees (non-finite at `hz` = 0).
 * Method: the model's closed form (see {@link ImbalanceModel}).
 * @throws never
 */
export function evaluateImbalanceModel(m: ImbalanceModel, hz: number): { gainDb: number; phaseDeg: number } {
  const r = hz / m.f0;
  return {
    gainDb: m.gainDb[0] + m.gainDb[1] * r * r + m.gainDb[2] / (r * r),
    phaseDeg: radToDeg(m.phase[0] + m.phase[1] * hz + m.phase[2] / hz),
  };
}

/**
 * The gain and phase trim a correction (after `trims`) is equivalent to for a tone at `hz`: the
 * whole path at that one frequency, so a model that knows only scalar trims can evaluate it.
 * @param correction the FIR pair (or undefined for none).
 * @param trims the trims before it (gain and phase used).
 * @param hz tone frequency, Hz.
 * @param sampleRate Hz.
 * @returns trims with gainDb in dB and phaseDeg in degrees; the other trims as given.
 * Method: the correction's FIR pair evaluated at one frequency by the one FIR evaluator
 * (response.ts), see the file header.
 * @throws never (the correction is not re-validated: give one that passed `validateCorrection`).
 */
export function equivalentTrims(
  correction: Correction | undefined,
  trims: Partial<Trims>,
  hz: number,
  sampleRate: number,
): Trims {
  const t = { ...ZERO_TRIMS, ...trims };
  if (!correction) return t;
  const w = (2 * Math.PI * hz) / sampleRate;
  const g = 10 ** (t.gainDb / 20);
  const p = degToRad(t.phaseDeg);
  // Q' = a0·Q + b0·I; phasor of Q' = −j·a0 + b0 (I = cos, Q = sin).
  const a0 = g * Math.cos(p);
  const b0 = g * Math.sin(p);
  // H_QQ and H_QI relative to the centre delay D (both taps sets have the same length).
  const h = new Float64Array(4);
  firResponseInto(correction.qFromQ, w, h, 0);
  firResponseInto(correction.qFromI, w, h, 2);
  const hqRe = h[0]!;
  const hqIm = h[1]!;
  const hiRe = h[2]!;
  const hiIm = h[3]!;
  // X = H_QQ·(b0 − j·a0) + H_QI (I' = I has phasor 1), delay D removed.
  const xRe = hqRe * b0 + hqIm * a0 + hiRe;
  const xIm = hqIm * b0 - hqRe * a0 + hiIm;
  const alpha = -xIm;
  const beta = xRe;
  return {
    ...t,
    gainDb: 20 * Math.log10(Math.hypot(alpha, beta)),
    phaseDeg: radToDeg(Math.atan2(beta, alpha)),
  };
}

/**
 * Largest absolute tap sum {@link designCorrection} aims for: three quarters of the 16 the generator
 * accepts (generate/correction.ts CORRECTION_MAX_ABS_SUM; not imported: design/ sits below
 * generate/).
 */
export const CORRECTION_TARGET_ABS_SUM = 12;

/**
 * Designs the correction FIR pair realising a model over a band, by ridge-regularised least squares
 * on a grid. Over an audio band at a high sample rate the cosine and sine series are nearly
 * collinear, and plain least-squares taps can sum to tens (the generator refuses more than 16) for
 * no gain in the band; the ridge is therefore raised from 1e-10 in steps of 2 until the absolute tap
 * sum is at most {@link CORRECTION_TARGET_ABS_SUM} (up to 1e-4).
 * @param model gain and phase versus frequency.
 * @param band [lo, hi] Hz.
 * @param sampleRate Hz.
 * @param taps odd length.
 * @returns the FIR pair (`qFromQ`, `qFromI`, `taps` long each).
 * @throws {OrthotoneError} INVALID_ARGUMENT for an even or too short length or a bad band.
 * Method: least squares on a log-spaced grid of 128 frequencies (see the file header), with
 * Tikhonov regularisation (Hansen, Rank-Deficient and Discrete Ill-Posed Problems, SIAM 1998, ch. 5).
 */
export function designCorrection(
  model: ImbalanceModel,
  band: readonly [number, number],
  sampleRate: number,
  taps: number,
): Correction {
  let c = designWithRidge(model, band, sampleRate, taps, 1e-10);
  for (let ridge = 2e-10; ridge <= 1e-4 && absTapSum(c) > CORRECTION_TARGET_ABS_SUM; ridge *= 2) {
    c = designWithRidge(model, band, sampleRate, taps, ridge);
  }
  return c;
}

const absTapSum = (c: Correction): number => {
  let s = 0;
  for (let k = 0; k < c.qFromQ.length; k++) s += Math.abs(c.qFromQ[k]!) + Math.abs(c.qFromI[k]!);
  return s;
};

/**
 * {@link designCorrection} with a given ridge (relative weight of the taps' sum of squares).
 * @throws {OrthotoneError} INVALID_ARGUMENT as {@link designCorrection}.
 */
function designWithRidge(
  model: ImbalanceModel,
  band: readonly [number, number],
  sampleRate: number,
  taps: number,
  ridge: number,
): Correction {
  requireSampleRate(sampleRate);
  requireInteger('taps', taps, 1, 255);
  if (taps % 2 === 0) throw new OrthotoneError('INVALID_ARGUMENT', `taps ${taps} must be odd`, taps);
  const [lo, hi] = band;
  if (!(lo > 0 && hi > lo && hi < sampleRate / 2)) {
    throw new OrthotoneError('INVALID_ARGUMENT', `band [${lo}, ${hi}] Hz must satisfy 0 < lo < hi < fs/2`);
  }
  const m = (taps - 1) / 2;
  const grid = 128;
  const rows: number[][] = [];
  const ya: number[] = [];
  const yb: number[] = [];
  for (let i = 0; i < grid; i++) {
    // Log-spaced grid: the band spans a decade and errors matter equally per octave.
    const f = lo * (hi / lo) ** (i / (grid - 1));
    const w = (2 * Math.PI * f) / sampleRate;
    const row: number[] = [];
    for (let k = 0; k <= m; k++) row.push(Math.cos(k * w));
    for (let k = 1; k <= m; k++) row.push(Math.sin(k * w));
    rows.push(row);
    const e = evaluateImbalanceModel(model, f);
    const G = 10 ** (e.gainDb / 20);
    const ph = degToRad(e.phaseDeg);
    ya.push(G * Math.cos(ph));
    yb.push(G * Math.sin(ph));
  }
  const ones = rows.map(() => 1);
  const n = 2 * m + 1;
  // α = A_c + B_s and β = B_c − A_s (cosine parts from symmetric taps, sine parts from
  // antisymmetric taps); a light ridge keeps the series bounded outside the band.
  const ca =
    weightedLeastSquares(rows, ya, ones, n, ridge) ?? Float64Array.from({ length: n }, (_, k) => +(k === 0));
  const cb = weightedLeastSquares(rows, yb, ones, n, ridge) ?? new Float64Array(n);
  const qFromQ = new Array<number>(taps).fill(0);
  const qFromI = new Array<number>(taps).fill(0);
  qFromQ[m] = ca[0]!;
  qFromI[m] = cb[0]!;
  for (let k = 1; k <= m; k++) {
    const aC = ca[k]!; // A_c
    const bS = ca[m + k]!; // B_s
    const bC = cb[k]!; // B_c
    const aS = -cb[m + k]!; // A_s
    qFromQ[m + k] = (aC + aS) / 2;
    qFromQ[m - k] = (aC - aS) / 2;
    qFromI[m + k] = (bC + bS) / 2;
    qFromI[m - k] = (bC - bS) / 2;
  }
  return { qFromQ, qFromI };
}
