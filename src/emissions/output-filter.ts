/**
 * Output low-pass filter for the exciter's RF output: a doubly terminated LC ladder (equal source
 * and load resistance R), Butterworth or Chebyshev, designed from the normalised low-pass prototype
 * and scaled to the cutoff and impedance.
 *
 * Topology: the "minimum-inductor" form — element 1 is a shunt capacitor at the source side, then
 * series inductor, shunt capacitor, … (ladder order). For an odd order both ends are capacitors.
 * Prototype values g_k (g_0 = g_{n+1} = 1 for the equal terminations used here):
 *  - Butterworth: `g_k = 2·sin((2k−1)π/(2n))`; the cutoff is the 3 dB frequency.
 *  - Chebyshev (odd n only, so that both terminations are equal): with ripple L_Ar dB,
 *    `β = ln coth(L_Ar/17.37)`, `γ = sinh(β/(2n))`, `a_k = sin((2k−1)π/(2n))`,
 *    `b_k = γ² + sin²(kπ/n)`, `g_1 = 2a_1/γ`, `g_k = 4a_{k−1}a_k/(b_{k−1}g_{k−1})`; the cutoff is the
 *    edge of the equal-ripple band (attenuation = L_Ar there).
 * Scaling: `C = g/(2π·f_c·R)`, `L = g·R/(2π·f_c)`.
 * Reference: G. L. Matthaei, L. Young, E. M. T. Jones, "Microwave Filters, Impedance-Matching
 * Networks, and Coupling Structures", McGraw-Hill 1964, §4.05 (eqs. 4.05-1, 4.05-2; Tables 4.05-1
 * and 4.05-2); docs/REFERENCES.md §8.
 *
 * The response is evaluated by walking the ladder back from the load (node voltage and branch
 * current, the recursion of a continued fraction); the tests check it with an independent ABCD
 * cascade. Standard capacitor values: IEC 60063 E12/E24 series.
 */
import { OrthotoneError } from '../core/errors.js';
import { requireInteger, requireOneOf, requirePositive, requireRange } from '../core/validate.js';

/** Response family of the ladder. */
export type LadderResponse = 'butterworth' | 'chebyshev';
/** Standard value series for the capacitors (IEC 60063). */
export type ValueSeries = 'E12' | 'E24';

/** One element of the ladder, in ladder order from the source. */
export interface LadderElement {
  /** 'C' = shunt capacitor, 'L' = series inductor. */
  kind: 'L' | 'C';
  /** Value to build: farad or henry (a capacitor rounded to the series when one is asked for). */
  value: number;
  /** Normalised prototype value g_k (dimensionless). */
  g: number;
  /** The exact (unrounded) value, F or H. */
  exactValue: number;
}

/** Attenuation at one frequency. */
export interface FilterPoint {
  /** Frequency, Hz. */
  frequencyHz: number;
  /** LO harmonic this point is the response at (1 = the carrier), when known. */
  harmonic?: number;
  /** Insertion loss of the filter as built (rounded capacitors), dB (positive = loss). */
  attenuationDb: number;
  /** Insertion loss with the exact element values, dB. */
  exactAttenuationDb: number;
}

/** Specification of an output filter. */
export interface OutputFilterSpec {
  /** Cutoff, Hz: the 3 dB frequency (Butterworth) or the ripple-band edge (Chebyshev). */
  cutoffHz: number;
  response: LadderResponse;
  /** Order (number of reactive elements), 1…15; omit to choose it from `attenuationDb`. */
  order?: number;
  /** Chebyshev pass-band ripple, dB (default 0.1). */
  rippleDb?: number;
  /** Source and load resistance, Ω (default 50). */
  impedanceOhms?: number;
  /** Round capacitors to this series (default none). */
  series?: ValueSeries | null;
  /** RF carrier (LO) frequency, Hz: the response is listed at its harmonics. */
  carrierHz?: number;
  /** Attenuation wanted at the 3rd-harmonic response (3·carrierHz), dB, to choose the order. */
  attenuationDb?: number;
}

