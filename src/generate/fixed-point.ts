/**
 * A bit-exact model of the firmware kit's arithmetic (float, Q31, Q15): the same rounding,
 * saturation and state widths as `firmware/ortho_kit.c`, described once in
 * `design/kit-arithmetic.ts`. Its output equals the compiled kit's sample for sample (tests
 * compile the kit and compare).
 *
 * Exactness in JavaScript: every product and sum is computed in doubles, which hold integers up to
 * 2^53 exactly. Q15 products (16 × 32 bits) and their sums stay below 2^48 and need nothing more.
 * Q31 products (32 × 32 bits) are split: x = xh·2^16 + xl, so Σ c·x = (Σ c·xh)·2^16 + Σ c·xl with
 * both partial sums exact, and the final shift is done on the two parts (see {@link floorCombine}).
 * Float kits are modelled with `Math.fround` after every operation, in the C expression order;
 * a binary32 product or sum computed in double and rounded once equals the binary32 result
 * (Figueroa, "When is double rounding innocuous?", SIGNUM Newsletter 30(3), 1995).
 */
import type { Trims } from '../core/trims.js';
import type { KitArithmetic, KitPlan, KitTrimWords } from '../design/kit-arithmetic.js';
import {
  coefficientFractionBits,
  KIT_WORD_LENGTHS,
  kitPlan,
  kitTrimWords,
} from '../design/kit-arithmetic.js';
import type { Network } from '../design/network.js';

const P16 = 65536;
const MAX32 = 2147483647;
const MIN32 = -2147483648;
const F32_DENORMAL_GUARD = Math.fround(1e-20);

function sat(v: number, lo: number, hi: number): number {
  return Math.min(hi, Math.max(lo, v));
}

/**
 * `floor((hi·2^16 + lo) / 2^s)` for s ≥ 16, exact when |hi| < 2^50 and |lo| < 2^52.
 * @throws never
 */
export function floorCombine(hi: number, lo: number, s: number): number {
  const sh = 2 ** (s - 16);
  const hq = Math.floor(hi / sh);
  const hr = hi - hq * sh;
  return hq + Math.floor((hr * P16 + lo) / 2 ** s);
}

/** `trunc0(a·d / 2^31)` exactly, |a| < 2^31, |d| ≤ 2^31. */
function mulTrunc31(a: number, d: number): number {
  const A = a < 0 ? -a : a;
  const D = d < 0 ? -d : d;
  const dh = Math.floor(D / P16);
  const r = floorCombine(A * dh, A * (D - dh * P16), 31);
  return a < 0 !== d < 0 ? -r : r;
}

/** `floor((c1·x1 + c2·x2 + add) / 2^s)` exactly for 32-bit c and x, s ≥ 16. */
function floorDot2(c1: number, x1: number, c2: number, x2: number, add: number, s: number): number {
  const h1 = Math.floor(x1 / P16);
  const h2 = Math.floor(x2 / P16);
  return floorCombine(c1 * h1 + c2 * h2, c1 * (x1 - h1 * P16) + c2 * (x2 - h2 * P16) + add, s);
}

/** The kit's state for one network, trims and skew stage. */
export class KitModel {
  /** The plan it runs. */
  readonly plan: KitPlan;
  /** Arithmetic. */
  readonly arithmetic: KitArithmetic;
  /** Largest |skew|, whole samples (0: no skew stage). */
  readonly maxSkew: number;
  private readonly h: number;
  private readonly f: number;
  private readonly sMin: number;
  private readonly sMax: number;
  // all-pass
  private readonly ordI: Uint8Array;
  private readonly ordQ: Uint8Array;
  private readonly coI: Float64Array;
  private readonly coQ: Float64Array;
  private readonly stI: Float64Array;
  private readonly stQ: Float64Array;
  private readonly lineI: Float64Array;
  private readonly lineQ: Float64Array;
  private posI = 0;
  private posQ = 0;
  // FIR
  private readonly firOff: Int32Array;
  private readonly firCo: Float64Array;
  private readonly hist: Float64Array;
  private readonly firN: number;
  private readonly firC: number;
  private pos = 0;
  // trims
  private trims: KitTrimWords;
  private coefA = 0;
  private readonly skewI: Float64Array;
  private readonly skewQ: Float64Array;
  private skewPos = 0;

