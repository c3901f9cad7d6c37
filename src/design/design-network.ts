/**
 * `designNetwork`: one entry point that turns a spec into a complete network document
 * (DESIGN.md §3), by Hilbert FIR, by all-pass pair, or by choosing the cheaper of the two.
 *
 * The document's `predicted` figures come from an independent evaluation of the final coefficients
 * (analysis.ts), never from the designer's own bookkeeping; `cost` likewise.
 */
import { isOrthotoneError, OrthotoneError } from '../core/errors.js';
import {
  rejectUnknownKeys,
  requireBand,
  requireInteger,
  requireOneOf,
  requirePositive,
  requireRange,
  requireSampleRate,
} from '../core/validate.js';
import { type AllpassPairDesign, designAllpassPair, MAX_DESIGN_TARGET_DB } from './allpass-pair.js';
import { networkCost, predictFigures, worstSuppressionDb } from './analysis.js';
import {
  designHilbertFir,
  designHilbertFirJudged,
  type HilbertFirDesign,
  MAX_TAPS_LIMIT,
} from './hilbert-fir.js';
import type { AllpassNetwork, FirNetwork, Network } from './network.js';
import { validateNetwork } from './network.js';
import {
  COEFFICIENT_FORMATS,
  type CoefficientFormat,
  quantizeCoefficient,
  quantizeNetwork,
} from './quantize.js';

/** Spec for {@link designNetwork}. */
export interface NetworkSpec {
  /** Sample rate, Hz. */
  sampleRate: number;
  /** Band [lo, hi], Hz, 0 < lo < hi < fs/2. */
  band: [number, number];
  /** 'fir' (Hilbert FIR), 'allpass' (all-pass pair) or 'auto' (fewest multiplies per sample meeting the target). */
  method: 'fir' | 'allpass' | 'auto';
  /** Worst opposite-sideband suppression wanted over the band, dB. Default 60 unless a size is given. */
  targetDb?: number;
  /** FIR length (odd). Default: the shortest meeting targetDb. */
  taps?: number;
  /** All-pass sections, both branches. Default: the fewest meeting targetDb. */
  sections?: number;
  /** FIR method. Default 'remez'. */
  firMethod?: 'remez' | 'kaiser';
  /** All-pass form. Default 'first-order'; 'auto' tries both. */
  allpassForm?: 'first-order' | 'second-order';
  /** Largest acceptable latency (mean group delay over the band), samples. Default: no limit. */
  maxLatencySamples?: number;
  /** Largest all-pass size the search may use. Default 64. */
  maxSections?: number;
  /** Largest FIR length the search may use (passed to the FIR designer). */
  maxTaps?: number;
  /**
   * The number format the coefficients will run in. Default 'float64' (no rounding). With
   * 'float32', 'q31' or 'q15' the document holds the rounded coefficients, `predicted` is the
   * rounded network's, and the size search goes on until the ROUNDED network meets targetDb
   * (firmware running Q15 coefficients typically needs one more section or a few more taps).
   */
  coefficientFormat?: 'float64' | CoefficientFormat;
}

/** One design considered by method 'auto'. */
export interface DesignCandidate {
  method: 'fir' | 'allpass';
  /** 'remez' | 'kaiser' for FIR, 'first-order' | 'second-order' for all-pass. */
  variant: string;
  /** FIR taps or all-pass sections. */
  size?: number;
  multipliesPerSample?: number;
  latencySamples?: number;
  worstSuppressionDb?: number;
  /** Why it was not chosen or could not be made. */
  note?: string;
}

const DEFAULT_TARGET_DB = 60;

/** Every key a {@link NetworkSpec} may hold (an unknown one is refused, naming the nearest). */
const SPEC_KEYS: readonly string[] = [
  'sampleRate',
  'band',
  'method',
  'targetDb',
  'taps',
  'sections',
  'firMethod',
  'allpassForm',
  'maxLatencySamples',
  'maxSections',
  'maxTaps',
  'coefficientFormat',
];

