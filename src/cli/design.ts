/**
 * `orthotone design`: design a 90° network for a sample rate and band and print or write it as a
 * readable table, the JSON network document, a C header or CSV.
 */
import { analyzeNetwork } from '../design/analysis.js';
import { analyzeKitArithmetic } from '../design/arithmetic-analysis.js';
import { designNetwork, type NetworkSpec } from '../design/design-network.js';
import { KIT_ARITHMETICS, KIT_WORD_LENGTHS, type KitArithmetic } from '../design/kit-arithmetic.js';
import type { Network } from '../design/network.js';
import { quantizationReport } from '../design/quantize.js';
import { networkToCHeader } from '../export/c-header.js';
import { networkToCsv } from '../export/csv.js';
import { networkToJson } from '../export/network-json.js';
import { analysisToSvg } from '../export/svg-plot.js';
import type { GeneratorArithmetic } from '../generate/quadrature-generator.js';
import { assertDistinctFiles, writeFileAtomic } from '../node/files.js';
import { choiceOpt, inCliWords, numberListOpt, numberOpt, parseCommand, UsageError } from './args.js';
import { fixed, formatPairs } from './table.js';

const HELP = `usage: orthotone design [options]

Designs the 90° network of a phasing exciter and reports the opposite-sideband suppression it allows.

options:
  --rate HZ              sample rate in Hz (default 48000)
  --band LO:HI           audio band in Hz (default 300:3000)
  --method M             fir | allpass | auto (default auto: the cheapest network meeting the target)
  --target DB            suppression target in dB over the band (default 60 when no size is given)
  --taps N               FIR length (odd, 3 to 16383); implies --method fir
  --sections N           all-pass sections, both branches together; implies --method allpass
  --fir-method M         remez (equiripple, default) | kaiser (windowed)
  --form F               all-pass form: first-order | second-order (z^-2, band symmetric about fs/4)
  --coefficients F       float64 (default) | float32 | q31 | q15: the format your firmware runs;
                         the target is then met after rounding, and the document holds the rounded values
  --arithmetic A         double (default) | float | q31 | q15: the firmware kit arithmetic; the
                         size search meets the target with its coefficients, and the table adds
                         its image rejection, noise floor, headroom and limit-cycle figures
  --format F             table (default) | json | c | csv
  --name ID              identifier prefix in the C header (default ot)
  --out FILE             write to FILE instead of standard output
  --plot FILE.svg        also draw the designed network's suppression against frequency
  -h, --help             this help
`;

/**
 * Builds the design spec from parsed CLI values: `--rate` in Hz, `--band LO:HI` in Hz, `--target`
 * in dB of opposite-sideband suppression, `--taps` / `--sections` counts. Values are range-checked
 * later, by `designNetwork`.
 * @throws {UsageError} for a value that is not a number, a band not written as two numbers, or a
 *   `--method` / `--coefficients` word outside its choices.
 */
