/**
 * The 90° all-pass pair in closed form (Darlington 1950; Orchard 1950): the equiripple (minimax)
 * phase-difference approximation with n real poles, mapped to the digital domain by the bilinear
 * transform with prewarping, which keeps it optimal.
 *
 * Analog prototype. For a band ratio B (band [1/√B, √B] rad/s, geometric centre 1), with
 * k' = 1/B, k = √(1 − k'²) and K = K(k):
 *   p_m = √k' · sn(u_m, k) / cn(u_m, k),  u_m = (2m − 1)·K / (2n),  m = 1 … n,
 * ascending. Odd m go to one branch, even m to the other; each pole is a section (p − s)/(p + s)
 * of phase −2·atan(Ω/p). The branch holding p_1 (the smallest pole) lags the other by 90° ± ε with
 * ε ≈ 4qⁿ rad, q = exp(−π·K(k')/K(k)) the nome.
 *
 * First-order digital form. s = (1/g)·(1 − z⁻¹)/(1 + z⁻¹) with g = √(tan(πf₁/fs)·tan(πf₂/fs))
 * maps the digital band edges f₁, f₂ exactly onto 1/√B and √B with B = tan(πf₂/fs)/tan(πf₁/fs),
 * and each pole to `(a + z⁻¹)/(1 + a·z⁻¹)` with a = (g·p − 1)/(g·p + 1). The section's phase is
 * exactly −2·atan(tan(ω/2)/(g·p)): the analog phase at the warped frequency, so the digital error
 * is the analog error, equiripple over the digital band.
 *
 * z⁻² form (band symmetric about fs/4, f₁ + f₂ = fs/2). Then g = 1 and B = cot²(πf₁/fs). Take an
 * odd number n = 2S + 1 of poles: p_{n+1−m} = 1/p_m (sc(u)·sc(K − u) = 1/k'), so a_{n+1−m} = −a_m,
 * and the centre pole p = 1 gives a = 0, a section equal to z⁻¹. Pairs m, n+1−m lie in the same
 * branch (n + 1 is even), and
 *   (a + z⁻¹)(−a + z⁻¹) / ((1 + a z⁻¹)(1 − a z⁻¹)) = (c + z⁻²)/(1 + c·z⁻²),  c = −a².
 * So S one-multiply z⁻² sections plus one sample of delay in one branch realise the closed form with
 * 2S + 1 poles: for S sections per branch-pair this is O. Niemitalo's structure (4N + 1 poles for
 * N sections per branch). The error is symmetric about fs/4, so for a band not symmetric about fs/4
 * the best z⁻² design is the closed form for the smallest symmetric band enclosing it.
 *
 * References: S. Darlington, "Realization of a constant phase difference", BSTJ 29:94–104, 1950;
 * H. J. Orchard, "Synthesis of wideband two-phase networks", Wireless Engineer 27:72–81, 1950;
 * Winder, Analog and Digital Filter Design, 2nd ed., §9 (Table 9.15); Abramowitz & Stegun 16–17;
 * O. Niemitalo, public music-dsp post (2001), two four-section z⁻² cascades.
 */
import { OrthotoneError } from '../core/errors.js';
import {
  requireBand,
  requireInteger,
  requireOneOf,
  requireRange,
  requireSampleRate,
  withDefaults,
} from '../core/validate.js';
import { bandGrid, maximizeOnGrid } from './analysis.js';
import { ellipK, ellipticNome, jacobiSnCnDn } from './elliptic.js';
import type { AllpassBranch, AllpassSection } from './network.js';

/** The analog closed-form prototype (Darlington/Orchard), band [1/√B, √B] rad/s. */
export interface AnalogAllpassPrototype {
  /** Number of poles n (sections, both branches). */
  order: number;
  /** Band ratio B = upper/lower edge. */
  bandRatio: number;
  /** All poles p_1 < … < p_n (rad/s), sections (p − s)/(p + s). */
  poles: number[];
  /** Poles of the branch that lags by 90° (odd m, holds p_1), ascending. */
  lagging: number[];
  /** Poles of the branch that leads (even m), ascending. */
  leading: number[];
  /** Nome q = exp(−π·K(k')/K(k)). */
  nome: number;
  /** Estimated maximum phase error 4qⁿ, radians. */
  phaseErrorEstimateRad: number;
}