/** A designed output filter (a plain, JSON-serialisable document). */
export interface OutputFilter {
  format: 'orthotone-output-filter';
  version: 1;
  response: LadderResponse;
  order: number;
  cutoffHz: number;
  /** Chebyshev ripple, dB (0 for Butterworth). */
  rippleDb: number;
  impedanceOhms: number;
  series: ValueSeries | null;
  /** Elements in ladder order from the source. */
  elements: LadderElement[];
  /** Carrier frequency the harmonic points refer to, Hz, or null. */
  carrierHz: number | null;
  /** Response at the carrier and its harmonics 2…9 (or at multiples of the cutoff). */
  points: FilterPoint[];
  /** How the order was chosen. */
  orderFrom: 'given' | 'attenuation';
}

const E12 = [1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2];
const E24 = [
  1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8,
  7.5, 8.2, 9.1,
];

/**
 * Nearest value of an IEC 60063 series (E12 or E24), nearest on a logarithmic scale.
 * @param value positive value in any unit (F, H, Ω).
 * @returns the series value, same unit.
 * @throws {OrthotoneError} INVALID_ARGUMENT for a value that is not positive and finite.
 * Reference: IEC 60063:2015, preferred number series E12 and E24 (values from memory, the
 * well-known two-significant-digit series).
 */
export function nearestSeriesValue(value: number, series: ValueSeries): number {
  requirePositive('value', value);
  const table = series === 'E12' ? E12 : E24;
  const decade = 10 ** Math.floor(Math.log10(value));
  let best = value;
  let bestErr = Number.POSITIVE_INFINITY;
  for (const scale of [decade / 10, decade, decade * 10]) {
    for (const m of table) {
      const v = Number((m * scale).toPrecision(3));
      const err = Math.abs(Math.log(v / value));
      if (err < bestErr) {
        bestErr = err;
        best = v;
      }
    }
  }
  return best;
}

/**
 * Normalised low-pass prototype values g_1…g_n for equal terminations (g_0 = g_{n+1} = 1).
 * @param response 'butterworth' or 'chebyshev'.
 * @param order n, 1…15 (odd for Chebyshev).
 * @param rippleDb Chebyshev pass-band ripple, dB (0.001…3); ignored for Butterworth.
 * @returns g_1…g_n (dimensionless).
 * @throws {OrthotoneError} INVALID_ARGUMENT for an order out of range, an even Chebyshev order
 *   (its load would differ from its source), or a ripple out of range.
 * Reference: Matthaei, Young & Jones (1964) §4.05, eqs. for Tables 4.05-1 and 4.05-2 (file header).
 */
export function prototypeValues(response: LadderResponse, order: number, rippleDb = 0.1): number[] {
  requireOneOf('response', response, ['butterworth', 'chebyshev'] as const);
  const n = requireInteger('order', order, 1, 15);
  const a = (k: number): number => Math.sin(((2 * k - 1) * Math.PI) / (2 * n));
  if (response === 'butterworth') return Array.from({ length: n }, (_, i) => 2 * a(i + 1));
  requireRange('rippleDb', rippleDb, 0.001, 3, 'dB');
  if (n % 2 === 0) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `Chebyshev order ${n} is even: an even-order Chebyshev ladder needs a load different from its source; use an odd order (${n - 1} or ${n + 1})`,
      n,
    );
  }
  // MYJ write 17.37 for 40/ln 10 = 17.3718 (dB to nepers, twice); the exact constant is used here.
  const beta = Math.log(1 / Math.tanh(rippleDb / (40 / Math.LN10)));
  const gamma = Math.sinh(beta / (2 * n));
  const b = (k: number): number => gamma ** 2 + Math.sin((k * Math.PI) / n) ** 2;
  const g = [(2 * a(1)) / gamma];
  for (let k = 2; k <= n; k++) g.push((4 * a(k - 1) * a(k)) / (b(k - 1) * g[k - 2]!));
  return g;
}

/**
 * Insertion loss of a doubly terminated ladder (shunt C first) at one frequency, dB: the power
 * reaching the load relative to the source's available power, `−10·log10(4·Rs·|V_L|²/(R_L·|V_s|²))`.
 * Method: from the load back to the source — V = 1, I = 1/R_L; a shunt C adds jωC·V to I, a series
 * L adds jωL·I to V; finally V_s = V + I·R_s (a continued-fraction ladder walk, common practice, no
 * source).
 * @param elements ladder in order from the source (values in F and H).
 * @param frequencyHz Hz (≥ 0).
 * @param impedanceOhms source and load resistance, Ω.
 * @returns attenuation, dB (0 = no loss).
 * @throws never (non-finite input gives NaN).
 */
