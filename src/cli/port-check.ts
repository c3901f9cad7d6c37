/**
 * `orthotone port-check VECTORS.csv CAPTURE`: compares a firmware's captured output with the test
 * vectors `orthotone render --vectors` wrote, sample by sample. Reports whether the port is
 * bit-exact, the first mismatch and the largest error. What a firmware author runs after porting.
 */
import { readFileSync } from 'node:fs';
import { choiceOpt, numberOpt, parseCommand, UsageError } from './args.js';

const HELP = `usage: orthotone port-check VECTORS.csv CAPTURE [options]

Compares a firmware's output with test vectors from 'orthotone render --vectors' (n,input,i,q).
CAPTURE holds one sample per line: "i q" (as host-check writes), "i,q", or "n,i,q"; a header line
is skipped. Values in full-scale units (+-1), or integer codes with --codes BITS.
Exit status 0 when the capture matches (bit-exact, or within --tolerance), 1 when it does not.

options:
  --codes BITS       the capture holds integer codes of a BITS-bit word (e.g. 16: 32767 = 1.0)
  --tolerance X      accept errors up to X full-scale units (default 0: bit-exact)
  --format F         table (default) or json
  -h, --help         this help
`;

/** A parsed two-channel series. */
interface Series {
  i: Float64Array;
  q: Float64Array;
}

function parseVectors(text: string, file: string): Series {
  const lines = text.split(/\r?\n/).filter((l) => l.trim() !== '');
  const head = lines[0]?.split(',').map((s) => s.trim().toLowerCase()) ?? [];
  const ci = head.indexOf('i');
  const cq = head.indexOf('q');
  if (ci < 0 || cq < 0) {
    throw new UsageError(
      `${file} is not a vectors file: its first line must name columns n,input,i,q (from 'orthotone render --vectors')`,
    );
  }
  const n = lines.length - 1;
  const i = new Float64Array(n);
  const q = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    const cells = lines[k + 1]!.split(',');
    const a = Number(cells[ci]);
    const b = Number(cells[cq]);
    if (!Number.isFinite(a) || !Number.isFinite(b)) {
      throw new UsageError(`${file} line ${k + 2} is not a row of numbers: ${JSON.stringify(lines[k + 1])}`);
    }
    i[k] = a;
    q[k] = b;
  }
  return { i, q };
}

function parseCapture(text: string, file: string, scale: number): Series {
  const lines = text.split(/\r?\n/).filter((l) => l.trim() !== '');
  const i: number[] = [];
  const q: number[] = [];
  lines.forEach((l, k) => {
    const cells = l
      .trim()
      .split(/[\s,;]+/)
      .map(Number);
    if (cells.some((v) => !Number.isFinite(v)) || cells.length < 2 || cells.length > 3) {
      if (k === 0) return; // a header line
      throw new UsageError(
        `${file} line ${k + 1} must be "i q", "i,q" or "n,i,q" numbers: ${JSON.stringify(l.slice(0, 60))}`,
      );
    }
    const off = cells.length === 3 ? 1 : 0;
    i.push(cells[off]! * scale);
    q.push(cells[off + 1]! * scale);
  });
  return { i: Float64Array.from(i), q: Float64Array.from(q) };
}

/** The comparison report. */
export interface PortCheckReport {
  samplesCompared: number;
  vectorSamples: number;
  captureSamples: number;
  bitExact: boolean;
  withinTolerance: boolean;
  tolerance: number;
  mismatches: number;
  firstMismatch: { n: number; expected: [number, number]; got: [number, number] } | null;
  largestError: { n: number; channel: 'i' | 'q'; error: number; errorDbfs: number } | null;
}

/**
 * Compares two series sample by sample (errors in full-scale units; dBFS re a full-scale amplitude).
 * @throws never
 */