/**
 * Poles of the closed-form analog 90° all-pass pair for `order` poles over band ratio `bandRatio`.
 * Poles above the centre are computed as reciprocals of those below (sc(u)·sc(K−u) = 1/k'), which
 * keeps full accuracy for very wide bands.
 * @param order number of poles n (total over both branches), 1 to 512.
 * @param bandRatio band ratio B > 1 (upper edge / lower edge, analog frequencies).
 * @returns poles, their split between the lagging and leading branch, nome and error estimate.
 * @throws {OrthotoneError} INVALID_ARGUMENT for a bad order or band ratio.
 * Reference: Darlington, BSTJ 29:94, 1950; Orchard, Wireless Engineer 27:72, 1950; as tabulated in
 * Winder, Analog and Digital Filter Design, 2nd ed., Table 9.15.
 */
export function analogAllpassPrototype(order: number, bandRatio: number): AnalogAllpassPrototype {
  const n = requireInteger('order', order, 1, 512);
  if (!(Number.isFinite(bandRatio) && bandRatio > 1)) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `bandRatio ${bandRatio} must be a finite number above 1 (upper band edge / lower band edge)`,
      bandRatio,
    );
  }
  const kp = 1 / bandRatio;
  const m1 = kp * kp; // k'², exact enough; m = k² = 1 − k'²
  const m = 1 - m1;
  const K = ellipK(m, m1);
  const sqrtKp = Math.sqrt(kp);
  const poles = new Array<number>(n);
  for (let j = 1; 2 * j - 1 <= n; j++) {
    // u ≤ K/2 here; the mirror pole is the reciprocal.
    const u = ((2 * j - 1) * K) / (2 * n);
    const { sn, cn } = jacobiSnCnDn(u, m, m1);
    const p = (sqrtKp * sn) / cn;
    poles[j - 1] = 2 * j - 1 === n ? 1 : p;
    poles[n - j] = 2 * j - 1 === n ? 1 : 1 / p;
  }
  const lagging = poles.filter((_, idx) => idx % 2 === 0);
  const leading = poles.filter((_, idx) => idx % 2 === 1);
  const nome = ellipticNome(m, m1);
  return { order: n, bandRatio, poles, lagging, leading, nome, phaseErrorEstimateRad: 4 * nome ** n };
}

/** Spec for {@link designAllpassPair}. */
export interface AllpassPairSpec {
  /** Sample rate, Hz. */
  sampleRate: number;
  /** Band [lo, hi], Hz, 0 < lo < hi < fs/2. */
  band: [number, number];
  /** Total sections (both branches). Default: the fewest that meet `targetDb`. */
  sections?: number;
  /** Worst opposite-sideband suppression wanted over the band, dB. Default 60 when `sections` is not given. */
  targetDb?: number;
  /**
   * 'first-order' (default): sections (a + z⁻¹)/(1 + a·z⁻¹). 'second-order': sections
   * (a + z⁻²)/(1 + a·z⁻²) and one sample of delay in one branch, about half the multiplies for
   * the same suppression; designed for the band symmetric about fs/4 that encloses `band`
   * (exactly `band` when f₁ + f₂ = fs/2).
   */
  form?: 'first-order' | 'second-order';
  /** Largest total number of sections the search may use. Default 64. */
  maxSections?: number;
}