export function ladderAttenuationDb(
  elements: readonly Pick<LadderElement, 'kind' | 'value'>[],
  frequencyHz: number,
  impedanceOhms: number,
): number {
  const w = 2 * Math.PI * frequencyHz;
  const r = impedanceOhms;
  let vr = 1;
  let vi = 0;
  let ir = 1 / r;
  let ii = 0;
  for (let k = elements.length - 1; k >= 0; k--) {
    const e = elements[k]!;
    if (e.kind === 'C') {
      // I += jωC·V
      const b = w * e.value;
      ir -= b * vi;
      ii += b * vr;
    } else {
      // V += jωL·I
      const x = w * e.value;
      vr -= x * ii;
      vi += x * ir;
    }
  }
  const sr = vr + ir * r;
  const si = vi + ii * r;
  return -10 * Math.log10(4 / (sr * sr + si * si));
}

/**
 * Order needed for `attenuationDb` at `frequencyHz` (above the cutoff): Butterworth
 * `A = 10·log10(1 + Ω^{2n})`, Chebyshev `A = 10·log10(1 + ε²·cosh²(n·acosh Ω))` with
 * `ε² = 10^{ripple/10} − 1` (rounded up to odd).
 * @returns the order, 1…15.
 * @throws {OrthotoneError} INVALID_ARGUMENT when the frequency is not above the cutoff, or
 *   UNREACHABLE_TARGET when more than 15 elements would be needed.
 * Reference: Matthaei, Young & Jones (1964) §4.03 (attenuation of the maximally flat and Chebyshev
 * prototypes).
 */
export function orderFor(
  response: LadderResponse,
  cutoffHz: number,
  frequencyHz: number,
  attenuationDb: number,
  rippleDb = 0.1,
): number {
  requirePositive('cutoffHz', cutoffHz, 'Hz');
  requireRange('attenuationDb', attenuationDb, 0.1, 200, 'dB');
  if (!(frequencyHz > cutoffHz)) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `the frequency to attenuate, ${frequencyHz} Hz, must lie above the cutoff ${cutoffHz} Hz: lower --cutoff`,
      frequencyHz,
    );
  }
  const om = frequencyHz / cutoffHz;
  const need = 10 ** (attenuationDb / 10) - 1;
  let n: number;
  if (response === 'butterworth') n = Math.ceil(Math.log(need) / (2 * Math.log(om)) - 1e-9);
  else {
    const e2 = 10 ** (rippleDb / 10) - 1;
    n = Math.ceil(Math.acosh(Math.sqrt(Math.max(1, need / e2))) / Math.acosh(om) - 1e-9);
    if (n % 2 === 0) n += 1;
  }
  n = Math.max(1, n);
  if (n > 15) {
    throw new OrthotoneError(
      'UNREACHABLE_TARGET',
      `${attenuationDb} dB at ${frequencyHz} Hz needs order ${n} with a ${cutoffHz} Hz cutoff (at most 15): lower the cutoff or the attenuation`,
      n,
    );
  }
  return n;
}

/**
 * Designs the output low-pass filter: prototype, scaling to cutoff and impedance, optional rounding
 * of the capacitors to E12/E24 with the response recomputed from the rounded values, and the
 * response at the carrier's harmonics (2…9) or, without a carrier, at 1…5 times the cutoff.
 * @param spec see {@link OutputFilterSpec}; frequencies in Hz, impedance in Ω, levels in dB.
 * @returns the filter document (values in F and H).
 * @throws {OrthotoneError} INVALID_ARGUMENT for a bad option (neither order nor carrier and
 *   attenuation, an even Chebyshev order, a cutoff not below the 3rd harmonic response);
 *   UNREACHABLE_TARGET when the attenuation needs more than 15 elements.
 * Reference: Matthaei, Young & Jones (1964) §4.05 and §4.04 (scaling); IEC 60063 series.
 */