interface Checked {
  fs: number;
  band: [number, number];
  method: 'fir' | 'allpass' | 'auto';
  targetDb: number | undefined;
  taps: number | undefined;
  sections: number | undefined;
  firMethod: 'remez' | 'kaiser';
  allpassForm: 'first-order' | 'second-order' | undefined;
  maxLatencySamples: number | undefined;
  maxSections: number;
  maxTaps: number | undefined;
  format: CoefficientFormat | undefined;
}

function checkSpec(spec: NetworkSpec): Checked {
  if (typeof spec !== 'object' || spec === null) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `spec ${String(spec)} must be an object { sampleRate, band, method, ... }`,
      spec,
    );
  }
  rejectUnknownKeys('the network spec', spec, SPEC_KEYS);
  const fs = requireSampleRate(spec.sampleRate);
  const band = requireBand(spec.band, fs);
  const method = requireOneOf('method', spec.method, ['fir', 'allpass', 'auto'] as const);
  const opt = <T>(v: T | undefined, f: (v: T) => T): T | undefined => (v === undefined ? undefined : f(v));
  const maxSections = requireInteger('maxSections', spec.maxSections ?? 64, 1, 256);
  const c: Checked = {
    fs,
    band,
    method,
    targetDb: opt(spec.targetDb, (v) => requireRange('targetDb', v, 1, MAX_DESIGN_TARGET_DB, 'dB')),
    taps: opt(spec.taps, (v) => requireInteger('taps', v, 3, MAX_TAPS_LIMIT)),
    sections: opt(spec.sections, (v) => requireInteger('sections', v, 1, maxSections)),
    firMethod: requireOneOf('firMethod', spec.firMethod ?? 'remez', ['remez', 'kaiser'] as const),
    allpassForm: opt(spec.allpassForm, (v) =>
      requireOneOf('allpassForm', v, ['first-order', 'second-order'] as const),
    ),
    maxLatencySamples: opt(spec.maxLatencySamples, (v) => requirePositive('maxLatencySamples', v, 'samples')),
    maxSections,
    maxTaps: opt(spec.maxTaps, (v) => requireInteger('maxTaps', v, 3, MAX_TAPS_LIMIT)),
    format: undefined,
  };
  const format = requireOneOf('coefficientFormat', spec.coefficientFormat ?? 'float64', [
    'float64',
    ...COEFFICIENT_FORMATS,
  ]);
  if (format !== 'float64') c.format = format;
  // A size belongs to one network type: taps to the FIR, sections to the all-pass pair. Ignoring
  // one quietly (method 'auto' returning an all-pass for taps 63) would hide the user's intent.
  if (c.taps !== undefined && method !== 'fir') {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `taps ${c.taps} sets the length of a Hilbert FIR but method is '${method}': use method 'fir', or drop taps`,
      c.taps,
    );
  }
  if (c.sections !== undefined && method !== 'allpass') {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `sections ${c.sections} sets the size of an all-pass pair but method is '${method}': use method 'allpass', or drop sections`,
      c.sections,
    );
  }
  if (c.taps !== undefined && c.taps % 2 === 0) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `taps ${c.taps} must be odd (a type III Hilbert FIR): use ${c.taps - 1} or ${c.taps + 1}`,
      c.taps,
    );
  }
  return c;
}

/** The spec as given (defined fields only), for the document's `design` echo. */
function echo(spec: NetworkSpec): Record<string, unknown> {
  const out: Record<string, unknown> = {};
  for (const [k, v] of Object.entries(spec)) {
    if (v !== undefined) out[k] = Array.isArray(v) ? [...v] : v;
  }
  return out;
}

/** The document in the spec's coefficient format (rounded, re-evaluated), or as it is. */
function rounded<T extends Network>(c: Checked, net: T): T {
  return c.format === undefined ? net : (quantizeNetwork(net, c.format) as T);
}

function allpassDocument(c: Checked, d: AllpassPairDesign, design: Record<string, unknown>): AllpassNetwork {
  const body = { kind: 'allpass' as const, sampleRate: c.fs, band: c.band, branches: d.branches };
  return rounded(c, {
    format: 'orthotone-network',
    version: 1,
    ...body,
    predicted: predictFigures(body),
    cost: networkCost(body),
    design: {
      ...design,
      realised: {
        method: 'allpass',
        form: d.form,
        sections: d.sections,
        designBand: d.designBand,
        bandRatio: d.bandRatio,
        prototypePoles: d.prototypeOrder,
      },
    },
  });
}