/** Result of {@link designAllpassPair}. */
export interface AllpassPairDesign {
  /** The two branches; phase(i) − phase(q) = +90° over the band (Q lags I). */
  branches: { i: AllpassBranch; q: AllpassBranch };
  form: 'first-order' | 'second-order';
  /** Total sections, both branches (= multiplies per sample). */
  sections: number;
  /** Worst suppression over `band` by evaluation of the coefficients, dB. */
  worstSuppressionDb: number;
  /** Largest |phase error| over `band` by evaluation of the coefficients, degrees. */
  maxPhaseErrorDeg: number;
  /** Band the closed form was designed for, Hz (wider than `band` for an asymmetric z⁻² design). */
  designBand: [number, number];
  /** Band ratio of the analog prototype. */
  bandRatio: number;
  /** Poles of the analog prototype (2·sections + 1 for the z⁻² form). */
  prototypeOrder: number;
  /** Estimated phase error 4qⁿ of the prototype, degrees (the evaluated figure is `maxPhaseErrorDeg`). */
  phaseErrorEstimateDeg: number;
}

const PAIR_DEFAULTS: Readonly<
  Required<Omit<AllpassPairSpec, 'sampleRate' | 'band' | 'sections' | 'targetDb'>>
> = Object.freeze({ form: 'first-order', maxSections: 64 });

/** Largest target accepted, dB: beyond any analog path, and near the double-precision floor. */
export const MAX_DESIGN_TARGET_DB = 200;

/** Phase error in rad for a given suppression in dB at unity gain: 20·log10(cot(ε/2)) = dB. */
function phaseErrorForSuppression(db: number): number {
  return 2 * Math.atan(10 ** (-db / 20));
}

/** Suppression, dB, at unity gain and phase error ε (rad). Reference: docs/REFERENCES.md §1 (Schmidt 1994). */
function suppressionForPhaseError(eps: number): number {
  return 20 * Math.log10(Math.abs(1 / Math.tan(Math.abs(eps) / 2)));
}

interface Built {
  branches: { i: AllpassBranch; q: AllpassBranch };
  proto: AnalogAllpassPrototype;
}

function buildFirstOrder(n: number, fs: number, band: [number, number]): Built {
  const t1 = Math.tan((Math.PI * band[0]) / fs);
  const t2 = Math.tan((Math.PI * band[1]) / fs);
  const g = Math.sqrt(t1 * t2);
  const proto = analogAllpassPrototype(n, t2 / t1);
  const coef = (p: number): AllpassSection => ({ order: 1, a: (g * p - 1) / (g * p + 1) });
  return {
    branches: {
      i: { delay: 0, sections: proto.leading.map(coef) },
      q: { delay: 0, sections: proto.lagging.map(coef) },
    },
    proto,
  };
}

function buildSecondOrder(s: number, fs: number, designBand: [number, number]): Built {
  const n = 2 * s + 1;
  const t1 = Math.tan((Math.PI * designBand[0]) / fs);
  const proto = analogAllpassPrototype(n, 1 / (t1 * t1));
  const i: AllpassBranch = { delay: 0, sections: [] };
  const q: AllpassBranch = { delay: 0, sections: [] };
  for (let m = 1; m <= s; m++) {
    const p = proto.poles[m - 1]!;
    const a = (p - 1) / (p + 1);
    // odd m: lagging branch (Q); the pair m, n+1−m shares the branch.
    (m % 2 === 1 ? q : i).sections.push({ order: 2, a: -a * a });
  }
  // Centre pole m = s + 1 is z⁻¹.
  if ((s + 1) % 2 === 1) q.delay = 1;
  else i.delay = 1;
  return { branches: { i, q }, proto };
}

/**
 * Largest |phase(i) − phase(q) − 90°| over `band`, radians, from the coefficients: each section's
 * phase is exactly −2·atan(r·tan(mω/2)) with r = (1 − a)/(1 + a) (m its order), the delay −d·ω,
 * evaluated on a dense log-tan grid and refined around the grid maxima.
 */
