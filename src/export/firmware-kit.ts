/**
 * The generated part of the firmware kit: `ortho_config.h` (arithmetic, sizes, headroom, table
 * names), `ortho_coeffs.c` (coefficient tables, and the profile's trims when given) and the kit's
 * `README.md` (how to call it, word lengths and headroom and why, memory, operations per sample).
 * The fixed C sources (`firmware/*.c`, `*.h`, `Makefile`) are copied beside these by
 * `orthotone firmware`. Every number here comes from `kitPlan` and `analyzeKitArithmetic`, the
 * same description the bit-exact model runs.
 */
import { type CalibrationProfile, validateProfile } from '../calibrate/profile.js';
import { OrthotoneError } from '../core/errors.js';
import { requireOneOf } from '../core/validate.js';
import { analyzeKitArithmetic, type KitArithmeticAnalysis } from '../design/arithmetic-analysis.js';
import {
  KIT_ARITHMETICS,
  KIT_WORD_LENGTHS,
  type KitArithmetic,
  type KitPlan,
  type KitTrimWords,
  kitPlan,
  kitTrimWords,
} from '../design/kit-arithmetic.js';
import { type Network, validateNetwork } from '../design/network.js';
import { cFloat, requireCIdentifier } from './c-format.js';

/** Options of {@link firmwareKitFiles}. */
export interface FirmwareKitOptions {
  /** Arithmetic of the kit. */
  arithmetic: KitArithmetic;
  /** Prefix of the generated table symbols, a C identifier (default `ortho`). */
  name?: string;
  /** Largest |skew| the kit's skew stage supports, whole samples 0–16 (default 0: no skew stage). */
  maxSkew?: number;
  /** A calibration profile whose trims become the kit's start-up trims. */
  profile?: CalibrationProfile | null;
}

/** What {@link firmwareKitFiles} returns. */
export interface FirmwareKit {
  /** Generated files by name (relative to the kit folder). */
  files: Record<string, string>;
  /** The tables' plan. */
  plan: KitPlan;
  /** The arithmetic analysis written into the README. */
  analysis: KitArithmeticAnalysis;
  /** The start-up trims in the kit's values (neutral, or the profile's). */
  startTrims: KitTrimWords;
}

/** The fixed C sources the kit folder must also hold (copied from `firmware/`). */
export const FIRMWARE_SOURCE_FILES: readonly string[] = Object.freeze([
  'ortho_kit.h',
  'ortho_kit.c',
  'ortho_host.h',
  'ortho_host.c',
  'ortho_arith.h',
  'host_check.c',
  'Makefile',
]);

function cInt(v: number, arithmetic: KitArithmetic): string {
  if (arithmetic === 'q31') return v === -2147483648 ? '(-2147483647L - 1)' : `${v}L`;
  return String(v);
}

function cWord(v: number, arithmetic: KitArithmetic): string {
  return arithmetic === 'float' ? cFloat(v) : cInt(v, arithmetic);
}

function cArrayDef(type: string, ident: string, values: readonly string[]): string {
  const vals = values.length ? values : ['0'];
  const lines: string[] = [];
  for (let k = 0; k < vals.length; k += 6) lines.push(`  ${vals.slice(k, k + 6).join(', ')},`);
  return `const ${type} ${ident}[${vals.length}] = {\n${lines.join('\n')}\n};\n`;
}

function db(x: number): string {
  return Number.isFinite(x) ? x.toFixed(1) : String(x);
}

/**
 * Generates the kit's tables, configuration and README for a network.
 * @param net a network document (DESIGN.md §3).
 * @param options arithmetic, symbol prefix, skew stage size, profile.
 * @returns the generated files, the plan, the analysis and the start-up trims.
 * @throws {OrthotoneError} INVALID_ARGUMENT for a bad arithmetic, name or maxSkew, or profile trims
 *   the kit cannot hold (e.g. a skew beyond maxSkew); INVALID_DOCUMENT for an invalid network or
 *   profile, or a profile made at another sample rate.
 * Reference: the arithmetic of `design/kit-arithmetic.ts`; L1-norm scaling (Jackson, BSTJ 49:159,
 * 1970); roundoff noise (Oppenheim & Schafer, Discrete-Time Signal Processing, 3rd ed., §6.9).
 */