function firDocument(c: Checked, d: HilbertFirDesign, design: Record<string, unknown>): FirNetwork {
  const body = { kind: 'fir' as const, sampleRate: c.fs, band: c.band, taps: d.taps };
  const realised: Record<string, unknown> = {
    method: 'fir',
    firMethod: d.method,
    taps: d.taps.length,
    zeroTaps: d.zeroTaps,
  };
  if (d.beta !== undefined) realised.beta = d.beta;
  if (d.iterations !== undefined) realised.iterations = d.iterations;
  return rounded(c, {
    format: 'orthotone-network',
    version: 1,
    ...body,
    predicted: predictFigures(body),
    cost: networkCost(body),
    design: { ...design, realised },
  });
}

function shortfall(
  c: Checked,
  net: Network,
  targetDb: number | undefined,
  sizeName: string,
  sizeGiven: boolean,
): void {
  if (targetDb !== undefined && net.predicted.worstSuppressionDb < targetDb) {
    const what = sizeName.split(' ')[0]!;
    const fix = sizeGiven
      ? `omit ${what} to get the smallest design that meets the target, or lower targetDb`
      : c.format !== undefined
        ? `the search stopped there after rounding to ${c.format}: use a wider coefficient format, raise ${what === 'taps' ? 'maxTaps' : 'maxSections'}, or lower targetDb`
        : `raise ${what === 'taps' ? 'maxTaps' : 'maxSections'}, widen the band, or lower targetDb`;
    throw new OrthotoneError(
      'UNREACHABLE_TARGET',
      `${sizeName} give ${net.predicted.worstSuppressionDb.toFixed(2)} dB worst suppression over [${c.band[0]}, ${c.band[1]}] Hz, below targetDb ${targetDb} dB: ${fix}`,
      targetDb,
    );
  }
  if (c.maxLatencySamples !== undefined && net.cost.latencySamples > c.maxLatencySamples) {
    throw new OrthotoneError(
      'UNREACHABLE_TARGET',
      `latency ${net.cost.latencySamples.toFixed(1)} samples exceeds maxLatencySamples ${c.maxLatencySamples}: ` +
        `raise maxLatencySamples, lower targetDb, or try method 'auto' (the other network type may be quicker)`,
      c.maxLatencySamples,
    );
  }
}

function designFir(c: Checked, targetDb: number | undefined, design: Record<string, unknown>): FirNetwork {
  const base = { sampleRate: c.fs, band: c.band, method: c.firMethod } as const;
  const extra = c.maxTaps === undefined ? {} : { maxTaps: c.maxTaps };
  if (c.taps !== undefined) {
    const net = firDocument(c, designHilbertFir({ ...base, ...extra, taps: c.taps }), design);
    shortfall(c, net, targetDb, `taps ${c.taps}`, true);
    return net;
  }
  const target = targetDb ?? DEFAULT_TARGET_DB;
  // One length search: the FIR designer's, judged by the figure this document will carry (the
  // independent evaluation of the taps, after rounding them to the coefficient format if one is
  // given), so no second search has to lengthen the filter afterwards.
  const judge = (taps: Float64Array): number => {
    const t =
      c.format === undefined ? Array.from(taps) : Array.from(taps, (x) => quantizeCoefficient(x, c.format!));
    return worstSuppressionDb({ kind: 'fir', sampleRate: c.fs, band: c.band, taps: t });
  };
  const net = firDocument(c, designHilbertFirJudged({ ...base, ...extra, targetDb: target }, judge), design);
  shortfall(c, net, target, `taps ${net.taps.length}`, false);
  return net;
}

