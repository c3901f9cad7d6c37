/**
 * `orthotone analyze FILE`: independent evaluation of a network document: phase and gain error,
 * suppression and group delay versus frequency, worst case, cost and quantisation.
 */
import { analyzeNetwork } from '../design/analysis.js';
import { analyzeKitArithmetic } from '../design/arithmetic-analysis.js';
import { analysisToCsv } from '../export/csv.js';
import { analysisToSvg } from '../export/svg-plot.js';
import { assertDistinctFiles, writeFileAtomic } from '../node/files.js';
import { choiceOpt, inCliWords, numberOpt, parseCommand, UsageError } from './args.js';
import { arithmeticOpt, describeArithmetic, describeNetwork } from './design.js';
import { disagreementWarning, loadNetworkFile } from './network-file.js';
import { fixed, formatTable } from './table.js';

const HELP = `usage: orthotone analyze FILE [options]

Evaluates a network document (from 'orthotone design --format json') from its coefficients alone.
Every figure shown is computed; where the file's stored figures (predicted, cost) disagree with
them, the output says so.

options:
  --points N       frequencies evaluated (default 25 for table, 2000 for json/csv)
  --from HZ        lowest frequency (default band lower edge / 2)
  --to HZ          highest frequency (default min(2 x band upper edge, Nyquist))
  --arithmetic A   double (default) | float | q31 | q15: also report the firmware kit's arithmetic
                   (image rejection, noise floor, headroom, zero-input limit cycles, cost)
  --format F       table (default) | json | csv
  --out FILE       write to FILE instead of standard output
  --plot FILE.svg  also draw the suppression against frequency (1000 points, log axis, band shaded)
  -h, --help       this help
`;

/**
 * Runs `orthotone analyze`; returns the exit status (0).
 * @throws {UsageError} for bad options, a missing or unreadable FILE or an unknown format;
 *   OrthotoneError INVALID_DOCUMENT when FILE is not a network document, INVALID_ARGUMENT for a
 *   frequency range or point count `analyzeNetwork` refuses;
 *   a Node file-system error when an output file cannot be written. The CLI's `main` (through
 *   `runGuarded`) turns UsageError and OrthotoneError into one line on stderr and exit status 2.
 */
export async function run(argv: string[]): Promise<number> {
  const { values: v, positionals } = parseCommand(
    argv,
    {
      points: { type: 'string' },
      from: { type: 'string' },
      to: { type: 'string' },
      format: { type: 'string' },
      arithmetic: { type: 'string' },
      out: { type: 'string' },
      plot: { type: 'string' },
      help: { type: 'boolean', short: 'h' },
    },
    true,
  );
  if (v.help) {
    process.stdout.write(HELP);
    return 0;
  }
  const file = positionals[0];
  if (file === undefined || positionals.length > 1) throw new UsageError('give exactly one network FILE');
  const format = choiceOpt('format', v.format, ['table', 'json', 'csv'], 'table');
  const outFile = typeof v.out === 'string' ? v.out : undefined;
  const plotFile = typeof v.plot === 'string' ? v.plot : undefined;
  assertDistinctFiles(
    [['FILE', file]],
    [
      ['--out', outFile],
      ['--plot', plotFile],
    ],
  );
  const { net, disagreements } = loadNetworkFile(file);
  const nyq = net.sampleRate / 2;
  const fromHz = numberOpt('from', v.from) ?? net.band[0] / 2;
  const toHz = numberOpt('to', v.to) ?? Math.min(2 * net.band[1], nyq * 0.999);
  const points = numberOpt('points', v.points) ?? (format === 'table' ? 25 : 2000);
  const a = inCliWords(() => analyzeNetwork(net, { points, fromHz, toHz }), {
    fromHz: '--from',
    toHz: '--to',
    points: '--points',
  });
  if (plotFile !== undefined) {
    // The picture gets its own dense log-spaced evaluation over the same range.
    const dense = analyzeNetwork(net, {
      points: 1000,
      fromHz: Math.max(fromHz, nyq * 1e-6),
      toHz,
      scale: 'log',
    });
    writeFileAtomic(plotFile, analysisToSvg(dense, `Network response (${net.kind})`));
  }
  const arithmetic = arithmeticOpt(v.arithmetic);
  let out: string;
  if (format === 'json') {
    out = `${JSON.stringify(
      {
        storedFiguresAgree: disagreements.length === 0,
        disagreements,
        band: a.band,
        worst: a.worst,
        maxPhaseErrorDeg: a.maxPhaseErrorDeg,
        maxGainErrorDb: a.maxGainErrorDb,
        groupDelayDifference: a.groupDelayDifference,
        cost: a.cost,
        ...(arithmetic === 'double' ? {} : { arithmetic: analyzeKitArithmetic(net, arithmetic) }),
        points: Array.from(a.frequencyHz, (f, k) => ({
          frequencyHz: f,
          phaseErrorDeg: a.phaseErrorDeg[k],
          gainErrorDb: a.gainErrorDb[k],
          suppressionDb: a.suppressionDb[k],
          groupDelayI: a.groupDelayI[k],
          groupDelayQ: a.groupDelayQ[k],
        })),
      },
      null,
      2,
    )}\n`;
  } else if (format === 'csv') {
    out = analysisToCsv(a);
  } else {
    const rows = [['frequency Hz', 'phase err °', 'gain err dB', 'suppression dB', 'delay I', 'delay Q', '']];
    for (let k = 0; k < a.frequencyHz.length; k++) {
      const f = a.frequencyHz[k]!;
      const inBand = f >= net.band[0] && f <= net.band[1];
      rows.push([
        f.toFixed(1),
        fixed(a.phaseErrorDeg[k]!, 4),
        fixed(a.gainErrorDb[k]!, 4),
        fixed(Math.min(a.suppressionDb[k]!, 200), 2),
        fixed(a.groupDelayI[k]!, 2),
        fixed(a.groupDelayQ[k]!, 2),
        inBand ? '' : '*',
      ]);
    }
    const note =
      disagreements.length === 0
        ? ''
        : `\nWARNING: the file's stored figures disagree with its coefficients (the figures above are computed):\n${disagreements.map((d) => `  ${d}\n`).join('')}`;
    out = `${describeNetwork(net)}${note}\n${formatTable(rows)}(* outside the design band)\n`;
    if (arithmetic !== 'double') out += `\n${describeArithmetic(net, arithmetic)}`;
  }
  if (format !== 'table' && disagreements.length > 0)
    process.stderr.write(`${disagreementWarning(file, disagreements)}\n`);
  if (outFile !== undefined) writeFileAtomic(outFile, out);
  else process.stdout.write(out);
  return 0;
}