export function specFromOptions(v: Record<string, unknown>): NetworkSpec {
  const band = numberListOpt('band', v.band ?? '300:3000', ':', 2) as [number, number];
  const taps = numberOpt('taps', v.taps);
  const sections = numberOpt('sections', v.sections);
  if (taps !== undefined && sections !== undefined)
    throw new UsageError('give --taps (a Hilbert FIR) or --sections (an all-pass pair), not both');
  // A size names its network type: --taps alone means a FIR, --sections alone an all-pass pair
  // (typing --method as well would add nothing). A size against an explicit other method is refused.
  const implied = taps !== undefined ? 'fir' : sections !== undefined ? 'allpass' : 'auto';
  const method = choiceOpt('method', v.method, ['fir', 'allpass', 'auto'], implied);
  if (v.method !== undefined && implied !== 'auto' && method !== implied) {
    throw new UsageError(
      `--${taps !== undefined ? 'taps' : 'sections'} sets the size of ${implied === 'fir' ? 'a Hilbert FIR' : 'an all-pass pair'} but --method is ${method}: use --method ${implied}, or drop --${taps !== undefined ? 'taps' : 'sections'}`,
    );
  }
  const rate = numberOpt('rate', v.rate ?? '48000')!;
  if (!Number.isInteger(rate) || rate < 1000 || rate > 1_000_000) {
    throw new UsageError(
      `--rate ${rate} must be a whole number of Hz from 1000 to 1000000 (WAV files and converters run at whole rates)`,
    );
  }
  const spec: NetworkSpec = {
    sampleRate: rate,
    band,
    method: method as NetworkSpec['method'],
  };
  const target = numberOpt('target', v.target);
  if (target !== undefined) spec.targetDb = target;
  if (taps !== undefined) spec.taps = taps;
  if (sections !== undefined) spec.sections = sections;
  if (v['fir-method'] !== undefined)
    spec.firMethod = choiceOpt('fir-method', v['fir-method'], ['remez', 'kaiser'] as const, 'remez');
  if (v.form !== undefined)
    spec.allpassForm = choiceOpt('form', v.form, ['first-order', 'second-order'] as const, 'first-order');
  if (v.coefficients !== undefined) {
    spec.coefficientFormat = choiceOpt(
      'coefficients',
      v.coefficients,
      ['float64', 'float32', 'q31', 'q15'] as const,
      'float64',
    );
  }
  // --arithmetic: the size search meets the target with the coefficients the kit runs.
  const arithmetic = arithmeticOpt(v.arithmetic);
  if (arithmetic !== 'double') {
    const fmt = arithmetic === 'float' ? 'float32' : arithmetic;
    if (spec.coefficientFormat !== undefined && spec.coefficientFormat !== fmt) {
      throw new UsageError(
        `--coefficients ${spec.coefficientFormat} does not match --arithmetic ${arithmetic} (which runs ${fmt} coefficients): drop one`,
      );
    }
    spec.coefficientFormat = fmt;
  }
  return spec;
}

/** Shared option table for commands that accept design options. */
export const DESIGN_OPTIONS = {
  rate: { type: 'string' },
  band: { type: 'string' },
  method: { type: 'string' },
  target: { type: 'string' },
  taps: { type: 'string' },
  sections: { type: 'string' },
  'fir-method': { type: 'string' },
  form: { type: 'string' },
  coefficients: { type: 'string' },
  arithmetic: { type: 'string' },
} as const;

/**
 * Parses `--arithmetic`: double (default, the library's runtime) or a firmware kit arithmetic.
 * @throws {UsageError} for any other word.
 */
export function arithmeticOpt(v: unknown): GeneratorArithmetic {
  return choiceOpt('arithmetic', v, ['double', ...KIT_ARITHMETICS] as const, 'double');
}

/**
 * The arithmetic analysis of a network in a kit arithmetic, as readable lines (dB, dBFS, bits).
 * @throws {OrthotoneError} INVALID_DOCUMENT for an invalid network (from `analyzeKitArithmetic`).
 */
export function describeArithmetic(net: Network, arithmetic: KitArithmetic): string {
  const a = analyzeKitArithmetic(net, arithmetic);
  const w = KIT_WORD_LENGTHS[arithmetic];
  return formatPairs([
    [
      'arithmetic',
      arithmetic === 'float'
        ? 'float (IEEE single) throughout'
        : `${arithmetic}: ${w.sampleBits}-bit samples, ${w.coefficientBits}-bit coefficients, 32-bit states with ${a.headroomBits} headroom bits, 64-bit accumulators`,
    ],
    [
      'image rejection',
      `${a.imageRejectionDb.toFixed(2)} dB worst, at ${a.imageRejectionAtHz.toFixed(1)} Hz (kit coefficients)`,
    ],
    [
      'noise floor',
      `${a.noiseFloorDbfs.toFixed(1)} dBFS per channel (${a.noiseDensityDbfsPerHz.toFixed(1)} dBFS/Hz; network alone ${a.networkNoiseDbfs.toFixed(1)} dBFS), white-noise model`,
    ],
    [
      'headroom',
      `peak gain ${a.peakGain.toFixed(2)} (L1); a full-scale input can reach ${a.outputPeakDbfs.toFixed(1)} dBFS at the output`,
    ],
    [
      'zero input',
      arithmetic === 'float'
        ? 'states settle at the 1e-20 anti-denormal offset, cancelled at the output'
        : a.limitCycleFree
          ? `no limit cycle: every state is exactly 0 within ${a.zeroInputSettleSamples} samples`
          : `limit cycle dead band up to ${a.deadBandLsb} LSB`,
    ],
    [
      'cost',
      `${a.operationsPerSample.multiplies} multiplies, ${a.operationsPerSample.additions} additions per sample; about ${a.cyclesPerSampleEstimate} cycles/sample on a 32-bit MCU with single-cycle MAC`,
    ],
  ]);
}