export function firmwareKitFiles(net: Network, options: FirmwareKitOptions): FirmwareKit {
  const doc = validateNetwork(net);
  const arithmetic = requireOneOf('arithmetic', options.arithmetic, KIT_ARITHMETICS);
  const name = requireCIdentifier(options.name ?? 'ortho');
  const maxSkew = options.maxSkew ?? 0;
  if (!Number.isInteger(maxSkew) || maxSkew < 0 || maxSkew > 16) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `maxSkew ${maxSkew} must be a whole number of samples from 0 to 16 (0 leaves the skew stage out)`,
      maxSkew,
    );
  }
  const profile = options.profile ? validateProfile(options.profile) : null;
  if (profile && profile.sampleRate !== doc.sampleRate) {
    throw new OrthotoneError(
      'INVALID_DOCUMENT',
      `the profile was made at ${profile.sampleRate} Hz but the network runs at ${doc.sampleRate} Hz: calibrate again at ${doc.sampleRate} Hz`,
      profile.sampleRate,
    );
  }
  const plan = kitPlan(doc, arithmetic);
  const analysis = analyzeKitArithmetic(doc, arithmetic);
  const startTrims = kitTrimWords(
    profile ? profile.trims : { gainDb: 0, phaseDeg: 0, skewSamples: 0, dcI: 0, dcQ: 0 },
    profile?.sideband === 'lower',
    arithmetic,
    maxSkew,
  );
  const arithMacro = { float: 'ORTHO_ARITH_FLOAT', q31: 'ORTHO_ARITH_Q31', q15: 'ORTHO_ARITH_Q15' }[
    arithmetic
  ];
  const br = plan.branches;
  const fir = plan.fir;
  const config = [
    '/* Generated by orthotone firmware: the kit configuration for one network. Do not edit. */',
    '#ifndef ORTHO_CONFIG_H',
    '#define ORTHO_CONFIG_H',
    '',
    `#define ORTHO_ARITH ${arithMacro}`,
    `#define ORTHO_KIND ${doc.kind === 'allpass' ? 'ORTHO_KIND_ALLPASS' : 'ORTHO_KIND_FIR'}`,
    `#define ORTHO_SAMPLE_RATE_HZ ${doc.sampleRate}`,
    `#define ORTHO_HEADROOM_BITS ${plan.headroomBits} /* peak gain ${plan.peakGain.toFixed(3)} (largest L1 norm to any node) */`,
    `#define ORTHO_MAX_SKEW ${maxSkew}`,
    `#define ORTHO_SECTIONS_I ${br ? br.i.orders.length : 0}`,
    `#define ORTHO_SECTIONS_Q ${br ? br.q.orders.length : 0}`,
    `#define ORTHO_DELAY_I ${br ? br.i.delay : 0}`,
    `#define ORTHO_DELAY_Q ${br ? br.q.delay : 0}`,
    `#define ORTHO_FIR_TAPS ${fir ? fir.taps : 1}`,
    `#define ORTHO_FIR_CENTRE ${fir ? fir.centre : 0}`,
    `#define ORTHO_FIR_PAIRS ${fir ? fir.offsets.length : 0}`,
    `#define ORTHO_HAS_PROFILE ${profile ? 1 : 0}`,
    `#define ORTHO_COEF_I ${name}_coef_i`,
    `#define ORTHO_ORDER_I ${name}_order_i`,
    `#define ORTHO_COEF_Q ${name}_coef_q`,
    `#define ORTHO_ORDER_Q ${name}_order_q`,
    `#define ORTHO_FIR_COEF ${name}_fir_coef`,
    `#define ORTHO_FIR_OFFSET ${name}_fir_offset`,
    `#define ORTHO_PROFILE_TRIMS ${name}_profile_trims`,
    '',
    '#endif /* ORTHO_CONFIG_H */',
    '',
  ].join('\n');
  const w = (v: number) => cWord(v, arithmetic);
  let coeffs =
    '/* Generated by orthotone firmware: coefficient tables in the kit\'s arithmetic. Do not edit. */\n#include "ortho_kit.h"\n\n';
  if (br) {
    coeffs += cArrayDef('ortho_coef_t', 'ORTHO_COEF_I', br.i.words.map(w));
    coeffs += cArrayDef('unsigned char', 'ORTHO_ORDER_I', br.i.orders.map(String));
    coeffs += cArrayDef('ortho_coef_t', 'ORTHO_COEF_Q', br.q.words.map(w));
    coeffs += cArrayDef('unsigned char', 'ORTHO_ORDER_Q', br.q.orders.map(String));
  } else if (fir) {
    coeffs += cArrayDef('ortho_coef_t', 'ORTHO_FIR_COEF', fir.words.map(w));
    coeffs += cArrayDef('unsigned short', 'ORTHO_FIR_OFFSET', fir.offsets.map(String));
  }
  if (profile) {
    const t = startTrims;
    const s = (v: number) => (arithmetic === 'float' ? cFloat(v) : cInt(v, arithmetic));
    coeffs += `\n/* Start-up trims from the profile made ${profile.created} (${profile.sideband} sideband): gain ${profile.trims.gainDb} dB, phase ${profile.trims.phaseDeg} deg, skew ${profile.trims.skewSamples} samples, dc ${profile.trims.dcI}/${profile.trims.dcQ} FS. */\n`;
    coeffs += `const ortho_trims_t ORTHO_PROFILE_TRIMS = {${s(t.gainCos)}, ${s(t.gainSin)}, ${s(t.dcI)}, ${s(t.dcQ)}, ${t.lowerSideband}, ${t.skewWhole}, {${t.skewTaps.map(s).join(', ')}}};\n`;
  }
  const readme = kitReadme(doc, plan, analysis, maxSkew, name, profile);
  return {
    files: {
      'ortho_config.h': config,
      'ortho_coeffs.c': coeffs,
      'ortho_sections.c': sectionsC(plan),
      'README.md': readme,
    },
    plan,
    analysis,
    startTrims,
  };
}

