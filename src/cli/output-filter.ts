/**
 * `orthotone output-filter`: designs the exciter's RF output low-pass filter (doubly terminated LC
 * ladder, Butterworth or Chebyshev), prints its elements in ladder order and its response at the
 * carrier's harmonics, and writes the document that `orthotone emissions --filter` reads.
 */
import { cautionsText } from '../core/cautions.js';
import { designOutputFilter, type OutputFilter } from '../emissions/output-filter.js';
import { assertDistinctFiles, writeFileAtomic } from '../node/files.js';
import { choiceOpt, numberOpt, parseCommand, UsageError } from './args.js';
import { fixed, formatTable } from './table.js';

const HELP = `usage: orthotone output-filter --cutoff HZ (--order N | --carrier-hz HZ [--attenuation-db A]) [options]

Designs the low-pass filter the commutating mixer's output needs: its responses at the 3rd LO
harmonic (opposite sideband, -9.54 dBc) and 5th (same sideband, -13.98 dBc) must be filtered off.

options:
  --cutoff HZ            cutoff: 3 dB frequency (butterworth) or ripple-band edge (chebyshev), Hz
  --order N              number of elements (1-15; odd for chebyshev)
  --carrier-hz HZ        carrier (LO) frequency: the response is listed at its harmonics, and without
                         --order the order is chosen for --attenuation-db at its 3rd harmonic
  --attenuation-db A     attenuation wanted at 3 x carrier, dB (default 43.46: the 3rd response at
                         -9.54 dBc brought 43 dB down, plus 10 dB margin for part tolerances;
                         common practice, no source)
  --response R           butterworth | chebyshev (default chebyshev)
  --ripple-db R          chebyshev pass-band ripple, dB (default 0.1)
  --impedance OHMS       source and load resistance (default 50)
  --series S             round capacitors to E12 | E24 (response recomputed from the rounded values)
  --format F             table (default) | json
  --out FILE.json        write the filter document (for 'orthotone emissions --filter')
  -h, --help             this help
`;

/** 43 dB below the carrier for the 3rd response at 20·log10(1/3) = −9.54 dBc, plus 10 dB margin. */
const DEFAULT_ATTENUATION_DB = 43 + 20 * Math.log10(1 / 3) + 10;

const OPTIONS = {
  cutoff: { type: 'string' },
  order: { type: 'string' },
  'carrier-hz': { type: 'string' },
  'attenuation-db': { type: 'string' },
  response: { type: 'string' },
  'ripple-db': { type: 'string' },
  impedance: { type: 'string' },
  series: { type: 'string' },
  format: { type: 'string' },
  out: { type: 'string' },
  help: { type: 'boolean', short: 'h' },
} as const;

/**
 * Engineering notation with SI prefix: 2.2e-10 F → "220 pF".
 * @throws never
 */
export function si(x: number, unit: string): string {
  const prefixes: [number, string][] = [
    [1e-15, 'f'],
    [1e-12, 'p'],
    [1e-9, 'n'],
    [1e-6, 'µ'],
    [1e-3, 'm'],
    [1, ''],
    [1e3, 'k'],
    [1e6, 'M'],
    [1e9, 'G'],
  ];
  let best = prefixes[0]!;
  for (const p of prefixes) if (Math.abs(x) >= p[0] * 0.999999) best = p;
  return `${Number((x / best[0]).toPrecision(4))} ${best[1]}${unit}`;
}

/**
 * The filter as a plain-text table (elements, then the response points).
 * @throws never
 */
export function filterTable(f: OutputFilter): string {
  const rows: string[][] = [['#', 'element', 'value', 'exact', 'g']];
  f.elements.forEach((e, k) => {
    rows.push([
      String(k + 1),
      e.kind === 'C' ? 'shunt C' : 'series L',
      si(e.value, e.kind === 'C' ? 'F' : 'H'),
      si(e.exactValue, e.kind === 'C' ? 'F' : 'H'),
      e.g.toFixed(4),
    ]);
  });
  const pts: string[][] = [['at', 'frequency', 'loss dB (as built)', 'loss dB (exact)']];
  for (const p of f.points) {
    pts.push([
      p.harmonic !== undefined ? `LO x${p.harmonic}` : `${fixed(p.frequencyHz / f.cutoffHz, 0)} x cutoff`,
      si(p.frequencyHz, 'Hz'),
      fixed(p.attenuationDb, 2),
      fixed(p.exactAttenuationDb, 2),
    ]);
  }
  return `${f.response} low-pass, order ${f.order}${f.response === 'chebyshev' ? `, ${f.rippleDb} dB ripple` : ''}, cutoff ${si(f.cutoffHz, 'Hz')}, ${f.impedanceOhms} ohm${f.series ? `, capacitors rounded to ${f.series}` : ''}\n${formatTable(rows)}\n${formatTable(pts)}`;
}

/**
 * `orthotone output-filter` entry point; returns the exit status.
 * @throws {UsageError} for bad or missing options; OrthotoneError INVALID_ARGUMENT /
 *   UNREACHABLE_TARGET from the designer, OUTPUT_IS_INPUT, WRITE_FAILED (runGuarded maps them to exit 2).
 */
export async function run(argv: string[]): Promise<number> {
  const { values: v } = parseCommand(argv, OPTIONS);
  if (v.help) {
    process.stdout.write(HELP);
    return 0;
  }
  const cutoffHz = numberOpt('cutoff', v.cutoff);
  if (cutoffHz === undefined) throw new UsageError('output-filter needs --cutoff HZ, e.g. --cutoff 16e6');
  const order = numberOpt('order', v.order);
  const carrierHz = numberOpt('carrier-hz', v['carrier-hz']);
  if (order === undefined && carrierHz === undefined) {
    throw new UsageError(
      'output-filter needs --order N, or --carrier-hz HZ to choose the order from the 3rd harmonic',
    );
  }
  const response = choiceOpt('response', v.response, ['butterworth', 'chebyshev'] as const, 'chebyshev');
  const format = choiceOpt('format', v.format, ['table', 'json'] as const, 'table');
  const series =
    v.series === undefined ? null : choiceOpt('series', v.series, ['E12', 'E24'] as const, 'E12');
  const out = v.out as string | undefined;
  assertDistinctFiles([], [['--out', out]]);
  const f = designOutputFilter({
    cutoffHz,
    response,
    ...(order !== undefined ? { order } : {}),
    ...(carrierHz !== undefined ? { carrierHz } : {}),
    attenuationDb: numberOpt('attenuation-db', v['attenuation-db'] ?? String(DEFAULT_ATTENUATION_DB))!,
    rippleDb: numberOpt('ripple-db', v['ripple-db'] ?? '0.1')!,
    impedanceOhms: numberOpt('impedance', v.impedance ?? '50')!,
    series,
  });
  const json = `${JSON.stringify(f, null, 2)}\n`;
  if (out) writeFileAtomic(out, json);
  process.stderr.write(`${cautionsText()}\n`);
  if (format === 'json') process.stdout.write(json);
  else {
    process.stdout.write(filterTable(f));
    if (out) process.stdout.write(`wrote ${out}\n`);
  }
  return 0;
}