function worstPhaseError(
  branches: { i: AllpassBranch; q: AllpassBranch },
  fs: number,
  band: readonly [number, number],
  stopAbove?: number,
): { eps: number; atHz: number; refined: boolean } {
  const prep = (b: AllpassBranch) => ({
    d: b.delay,
    r: b.sections.map((s) => (1 - s.a) / (1 + s.a)),
    o: b.sections.map((s) => s.order),
  });
  const bi = prep(branches.i);
  const bq = prep(branches.q);
  const phase = (b: ReturnType<typeof prep>, w: number): number => {
    let ph = -b.d * w;
    const t1 = Math.tan(w / 2);
    const t2 = Math.tan(w);
    for (let k = 0; k < b.r.length; k++) ph -= 2 * Math.atan(b.r[k]! * (b.o[k] === 1 ? t1 : t2));
    return ph;
  };
  const err = (f: number): number => {
    const w = (2 * Math.PI * f) / fs;
    let e = phase(bi, w) - phase(bq, w) - Math.PI / 2;
    e -= 2 * Math.PI * Math.round(e / (2 * Math.PI));
    return Math.abs(e);
  };
  const sections = bi.r.length + bq.r.length;
  const grid = bandGrid(
    band,
    12 * (sections + 2) + 48,
    (f) => Math.log(Math.tan((Math.PI * f) / fs)),
    (x) => (Math.atan(Math.exp(x)) * fs) / Math.PI,
  );
  const best = maximizeOnGrid(err, grid, {
    refine: sections + 4,
    iterations: 36,
    ...(stopAbove === undefined ? {} : { stopAbove }),
  });
  return { eps: best.value, atHz: best.at, refined: best.refined };
}

function validatePairSpec(spec: AllpassPairSpec): {
  fs: number;
  band: [number, number];
  form: 'first-order' | 'second-order';
  maxSections: number;
  sections: number | undefined;
  targetDb: number | undefined;
} {
  if (typeof spec !== 'object' || spec === null) {
    throw new OrthotoneError('INVALID_ARGUMENT', 'spec must be an object { sampleRate, band, ... }', spec);
  }
  const o = withDefaults(PAIR_DEFAULTS as Required<AllpassPairSpec>, spec, [
    'sampleRate',
    'band',
    'sections',
    'targetDb',
  ]);
  const fs = requireSampleRate(o.sampleRate);
  const band = requireBand(o.band, fs);
  const form = requireOneOf('form', o.form, ['first-order', 'second-order'] as const);
  const maxSections = requireInteger('maxSections', o.maxSections, 1, 256);
  const sections =
    spec.sections === undefined ? undefined : requireInteger('sections', spec.sections, 1, maxSections);
  const targetDb =
    spec.targetDb === undefined
      ? undefined
      : requireRange('targetDb', spec.targetDb, 1, MAX_DESIGN_TARGET_DB, 'dB');
  return { fs, band, form, maxSections, sections, targetDb };
}

/**
 * Designs a 90° all-pass pair in closed form: the fewest sections whose evaluated worst
 * suppression over the band meets `targetDb` (the closed form is the minimax optimum for each
 * size, so the search is over size only), or exactly `sections`.
 * @param spec sampleRate (Hz), band [lo, hi] (Hz), sections or targetDb (dB, default 60), form, maxSections.
 * @returns the branches (Q lags I by 90°), size and figures evaluated from the coefficients.
 * @throws {OrthotoneError} INVALID_ARGUMENT / INVALID_BAND for a bad spec; UNREACHABLE_TARGET when
 *   targetDb needs more than maxSections, or when both sections and targetDb are given and the
 *   sections fall short.
 * Reference: Darlington, BSTJ 29:94, 1950; Orchard, Wireless Engineer 27:72, 1950 (closed form);
 * bilinear transform with prewarping; O. Niemitalo (music-dsp, 2001) for the z⁻² structure.
 * @example
 * ```ts
 * import { designAllpassPair } from 'orthotone';
 *
 * const pair = designAllpassPair({ sampleRate: 48000, band: [300, 3000], targetDb: 60 });
 * console.log(pair.sections, 'sections:', pair.branches.i.sections.map((s) => s.a.toFixed(4)).join(' '));
 * ```
 */