  /**
   * @param plan the kit's tables (`kitPlan`).
   * @param maxSkew largest |skew| in whole samples, 0 to 16 (0: no skew stage, as the kit built
   *   with ORTHO_MAX_SKEW 0).
   * @param trims the kit's trim values (`kitTrimWords`).
   * @throws never (inputs are made by `kitPlan`/`kitTrimWords`, which validate)
   */
  constructor(plan: KitPlan, maxSkew: number, trims: KitTrimWords) {
    this.plan = plan;
    this.arithmetic = plan.arithmetic;
    this.maxSkew = maxSkew;
    this.h = plan.headroomBits;
    this.f = plan.arithmetic === 'float' ? 0 : coefficientFractionBits(plan.arithmetic);
    const bits = KIT_WORD_LENGTHS[plan.arithmetic].sampleBits;
    this.sMax = bits ? 2 ** (bits - 1) - 1 : Number.POSITIVE_INFINITY;
    this.sMin = bits ? -(2 ** (bits - 1)) : Number.NEGATIVE_INFINITY;
    const b = plan.branches;
    this.ordI = Uint8Array.from(b?.i.orders ?? []);
    this.ordQ = Uint8Array.from(b?.q.orders ?? []);
    this.coI = Float64Array.from(b?.i.words ?? []);
    this.coQ = Float64Array.from(b?.q.words ?? []);
    this.stI = new Float64Array(4 * this.ordI.length);
    this.stQ = new Float64Array(4 * this.ordQ.length);
    this.lineI = new Float64Array(b?.i.delay ?? 0);
    this.lineQ = new Float64Array(b?.q.delay ?? 0);
    const fir = plan.fir;
    this.firOff = Int32Array.from(fir?.offsets ?? []);
    this.firCo = Float64Array.from(fir?.words ?? []);
    this.firN = fir?.taps ?? 0;
    this.firC = fir?.centre ?? 0;
    this.hist = new Float64Array(2 * this.firN);
    const L = maxSkew > 0 ? 2 * maxSkew + 4 : 0;
    this.skewI = new Float64Array(2 * L);
    this.skewQ = new Float64Array(2 * L);
    this.trims = trims;
    this.setTrimWords(trims);
  }

  /**
   * Applies the kit's trim values from the next sample on (as `ortho_set_trims`).
   * @throws never
   */
  setTrimWords(t: KitTrimWords): void {
    const whole = this.maxSkew > 0 ? Math.max(1, Math.min(2 * this.maxSkew + 1, t.skewWhole)) : t.skewWhole;
    this.trims = { ...t, skewTaps: [...t.skewTaps] as KitTrimWords['skewTaps'], skewWhole: whole };
    this.coefA = t.lowerSideband ? -t.gainCos : t.gainCos;
  }

  /** The trim values in use. @throws never */
  get trimWords(): Readonly<KitTrimWords> {
    return this.trims;
  }

  /**
   * Clears the signal state (as `ortho_reset`); keeps the trims.
   * @throws never
   */
  reset(): void {
    this.stI.fill(0);
    this.stQ.fill(0);
    this.lineI.fill(0);
    this.lineQ.fill(0);
    this.hist.fill(0);
    this.skewI.fill(0);
    this.skewQ.fill(0);
    this.posI = 0;
    this.posQ = 0;
    this.pos = 0;
    this.skewPos = 0;
  }

  /**
   * An independent copy whose future output is identical.
   * @throws never
   */
  clone(): KitModel {
    const c = new KitModel(this.plan, this.maxSkew, this.trims);
    c.stI.set(this.stI);
    c.stQ.set(this.stQ);
    c.lineI.set(this.lineI);
    c.lineQ.set(this.lineQ);
    c.hist.set(this.hist);
    c.skewI.set(this.skewI);
    c.skewQ.set(this.skewQ);
    c.posI = this.posI;
    c.posQ = this.posQ;
    c.pos = this.pos;
    c.skewPos = this.skewPos;
    return c;
  }

  /**
   * A full-scale value as a kit input sample (as `ortho_sample_from_full_scale`): fixed point
   * rounds half up and saturates; NaN gives 0; float rounds to single precision.
   * @throws never
   */
  sampleFromFullScale(x: number): number {
    if (this.arithmetic === 'float') return Math.fround(x);
    if (Number.isNaN(x)) return 0;
    const bits = KIT_WORD_LENGTHS[this.arithmetic].sampleBits;
    return sat(Math.floor(x * 2 ** (bits - 1) + 0.5), this.sMin, this.sMax);
  }

  /** A kit output sample as a full-scale value. @throws never */
  sampleToFullScale(v: number): number {
    if (this.arithmetic === 'float') return v;
    return v / 2 ** (KIT_WORD_LENGTHS[this.arithmetic].sampleBits - 1);
  }

  /** One input sample to a network word. */
  private toNetwork(x: number): number {
    switch (this.arithmetic) {
      case 'float':
        return this.plan.kind === 'allpass' ? Math.fround(x + F32_DENORMAL_GUARD) : x;
      case 'q15':
        return x * 2 ** (16 - this.h);
      default:
        return this.h > 0 ? Math.floor((x + 2 ** (this.h - 1)) / 2 ** this.h) : x;
    }
  }