/** Sections per branch in one pass: 4 + 4 recursions overlap well without running out of registers. */
const SECTIONS_PER_PASS = 4;

/** Splits `count` sections into `passes` runs of near-equal length: [start, end) per pass. */
function split(count: number, passes: number): [number, number][] {
  const out: [number, number][] = [];
  let s = 0;
  for (let p = 0; p < passes; p++) {
    const e = s + Math.ceil((count - s) / (passes - p));
    out.push([s, e]);
    s = e;
  }
  return out;
}

/**
 * `ortho_sections.c`: the all-pass sections of both branches as passes over a chunk, each pass
 * running up to four sections of each branch with their states in locals (generated so the orders
 * and counts are fixed at compile time); the section arithmetic is ORTHO_AP_STEP (ortho_arith.h).
 */
function sectionsC(plan: KitPlan): string {
  const head =
    '/* Generated by orthotone firmware: the all-pass sections as passes over a chunk. Do not edit. */\n#include "ortho_arith.h"\n\n';
  const br = plan.branches;
  if (!br) return `${head}typedef int ortho_sections_unused; /* an FIR kit has no all-pass sections */\n`;
  const ni = br.i.orders.length;
  const nq = br.q.orders.length;
  const passes = Math.max(1, Math.ceil(Math.max(ni, nq) / SECTIONS_PER_PASS));
  const pi = split(ni, passes);
  const pq = split(nq, passes);
  const L: string[] = [
    'void ortho_run_sections(ortho_word_t *bi, ortho_word_t *bq, int n, ortho_word_t *si, ortho_word_t *sq) {',
    '  int j;',
  ];
  if (ni + nq === 0)
    L.push('  (void)bi;', '  (void)bq;', '  (void)n;', '  (void)si;', '  (void)sq;', '  (void)j;');
  for (let p = 0; p < passes; p++) {
    const secs: { b: 'i' | 'q'; k: number; m: number }[] = [];
    for (let k = pi[p]![0]; k < pi[p]![1]; k++) secs.push({ b: 'i', k, m: br.i.orders[k]! });
    for (let k = pq[p]![0]; k < pq[p]![1]; k++) secs.push({ b: 'q', k, m: br.q.orders[k]! });
    if (secs.length === 0) continue;
    const useI = secs.some((x) => x.b === 'i');
    const useQ = secs.some((x) => x.b === 'q');
    L.push(`  { /* pass ${p}: ${secs.map((x) => `${x.b.toUpperCase()}${x.k} (z^-${x.m})`).join(', ')} */`);
    for (const x of secs) {
      const v = `${x.b}${x.k}`;
      const st = x.b === 'i' ? 'si' : 'sq';
      const tab = x.b === 'i' ? 'ORTHO_COEF_I' : 'ORTHO_COEF_Q';
      L.push(`    const ortho_coef_t a_${v} = ${tab}[${x.k}];`);
      L.push(`    ortho_word_t x1_${v} = ${st}[${4 * x.k}], y1_${v} = ${st}[${4 * x.k + 2}];`);
      if (x.m === 2)
        L.push(`    ortho_word_t x2_${v} = ${st}[${4 * x.k + 1}], y2_${v} = ${st}[${4 * x.k + 3}];`);
    }
    L.push('    for (j = 0; j < n; j++) {');
    if (useI) L.push('      ortho_word_t vi = bi[j];');
    if (useQ) L.push('      ortho_word_t vq = bq[j];');
    L.push('      ortho_word_t t;');
    // Interleave the branches so independent recursions sit next to each other.
    const order = [...secs].sort((a, b) => a.k - b.k || (a.b < b.b ? -1 : 1));
    for (const x of order) {
      const v = `${x.b}${x.k}`;
      const val = x.b === 'i' ? 'vi' : 'vq';
      if (x.m === 1) {
        L.push(`      ORTHO_AP_STEP(a_${v}, ${val}, x1_${v}, y1_${v}, t);`);
        L.push(`      x1_${v} = ${val};`, `      y1_${v} = t;`);
      } else {
        L.push(`      ORTHO_AP_STEP(a_${v}, ${val}, x2_${v}, y2_${v}, t);`);
        L.push(
          `      x2_${v} = x1_${v};`,
          `      x1_${v} = ${val};`,
          `      y2_${v} = y1_${v};`,
          `      y1_${v} = t;`,
        );
      }
      L.push(`      ${val} = t;`);
    }
    if (useI) L.push('      bi[j] = vi;');
    if (useQ) L.push('      bq[j] = vq;');
    L.push('    }');
    for (const x of secs) {
      const v = `${x.b}${x.k}`;
      const st = x.b === 'i' ? 'si' : 'sq';
      L.push(`    ${st}[${4 * x.k}] = x1_${v};`, `    ${st}[${4 * x.k + 2}] = y1_${v};`);
      if (x.m === 2) L.push(`    ${st}[${4 * x.k + 1}] = x2_${v};`, `    ${st}[${4 * x.k + 3}] = y2_${v};`);
    }
    L.push('  }');
  }
  L.push('}', '');
  return head + L.join('\n');
}