export function designOutputFilter(spec: OutputFilterSpec): OutputFilter {
  if (spec === null || typeof spec !== 'object') {
    throw new OrthotoneError('INVALID_ARGUMENT', 'output filter spec must be an object', spec);
  }
  const response = requireOneOf('response', spec.response, ['butterworth', 'chebyshev'] as const);
  const fc = requireRange('cutoffHz', spec.cutoffHz, 1, 1e11, 'Hz');
  const r = requireRange('impedanceOhms', spec.impedanceOhms ?? 50, 0.1, 1e6, 'Ω');
  const ripple =
    response === 'chebyshev' ? requireRange('rippleDb', spec.rippleDb ?? 0.1, 0.001, 3, 'dB') : 0;
  const series = spec.series ?? null;
  if (series !== null) requireOneOf('series', series, ['E12', 'E24'] as const);
  const carrier = spec.carrierHz === undefined ? null : requirePositive('carrierHz', spec.carrierHz, 'Hz');
  let order: number;
  let orderFrom: OutputFilter['orderFrom'];
  if (spec.order !== undefined) {
    order = requireInteger('order', spec.order, 1, 15);
    orderFrom = 'given';
  } else {
    if (carrier === null || spec.attenuationDb === undefined) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        'output filter needs an order, or a carrier frequency and the attenuation wanted at its 3rd harmonic response',
      );
    }
    order = orderFor(response, fc, 3 * carrier, spec.attenuationDb, ripple);
    orderFrom = 'attenuation';
  }
  const g = prototypeValues(response, order, ripple);
  const w = 2 * Math.PI * fc;
  const elements: LadderElement[] = g.map((gk, k) => {
    const kind = k % 2 === 0 ? 'C' : 'L';
    const exactValue = kind === 'C' ? gk / (w * r) : (gk * r) / w;
    const value = kind === 'C' && series !== null ? nearestSeriesValue(exactValue, series) : exactValue;
    return { kind, value, g: gk, exactValue };
  });
  const exact = elements.map((e) => ({ kind: e.kind, value: e.exactValue }));
  const freqs: { f: number; h?: number }[] =
    carrier !== null
      ? [1, 2, 3, 4, 5, 6, 7, 8, 9].map((h) => ({ f: h * carrier, h }))
      : [1, 2, 3, 4, 5].map((m) => ({ f: m * fc }));
  const points: FilterPoint[] = freqs.map(({ f, h }) => ({
    frequencyHz: f,
    ...(h !== undefined ? { harmonic: h } : {}),
    attenuationDb: ladderAttenuationDb(elements, f, r),
    exactAttenuationDb: ladderAttenuationDb(exact, f, r),
  }));
  return {
    format: 'orthotone-output-filter',
    version: 1,
    response,
    order,
    cutoffHz: fc,
    rippleDb: ripple,
    impedanceOhms: r,
    series,
    elements,
    carrierHz: carrier,
    points,
    orderFrom,
  };
}

/**
 * Validates a parsed output-filter document (as written by `orthotone output-filter --out`; a
 * document with only `elements` and optionally `impedanceOhms`, default 50 Ω, is accepted too).
 * @returns the document, typed.
 * @throws {OrthotoneError} INVALID_DOCUMENT naming the first bad field.
 */
export function validateOutputFilter(doc: unknown): OutputFilter {
  const bad = (m: string): never => {
    throw new OrthotoneError('INVALID_DOCUMENT', `output filter: ${m}`, doc);
  };
  if (typeof doc !== 'object' || doc === null) bad('must be a JSON object');
  const d = { ...(doc as Record<string, unknown>) };
  // A hand-written document may give only `elements` (and `impedanceOhms`, default 50 Ω).
  if (d.format !== undefined && d.format !== 'orthotone-output-filter') {
    bad(
      `format ${JSON.stringify(d.format)} must be "orthotone-output-filter": write one with 'orthotone output-filter --out'`,
    );
  }
  if (d.version !== undefined && d.version !== 1) {
    bad(`version ${JSON.stringify(d.version)} is not supported: this library reads version 1`);
  }
  d.impedanceOhms ??= 50;
  const imp = d.impedanceOhms;
  if (typeof imp !== 'number' || !(imp > 0) || !Number.isFinite(imp))
    bad('impedanceOhms must be a positive number of ohms');
  if (!Array.isArray(d.elements) || d.elements.length === 0) bad('elements must be a non-empty list');
  (d.elements as unknown[]).forEach((e, k) => {
    const x = e as Record<string, unknown>;
    if (typeof x !== 'object' || x === null || (x.kind !== 'L' && x.kind !== 'C')) {
      bad(`elements[${k}].kind must be "L" or "C"`);
    }
    if (typeof x.value !== 'number' || !(x.value > 0) || !Number.isFinite(x.value)) {
      bad(`elements[${k}].value must be a positive number (henry or farad)`);
    }
  });
  return d as unknown as OutputFilter;
}