  /** One sample through the sections of a branch. */
  private branch(x: number, ord: Uint8Array, co: Float64Array, st: Float64Array): number {
    const ar = this.arithmetic;
    const f = this.f;
    const scale = 2 ** f;
    let v = x;
    for (let k = 0; k < ord.length; k++) {
      const o = 4 * k;
      const a = co[k]!;
      const xm = ord[k] === 1 ? st[o]! : st[o + 1]!;
      const ym = ord[k] === 1 ? st[o + 2]! : st[o + 3]!;
      let y: number;
      if (ar === 'float') {
        y = Math.fround(Math.fround(a * Math.fround(v - ym)) + xm);
      } else {
        const d = sat(v - ym, MIN32, MAX32);
        const r = ar === 'q15' ? Math.trunc((a * d) / scale) : mulTrunc31(a, d);
        y = sat(xm + r, MIN32, MAX32);
      }
      st[o + 1] = st[o]!;
      st[o] = v;
      st[o + 3] = st[o + 2]!;
      st[o + 2] = y;
      v = y;
    }
    return v;
  }

  /**
   * Runs `n` kit input samples (codes for fixed point, single-precision values for float) into
   * kit output samples, exactly as `ortho_process`.
   * @param input kit input samples (indices 0…n−1).
   * @param outI I output, kit samples.
   * @param outQ Q output, kit samples.
   * @param n number of samples.
   * @throws never
   */
  processSamples(
    input: ArrayLike<number>,
    outI: { [k: number]: number },
    outQ: { [k: number]: number },
    n: number,
  ): void {
    const ar = this.arithmetic;
    const fl = ar === 'float';
    const fr = Math.fround;
    for (let j = 0; j < n; j++) {
      const x = this.toNetwork(input[j]!);
      let iv: number;
      let qv: number;
      if (this.plan.kind === 'allpass') {
        let xi = x;
        let xq = x;
        const li = this.lineI;
        if (li.length > 0) {
          xi = li[this.posI]!;
          li[this.posI] = x;
          if (++this.posI === li.length) this.posI = 0;
        }
        const lq = this.lineQ;
        if (lq.length > 0) {
          xq = lq[this.posQ]!;
          lq[this.posQ] = x;
          if (++this.posQ === lq.length) this.posQ = 0;
        }
        iv = this.branch(xi, this.ordI, this.coI, this.stI);
        qv = this.branch(xq, this.ordQ, this.coQ, this.stQ);
        if (fl) {
          iv = fr(iv - F32_DENORMAL_GUARD);
          qv = fr(qv - F32_DENORMAL_GUARD);
        }
      } else {
        const N = this.firN;
        const hist = this.hist;
        // Doubled history as in the kit: x[n−c−o] = hist[mid − o], x[n−c+o] = hist[mid + o].
        hist[this.pos] = x;
        hist[this.pos + N] = x;
        const mid = this.pos + 1 + this.firC;
        iv = hist[mid]!;
        const off = this.firOff;
        const co = this.firCo;
        if (fl) {
          let acc = 0;
          for (let k = 0; k < off.length; k++)
            acc = fr(acc + fr(co[k]! * fr(hist[mid - off[k]!]! - hist[mid + off[k]!]!)));
          qv = acc;
        } else if (ar === 'q15') {
          let acc = 2 ** (this.f - 1);
          for (let k = 0; k < off.length; k++)
            acc += co[k]! * sat(hist[mid - off[k]!]! - hist[mid + off[k]!]!, MIN32, MAX32);
          qv = sat(Math.floor(acc / 2 ** this.f), MIN32, MAX32);
        } else {
          let hi = 0;
          let lo = 2 ** (this.f - 1);
          for (let k = 0; k < off.length; k++) {
            const d = sat(hist[mid - off[k]!]! - hist[mid + off[k]!]!, MIN32, MAX32);
            const dh = Math.floor(d / P16);
            hi += co[k]! * dh;
            lo += co[k]! * (d - dh * P16);
          }
          qv = sat(floorCombine(hi, lo, this.f), MIN32, MAX32);
        }
        if (++this.pos === N) this.pos = 0;
      }
      this.trimSample(iv, qv, outI, outQ, j);
    }
  }