function kitReadme(
  net: Network,
  plan: KitPlan,
  an: KitArithmeticAnalysis,
  maxSkew: number,
  name: string,
  profile: CalibrationProfile | null,
): string {
  const ar = plan.arithmetic;
  const wl = KIT_WORD_LENGTHS[ar];
  const words =
    ar === 'float'
      ? '- IEEE single precision (`float`) throughout; no rounding steps beyond the floating point, no saturation.'
      : [
          `- input and output samples: ${wl.sampleBits}-bit Q${wl.sampleBits - 1} (full scale ±1);`,
          `- coefficients: ${wl.coefficientBits}-bit Q${wl.coefficientBits - 1}; trims (G·cos φ, G·sin φ) and skew taps Q${wl.coefficientBits - 2} (range ±2, gains up to +6 dB); DC in output counts (${wl.sampleBits}-bit);`,
          `- network signals and states: 32-bit Q${31 - plan.headroomBits}, i.e. ${plan.headroomBits} headroom bits above full scale;`,
          '- products and sums: 64-bit accumulators.',
        ].join('\n');
  const stateWords = plan.branches
    ? 4 * (plan.branches.i.orders.length + plan.branches.q.orders.length) +
      plan.branches.i.delay +
      plan.branches.q.delay
    : 2 * (plan.fir?.taps ?? 0);
  const wordBytes = ar === 'float' ? 4 : 4;
  const sampleBytes = ar === 'q15' ? 2 : 4;
  const skewBytes = maxSkew > 0 ? 2 * 2 * (2 * maxSkew + 4) * sampleBytes : 0;
  const stateBytes = stateWords * wordBytes + skewBytes + 2 * 64 * wordBytes;
  const coefWords = plan.branches
    ? plan.branches.i.orders.length + plan.branches.q.orders.length
    : (plan.fir?.offsets.length ?? 0);
  const ops = an.operationsPerSample;
  const lines = [
    `# orthotone firmware kit (${ar}, ${net.kind}, ${net.sampleRate} Hz, band ${net.band[0]}–${net.band[1]} Hz)`,
    '',
    'Generated by `orthotone firmware`. C99, no malloc, no mutable globals, no libm in the per-sample',
    'path (the host helper `ortho_host.c` uses libm for set-up only). All state is in one `ortho_t`.',
    '',
    '> Transmitting needs a licence; spurious emissions have legal limits. Test into a dummy load,',
    '> mind RF exposure, and follow your local regulations and licensed practice.',
    '',
    '## How to call it',
    '',
    '```c',
    '#include "ortho_kit.h"',
    'static ortho_t gen;                 /* caller-owned; no pointers inside */',
    "ortho_init(&gen);                   /* silence, neutral trims (or the profile's, see below) */",
    "ortho_set_trims(&gen, &trims);      /* the kit's own values: G*cos(phi), G*sin(phi), DC counts */",
    'ortho_process(&gen, in, out_i, out_q, n);  /* any n, once per block */',
    '```',
    '',
    'Make trims on the host with `ortho_trims_from_units(&trims, gain_db, phase_deg, skew_samples,',
    'dc_i, dc_q, lower_sideband)` (`ortho_host.h`), or take them from a profile header. Order of the',
    "trims (orthotone DESIGN §4): Q' = G·(s·Q·cos φ + I·sin φ) with s = −1 for the lower sideband;",
    maxSkew === 0
      ? 'then the skew (this kit has none: regenerate with --max-skew N for a fractional skew stage); then DC added last.'
      : `then Q' delayed by the skew (fractional, |skew| ≤ ${maxSkew} samples, 4-point Lagrange; I' delayed by ${maxSkew + 1}); then DC added last.`,
    profile
      ? `\`ortho_init\` starts with the trims of the profile made ${profile.created} (\`${name}_profile_trims\`).${profile.correction ? " The profile's frequency-dependent correction is not part of the kit." : ''}`
      : '`ortho_init` starts with neutral trims.',
    '',
    '`make` builds `host-check`: one input sample per line on stdin (full scale ±1), `i q` lines on',
    'stdout; `--gain-db --phase-deg --dc-i --dc-q --skew-samples --lower`. Compare its output with',
    '`orthotone render --vectors` using `orthotone port-check`.',
    '',
    '## Word lengths and headroom, and why',
    '',
    words,
    '',
    ar === 'float'
      ? 'Each all-pass branch adds 1e-20 at its input and removes it at its output, so the recursions never decay into subnormal numbers (which are slow on many cores).'
      : [
          `The headroom is the smallest whole number of bits H with 2^H ≥ ${plan.peakGain.toFixed(3)}, the largest L1 norm of the`,
          'impulse response from the input to any node of the network: no node can overflow for any input',
          'within full scale (Jackson, BSTJ 49:159, 1970). 32-bit states keep the roundoff far below the',
          `output word: the ${wl.sampleBits}-bit output rounding sets the noise floor. The all-pass products are truncated`,
          'toward zero, which rules out zero-input limit cycles (Jackson, BSTJ 48:3021, 1969): silence in',
          'gives exactly zero out. Everything else rounds half up. The output saturates; a full-scale input',
          `can reach ${db(an.outputPeakDbfs)} dBFS at the output before saturation (input back-off for no clipping: ${db(Math.max(0, an.outputPeakDbfs))} dB).`,
        ].join('\n'),
    '',
    '## What it achieves (predicted, checked against the bit-exact model)',
    '',
    `- worst image rejection over the band with the rounded coefficients: ${db(an.imageRejectionDb)} dB (unrounded design: ${db(net.predicted.worstSuppressionDb)} dB);`,
    `- output noise floor (white-noise model of every rounding, Oppenheim & Schafer, Discrete-Time Signal Processing, 3rd ed., §6.9): ${db(an.noiseFloorDbfs)} dBFS total per channel, ${db(an.noiseDensityDbfsPerHz)} dBFS/Hz;`,
    `- zero-input limit cycles: ${an.limitCycleFree ? 'none (state decays to exactly zero)' : `dead band up to ${an.deadBandLsb} LSB`}.`,
    '',
    '## Memory and operations per sample',
    '',
    `- state (\`sizeof(ortho_t)\`, about): ${stateBytes} bytes, of which ${2 * 64 * wordBytes} bytes are the two 64-sample work arrays;`,
    `- tables: ${coefWords} coefficient words${plan.fir ? ` and ${plan.fir.offsets.length} offsets` : ''};`,
    `- per input sample: ${ops.multiplies} multiplies, ${ops.additions} additions, ${ops.shifts} shifts, ${ops.saturations} saturations;`,
    `- estimate on a 32-bit microcontroller with a single-cycle multiply-accumulate: about ${an.cyclesPerSampleEstimate} cycles per sample`,
    `  (${((an.cyclesPerSampleEstimate * net.sampleRate) / 1e6).toFixed(1)} MHz at ${net.sampleRate} Hz), counting one cycle per operation and two per 64-bit`,
    '  shift or saturation (an estimate, not a measurement).',
    '',
  ];
  return lines.join('\n');
}