export function designAllpassPair(spec: AllpassPairSpec): AllpassPairDesign {
  const { fs, band, form, maxSections, sections, targetDb: givenTarget } = validatePairSpec(spec);
  const targetDb = givenTarget ?? (sections === undefined ? 60 : undefined);
  const nyq = fs / 2;
  const lo2 = Math.min(band[0], nyq - band[1]);
  const designBand: [number, number] = form === 'first-order' ? band : [lo2, nyq - lo2];
  const tan1 = Math.tan((Math.PI * designBand[0]) / fs);
  const bandRatio =
    form === 'first-order' ? Math.tan((Math.PI * designBand[1]) / fs) / tan1 : 1 / (tan1 * tan1);

  const build = (size: number): Built =>
    form === 'first-order' ? buildFirstOrder(size, fs, designBand) : buildSecondOrder(size, fs, designBand);
  // Phase error that just meets the target; a size whose unrefined grid error already exceeds it fails.
  const epsTarget = targetDb === undefined ? undefined : phaseErrorForSuppression(targetDb);
  const cache = new Map<number, { built: Built; eps: number; refined: boolean }>();
  const evaluate = (size: number, stopAbove?: number) => {
    let r = cache.get(size);
    if (!r || (!r.refined && stopAbove === undefined)) {
      const built = r?.built ?? build(size);
      const w = worstPhaseError(built.branches, fs, band, stopAbove);
      r = { built, eps: w.eps, refined: w.refined };
      cache.set(size, r);
    }
    return r;
  };
  const meets = (size: number): boolean =>
    epsTarget === undefined || evaluate(size, epsTarget).eps <= epsTarget;

  let size: number;
  if (sections !== undefined) {
    size = sections;
    if (!meets(size)) {
      const got = suppressionForPhaseError(evaluate(size).eps);
      const need = findSize(targetDb!, size + 1, 256);
      throw new OrthotoneError(
        'UNREACHABLE_TARGET',
        `sections ${size} give ${got.toFixed(2)} dB worst suppression over [${band[0]}, ${band[1]}] Hz, below targetDb ${targetDb} dB: ` +
          (need === undefined ? 'lower targetDb' : `use sections ${need}`) +
          ', or omit sections to get the fewest that meet the target',
        size,
      );
    }
  } else {
    const found = findSize(targetDb!, 1, maxSections);
    if (found === undefined) {
      const best = suppressionForPhaseError(evaluate(maxSections).eps);
      throw new OrthotoneError(
        'UNREACHABLE_TARGET',
        `targetDb ${targetDb} dB needs more than maxSections ${maxSections} ${form} sections over [${band[0]}, ${band[1]}] Hz at sampleRate ${fs} ` +
          `(${maxSections} give ${best.toFixed(2)} dB): lower targetDb, narrow the band, or raise maxSections (up to 256)`,
        targetDb,
      );
    }
    size = found;
  }

  /**
   * The fewest sections in [from, to] meeting the target: start at the 4qⁿ estimate, then step
   * down while the smaller size still meets the target and up while it does not.
   */
  function findSize(target: number, from: number, to: number): number | undefined {
    const eps = phaseErrorForSuppression(target);
    const q = analogAllpassPrototype(1, bandRatio).nome;
    let guess: number;
    if (q === 0) guess = from;
    else {
      const nPoles = Math.log(eps / 4) / Math.log(q);
      guess = form === 'first-order' ? Math.ceil(nPoles) : Math.ceil((nPoles - 1) / 2);
    }
    let s = Math.min(to, Math.max(from, guess));
    if (meets(s)) {
      while (s > from && meets(s - 1)) s--;
      return s;
    }
    while (s < to) {
      s++;
      if (meets(s)) return s;
    }
    return undefined;
  }

  const { built, eps } = evaluate(size);
  const worst = { eps };
  return {
    branches: built.branches,
    form,
    sections: size,
    worstSuppressionDb: suppressionForPhaseError(worst.eps),
    maxPhaseErrorDeg: (worst.eps * 180) / Math.PI,
    designBand,
    bandRatio: built.proto.bandRatio,
    prototypeOrder: built.proto.order,
    phaseErrorEstimateDeg: (built.proto.phaseErrorEstimateRad * 180) / Math.PI,
  };
}