  private trimSample(
    iv: number,
    qv: number,
    outI: { [k: number]: number },
    outQ: { [k: number]: number },
    j: number,
  ): void {
    const ar = this.arithmetic;
    const t = this.trims;
    const a = this.coefA;
    const b = t.gainSin;
    const h = this.h;
    const fr = Math.fround;
    let vi: number;
    let vq: number;
    if (ar === 'float') {
      vi = iv;
      vq = fr(fr(a * qv) + fr(b * iv));
    } else if (ar === 'q15') {
      vi = sat(Math.floor((iv + 2 ** (15 - h)) / 2 ** (16 - h)), this.sMin, this.sMax);
      vq = sat(Math.floor((a * qv + b * iv + 2 ** (29 - h)) / 2 ** (30 - h)), this.sMin, this.sMax);
    } else {
      vi = sat(iv * 2 ** h, this.sMin, this.sMax);
      vq = sat(floorDot2(a, qv, b, iv, 2 ** (29 - h), 30 - h), this.sMin, this.sMax);
    }
    if (this.maxSkew > 0) {
      const L = 2 * this.maxSkew + 4;
      const p = this.skewPos;
      const li = this.skewI;
      const lq = this.skewQ;
      li[p] = vi;
      li[p + L] = vi;
      lq[p] = vq;
      lq[p + L] = vq;
      if (++this.skewPos === L) this.skewPos = 0;
      // doubled lines as in the kit: the value m samples back is line[p + L − m]
      vi = li[p + L - (this.maxSkew + 1)]!;
      const k0 = p + L - (t.skewWhole - 1);
      const [h0, h1, h2, h3] = t.skewTaps;
      const s0 = lq[k0]!;
      const s1 = lq[k0 - 1]!;
      const s2 = lq[k0 - 2]!;
      const s3 = lq[k0 - 3]!;
      if (ar === 'float') {
        vq = fr(fr(fr(fr(h0 * s0) + fr(h1 * s1)) + fr(h2 * s2)) + fr(h3 * s3));
      } else {
        const tf = KIT_WORD_LENGTHS[ar].coefficientBits - 2;
        let r: number;
        if (ar === 'q15') r = Math.floor((h0 * s0 + h1 * s1 + h2 * s2 + h3 * s3 + 2 ** (tf - 1)) / 2 ** tf);
        else {
          const g0 = Math.floor(s0 / P16);
          const g1 = Math.floor(s1 / P16);
          const g2 = Math.floor(s2 / P16);
          const g3 = Math.floor(s3 / P16);
          const hi = h0 * g0 + h1 * g1 + h2 * g2 + h3 * g3;
          const lo =
            h0 * (s0 - g0 * P16) +
            h1 * (s1 - g1 * P16) +
            h2 * (s2 - g2 * P16) +
            h3 * (s3 - g3 * P16) +
            2 ** (tf - 1);
          r = floorCombine(hi, lo, tf);
        }
        vq = sat(r, this.sMin, this.sMax);
      }
    }
    if (ar === 'float') {
      outI[j] = fr(vi + t.dcI);
      outQ[j] = fr(vq + t.dcQ);
    } else {
      outI[j] = sat(vi + t.dcI, this.sMin, this.sMax);
      outQ[j] = sat(vq + t.dcQ, this.sMin, this.sMax);
    }
  }
}

/**
 * Runs full-scale input samples through a fresh kit model and returns the kit's output exactly, as
 * full-scale doubles (Q31 outputs do not fit float32): what the compiled kit writes for this input.
 * @param net a network document.
 * @param arithmetic the kit's arithmetic.
 * @param trims trims in the library's units (DESIGN.md §4).
 * @param lowerSideband true for the lower sideband.
 * @param maxSkew the kit's skew stage size, whole samples (0–16).
 * @param input full-scale input samples.
 * @returns `{ i, q }`, full-scale units.
 * @throws {OrthotoneError} INVALID_DOCUMENT / INVALID_ARGUMENT as `kitPlan` and `kitTrimWords`.
 * Reference: the kit's arithmetic (design/kit-arithmetic.ts).
 */
export function renderKit(
  net: Network,
  arithmetic: KitArithmetic,
  trims: Trims,
  lowerSideband: boolean,
  maxSkew: number,
  input: ArrayLike<number>,
): { i: Float64Array; q: Float64Array } {
  const m = new KitModel(
    kitPlan(net, arithmetic),
    maxSkew,
    kitTrimWords(trims, lowerSideband, arithmetic, maxSkew),
  );
  const n = input.length;
  const x = new Float64Array(n);
  for (let k = 0; k < n; k++) x[k] = m.sampleFromFullScale(input[k]!);
  const i = new Float64Array(n);
  const q = new Float64Array(n);
  m.processSamples(x, i, q, n);
  for (let k = 0; k < n; k++) {
    i[k] = m.sampleToFullScale(i[k]!);
    q[k] = m.sampleToFullScale(q[k]!);
  }
  return { i, q };
}