/**
 * A readable summary of a network: what it is (size, band in Hz), what it allows (worst suppression
 * in dB, phase error in degrees, gain error in dB), what it costs (multiplies per sample, latency in
 * samples and ms), and its figures after rounding to float32/Q31/Q15.
 * @throws {OrthotoneError} INVALID_DOCUMENT for an invalid network (from `analyzeNetwork` and
 *   `quantizationReport`).
 */
export function describeNetwork(net: Network): string {
  const a = analyzeNetwork(net, { points: 2000 });
  const q = quantizationReport(net);
  const size =
    net.kind === 'fir'
      ? `${net.taps.length} taps (${net.taps.filter((t) => t === 0).length} exactly zero)`
      : `${net.branches.i.sections.length} + ${net.branches.q.sections.length} sections ` +
        `(orders ${[...new Set([...net.branches.i.sections, ...net.branches.q.sections].map((s) => s.order))].join('/')}), ` +
        `delays ${net.branches.i.delay}/${net.branches.q.delay}`;
  // Every figure from the coefficients (a.predicted, a.cost), never from the document's stored fields.
  const lat = a.cost.latencySamples;
  const pairs: [string, string][] = [
    ['network', net.kind === 'fir' ? 'Hilbert FIR (type III)' : 'all-pass pair'],
    ['size', size],
    ['sample rate', `${net.sampleRate} Hz`],
    ['band', `${net.band[0]}–${net.band[1]} Hz`],
    [
      'worst suppression',
      `${a.predicted.worstSuppressionDb.toFixed(2)} dB at ${a.predicted.worstSuppressionAtHz.toFixed(1)} Hz (opposite sideband, dBc)`,
    ],
    ['max phase error', `${a.predicted.maxPhaseErrorDeg.toPrecision(4)}°`],
    ['max gain error', `${a.predicted.maxGainErrorDb.toPrecision(4)} dB`],
    [
      'group delay I/Q',
      `difference ${fixed(a.groupDelayDifference.min, 2)} to ${fixed(a.groupDelayDifference.max, 2)} samples over the band`,
    ],
    ['cost', `${a.cost.multipliesPerSample} multiplies/sample`],
    ['latency', `${lat.toFixed(2)} samples (${((lat / net.sampleRate) * 1000).toFixed(3)} ms)`],
    [
      'after rounding',
      `float32 ${q.float32.worstSuppressionDb.toFixed(2)} dB, Q31 ${q.q31.worstSuppressionDb.toFixed(2)} dB, Q15 ${q.q15.worstSuppressionDb.toFixed(2)} dB`,
    ],
  ];
  const format = net.design.coefficientFormat;
  if (typeof format === 'string')
    pairs.push(['coefficients', `rounded to ${format}; the figures above are the rounded network's`]);
  const reason = net.design.reason;
  if (typeof reason === 'string') pairs.push(['why this network', reason]);
  let out = formatPairs(pairs);
  out += '\ncoefficients:\n';
  if (net.kind === 'fir') {
    const d = (net.taps.length - 1) / 2;
    net.taps.forEach((t, k) => {
      if (k >= d && t !== 0) out += `  h[${d} ± ${k - d}] = ±${t.toPrecision(12)}\n`;
    });
    out +=
      '  (antisymmetric: h[centre − m] = −h[centre + m]; Q is the FIR, I a delay of ' + `${d} samples)\n`;
  } else {
    for (const b of ['i', 'q'] as const) {
      const br = net.branches[b];
      out += `  branch ${b.toUpperCase()}: delay ${br.delay}; ${br.sections.map((s) => `${s.order === 2 ? 'z⁻²' : 'z⁻¹'} a=${s.a.toPrecision(12)}`).join(', ')}\n`;
    }
  }
  return out;
}