function designAllpass(
  c: Checked,
  targetDb: number | undefined,
  form: 'first-order' | 'second-order',
  design: Record<string, unknown>,
): AllpassNetwork {
  const pairSpec = {
    sampleRate: c.fs,
    band: c.band,
    form,
    maxSections: c.maxSections,
    ...(c.sections === undefined ? {} : { sections: c.sections }),
    ...(targetDb === undefined ? {} : { targetDb }),
  };
  let net = allpassDocument(c, designAllpassPair(pairSpec), design);
  // With rounded coefficients the fewest sections may fall short: add sections until the rounded
  // network meets the target (each design is again the closed-form optimum for its size).
  let n = net.branches.i.sections.length + net.branches.q.sections.length;
  while (
    c.format !== undefined &&
    c.sections === undefined &&
    targetDb !== undefined &&
    net.predicted.worstSuppressionDb < targetDb &&
    n < c.maxSections
  ) {
    n += 1;
    const { targetDb: _, ...sized } = pairSpec;
    const next = designAllpassPair({ ...sized, sections: n });
    n = next.sections;
    net = allpassDocument(c, next, design);
  }
  shortfall(
    c,
    net,
    targetDb,
    `sections ${net.branches.i.sections.length + net.branches.q.sections.length}`,
    c.sections !== undefined,
  );
  return net;
}

function describe(x: DesignCandidate): string {
  const what = `${x.method} (${x.variant}${x.size === undefined ? '' : `, ${x.size} ${x.method === 'fir' ? 'taps' : 'sections'}`})`;
  if (x.multipliesPerSample === undefined) return `${what}: ${x.note ?? 'not made'}`;
  return (
    `${what}: ${x.multipliesPerSample} multiplies/sample, latency ${x.latencySamples!.toFixed(1)} samples, ` +
    `${x.worstSuppressionDb!.toFixed(2)} dB${x.note ? ` (${x.note})` : ''}`
  );
}

function designAuto(c: Checked, design: Record<string, unknown>): Network {
  const targetDb = c.targetDb ?? DEFAULT_TARGET_DB;
  const attempts: { candidate: DesignCandidate; net?: Network }[] = [];
  const tryOne = (method: 'fir' | 'allpass', variant: string, make: () => Network) => {
    try {
      // Latency is judged below, across candidates, so each is made without the latency limit.
      const net = make();
      attempts.push({
        candidate: {
          method,
          variant,
          size:
            net.kind === 'fir'
              ? net.taps.length
              : net.branches.i.sections.length + net.branches.q.sections.length,
          multipliesPerSample: net.cost.multipliesPerSample,
          latencySamples: net.cost.latencySamples,
          worstSuppressionDb: net.predicted.worstSuppressionDb,
        },
        net,
      });
    } catch (e) {
      // A candidate that cannot be made (size limits, no convergence, or a target outside what
      // that designer accepts) is reported, not fatal: the other network type may still do.
      const codes = ['UNREACHABLE_TARGET', 'NO_CONVERGENCE', 'INVALID_ARGUMENT'];
      if (!isOrthotoneError(e) || !codes.includes(e.code)) throw e;
      attempts.push({ candidate: { method, variant, note: e.message } });
    }
  };
  const free = { ...c, maxLatencySamples: undefined };
  tryOne('fir', c.firMethod, () => designFir(free, targetDb, design));
  const forms = c.allpassForm ? [c.allpassForm] : (['first-order', 'second-order'] as const);
  for (const form of forms) tryOne('allpass', form, () => designAllpass(free, targetDb, form, design));

  const ok = attempts.filter(
    (a) =>
      a.net !== undefined &&
      (c.maxLatencySamples === undefined || a.net.cost.latencySamples <= c.maxLatencySamples),
  );
  for (const a of attempts) {
    if (a.net && !ok.includes(a)) a.candidate.note = `latency above maxLatencySamples ${c.maxLatencySamples}`;
  }
  ok.sort(
    (x, y) =>
      x.net!.cost.multipliesPerSample - y.net!.cost.multipliesPerSample ||
      x.net!.cost.latencySamples - y.net!.cost.latencySamples,
  );
  const best = ok[0];
  if (!best) {
    throw new OrthotoneError(
      'UNREACHABLE_TARGET',
      `no network meets targetDb ${targetDb} dB over [${c.band[0]}, ${c.band[1]}] Hz at sampleRate ${c.fs}` +
        (c.maxLatencySamples === undefined ? '' : ` within maxLatencySamples ${c.maxLatencySamples}`) +
        `: ${attempts.map((a) => describe(a.candidate)).join('; ')}. Lower targetDb, narrow the band, or relax the limits`,
      targetDb,
    );
  }
  const chosen = best.candidate;
  const others = attempts.filter((a) => a !== best).map((a) => describe(a.candidate));
  const reason =
    `chose ${describe(chosen)}: the fewest multiplies per sample meeting ${targetDb} dB` +
    (c.maxLatencySamples === undefined ? '' : ` within ${c.maxLatencySamples} samples latency`) +
    `. Also considered: ${others.join('; ')}.`;
  const net = best.net!;
  net.design = {
    ...net.design,
    targetDb,
    reason,
    candidates: attempts.map((a) => a.candidate),
  };
  return net;
}