export function comparePort(want: Series, got: Series, tolerance: number): PortCheckReport {
  const n = Math.min(want.i.length, got.i.length);
  let mismatches = 0;
  let first: PortCheckReport['firstMismatch'] = null;
  let worst: PortCheckReport['largestError'] = null;
  for (let k = 0; k < n; k++) {
    const ei = Math.abs(got.i[k]! - want.i[k]!);
    const eq = Math.abs(got.q[k]! - want.q[k]!);
    if (ei > 0 || eq > 0) {
      mismatches++;
      first ??= { n: k, expected: [want.i[k]!, want.q[k]!], got: [got.i[k]!, got.q[k]!] };
      const e = Math.max(ei, eq);
      if (worst === null || e > worst.error) {
        worst = { n: k, channel: ei >= eq ? 'i' : 'q', error: e, errorDbfs: 20 * Math.log10(e) };
      }
    }
  }
  const sameLength = want.i.length === got.i.length;
  return {
    samplesCompared: n,
    vectorSamples: want.i.length,
    captureSamples: got.i.length,
    bitExact: mismatches === 0 && sameLength,
    withinTolerance: sameLength && (worst === null || worst.error <= tolerance),
    tolerance,
    mismatches,
    firstMismatch: first,
    largestError: worst,
  };
}

/**
 * Runs `orthotone port-check`.
 * @param argv the command's arguments.
 * @returns 0 when the capture matches, 1 when it does not, 2 for a usage error (through runGuarded).
 * @throws {UsageError} for bad options or files that are not vectors/captures.
 */
export async function run(argv: string[]): Promise<number> {
  const { values: v, positionals } = parseCommand(
    argv,
    {
      codes: { type: 'string' },
      tolerance: { type: 'string' },
      format: { type: 'string' },
      help: { type: 'boolean', short: 'h' },
    },
    true,
  );
  if (v.help) {
    process.stdout.write(HELP);
    return 0;
  }
  if (positionals.length !== 2) {
    throw new UsageError('give two files: orthotone port-check VECTORS.csv CAPTURE (see --help)');
  }
  const bits = numberOpt('codes', v.codes);
  if (bits !== undefined && (!Number.isInteger(bits) || bits < 2 || bits > 32)) {
    throw new UsageError(`--codes ${bits} must be a word length in bits from 2 to 32 (e.g. 16)`);
  }
  const format = choiceOpt('format', v.format, ['table', 'json'], 'table');
  const tolerance = numberOpt('tolerance', v.tolerance) ?? 0;
  if (tolerance < 0) throw new UsageError(`--tolerance ${tolerance} must be 0 or more full-scale units`);
  const [vecFile, capFile] = positionals as [string, string];
  const want = parseVectors(readFileSync(vecFile, 'utf8'), vecFile);
  const got = parseCapture(readFileSync(capFile, 'utf8'), capFile, bits === undefined ? 1 : 2 ** -(bits - 1));
  const r = comparePort(want, got, tolerance);
  if (format === 'json') {
    process.stdout.write(`${JSON.stringify(r, null, 2)}\n`);
  } else {
    const out: string[] = [];
    out.push(
      r.bitExact
        ? `bit-exact: all ${r.samplesCompared} samples match`
        : `NOT bit-exact: ${r.mismatches} of ${r.samplesCompared} samples differ` +
            (r.vectorSamples !== r.captureSamples
              ? ` (lengths differ: ${r.vectorSamples} vectors, ${r.captureSamples} captured)`
              : ''),
    );
    if (r.firstMismatch) {
      const f = r.firstMismatch;
      out.push(
        `first mismatch at n = ${f.n}: expected i ${f.expected[0]} q ${f.expected[1]}, got i ${f.got[0]} q ${f.got[1]}`,
      );
    }
    if (r.largestError) {
      const w = r.largestError;
      const lsb =
        bits === undefined ? '' : ` = ${(w.error * 2 ** (bits - 1)).toFixed(0)} LSB of ${bits} bits`;
      out.push(
        `largest error ${w.error.toPrecision(4)} full scale (${w.errorDbfs.toFixed(1)} dBFS${lsb}) in ${w.channel} at n = ${w.n}`,
      );
    }
    if (!r.bitExact && tolerance > 0)
      out.push(r.withinTolerance ? `within tolerance ${tolerance}` : `beyond tolerance ${tolerance}`);
    process.stdout.write(`${out.join('\n')}\n`);
  }
  return r.bitExact || r.withinTolerance ? 0 : 1;
}