/**
 * Renders a network in the requested output format (table, json, c or csv).
 * @throws {UsageError} for any other format; OrthotoneError INVALID_ARGUMENT when `name` is not a
 *   C identifier (format c), INVALID_DOCUMENT for an invalid network (format table).
 */
export function renderNetwork(net: Network, format: string, name?: string): string {
  switch (format) {
    case 'json':
      return networkToJson(net);
    case 'c':
      return networkToCHeader(net, name === undefined ? {} : { name });
    case 'csv':
      return networkToCsv(net);
    case 'table':
      return describeNetwork(net);
    default:
      throw new UsageError(`--format ${JSON.stringify(format)} must be table, json, c or csv`);
  }
}

/**
 * The warning appended to `design --format c`'s "wrote" line when a format the header carries
 * (float32, Q31, Q15) misses the target after rounding, pointing at `--coefficients`; empty when
 * all meet it or there is no target (a size was given without one).
 * @throws {OrthotoneError} INVALID_DOCUMENT for an invalid network (from `quantizationReport`).
 */
export function roundingWarning(net: Network, spec: NetworkSpec): string {
  const sizeGiven = spec.taps !== undefined || spec.sections !== undefined;
  const target = spec.targetDb ?? (sizeGiven ? undefined : 60);
  if (target === undefined) return '';
  const q = quantizationReport(net);
  const names = { float32: 'float32', q31: 'Q31', q15: 'Q15' } as const;
  const short = (['float32', 'q31', 'q15'] as const).filter((f) => q[f].worstSuppressionDb < target);
  if (short.length === 0) return '';
  const list = short.map((f) => `${names[f]} ${q[f].worstSuppressionDb.toFixed(2)} dB`).join(', ');
  return `; warning: after rounding, ${list} miss the ${target} dB target: design with --coefficients ${short[short.length - 1]} for the format your firmware runs`;
}

/**
 * Runs `orthotone design`; returns the exit status.
 * @throws {UsageError} for bad options; OrthotoneError from `designNetwork` (INVALID_ARGUMENT,
 *   INVALID_BAND, UNREACHABLE_TARGET, NO_CONVERGENCE) and the renderers; a Node file-system error
 *   when `--out` cannot be written. `main` maps the first two to one line and exit status 2.
 */
export async function run(argv: string[]): Promise<number> {
  const { values: v } = parseCommand(argv, {
    ...DESIGN_OPTIONS,
    format: { type: 'string' },
    name: { type: 'string' },
    out: { type: 'string' },
    plot: { type: 'string' },
    help: { type: 'boolean', short: 'h' },
  });
  if (v.help) {
    process.stdout.write(HELP);
    return 0;
  }
  const plotFile = typeof v.plot === 'string' ? v.plot : undefined;
  assertDistinctFiles(
    [],
    [
      ['--out', typeof v.out === 'string' ? v.out : undefined],
      ['--plot', plotFile],
    ],
  );
  const spec = specFromOptions(v);
  const net = inCliWords(() => designNetwork(spec));
  if (plotFile !== undefined) {
    // The response from the final coefficients, a decade below the band to Nyquist.
    const a = analyzeNetwork(net, { points: 1000, scale: 'log' });
    writeFileAtomic(plotFile, analysisToSvg(a, `Designed network (${net.kind})`));
  }
  const format = (v.format as string | undefined) ?? 'table';
  const arithmetic = arithmeticOpt(v.arithmetic);
  let text = renderNetwork(net, format, v.name as string | undefined);
  if (format === 'table' && arithmetic !== 'double') text += `\n${describeArithmetic(net, arithmetic)}`;
  if (typeof v.out === 'string') {
    writeFileAtomic(v.out, text);
    process.stderr.write(
      `orthotone: wrote ${v.out} (${net.kind}, worst suppression ${net.predicted.worstSuppressionDb.toFixed(2)} dB)${
        format === 'c' ? roundingWarning(net, spec) : ''
      }\n`,
    );
  } else {
    process.stdout.write(text);
  }
  return 0;
}