/**
 * Designs a 90° network and returns its complete document (DESIGN.md §3).
 *
 * - method 'fir': a Hilbert FIR (Q) against a pure delay (I), by Parks–McClellan ('remez') or a
 *   Kaiser-windowed ideal response ('kaiser'); the shortest meeting targetDb, or `taps` long.
 * - method 'allpass': a closed-form all-pass pair; the fewest sections meeting targetDb, or
 *   `sections`; `allpassForm` 'first-order' (default) or 'second-order' (z⁻² sections).
 * - method 'auto': designs the FIR and both all-pass forms to targetDb and keeps the one with the
 *   fewest multiplies per sample (ties: lower latency) within `maxLatencySamples`;
 *   `design.reason` says why, `design.candidates` lists every candidate's cost and latency.
 *
 * targetDb defaults to 60 dB when neither it nor a size is given. `predicted` and `cost` are an
 * independent evaluation of the final coefficients; `design` echoes the spec plus what was
 * realised (`design.realised`).
 * @param spec sampleRate (Hz), band [lo, hi] (Hz), method, targetDb (dB), taps, sections,
 *   firMethod, allpassForm, maxLatencySamples (samples), maxSections, maxTaps, coefficientFormat
 *   ('float64' default; 'float32', 'q31', 'q15': the target is met after rounding).
 * @returns a validated network document.
 * @throws {OrthotoneError} INVALID_ARGUMENT / INVALID_BAND for a bad spec; UNREACHABLE_TARGET when
 *   the target (or latency limit) cannot be met within the size limits, or a given size falls
 *   short of a given target; NO_CONVERGENCE if the FIR exchange fails.
 * Reference: Darlington, BSTJ 29:94 (1950) and Orchard, Wireless Engineer 27:72 (1950) for the
 * all-pass pair; McClellan, Parks & Rabiner (1973) and Kaiser (1974) for the FIR.
 * @example
 * ```ts
 * import { designNetwork } from 'orthotone';
 *
 * // The cheapest 90° network for speech, 300–3000 Hz at 48 kHz, with at least 60 dB suppression.
 * const net = designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'auto', targetDb: 60 });
 * console.log(net.kind, net.predicted.worstSuppressionDb.toFixed(1), 'dB,', net.cost.multipliesPerSample, 'multiplies/sample');
 * if (net.predicted.worstSuppressionDb < 60) throw new Error('target not met');
 * ```
 */
export function designNetwork(spec: NetworkSpec): Network {
  const c = checkSpec(spec);
  const design = echo(spec);
  let net: Network;
  if (c.method === 'auto') {
    net = designAuto(c, design);
  } else {
    const sizeGiven = c.method === 'fir' ? c.taps !== undefined : c.sections !== undefined;
    const targetDb = c.targetDb ?? (sizeGiven ? undefined : DEFAULT_TARGET_DB);
    if (targetDb !== undefined) design.targetDb = targetDb;
    net =
      c.method === 'fir'
        ? designFir(c, targetDb, design)
        : designAllpass(c, targetDb, c.allpassForm ?? 'first-order', design);
  }
  return validateNetwork(net);
}
