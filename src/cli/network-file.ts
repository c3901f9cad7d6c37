/**
 * Reading a network document from a file for the CLI: a bounded read (a device such as /dev/zero
 * or a huge file is refused, not read without end), validation, and the figures every command
 * shows, computed from the coefficients. The figures stored in the file (`predicted`, `cost`) are
 * only compared with them: where they disagree (a hand-edited coefficient, a file from elsewhere)
 * the command says so, and never shows the stored figure as the network's.
 */
import { closeSync, openSync, readSync } from 'node:fs';
import { bandFigures, networkCost } from '../design/analysis.js';
import type { Network, NetworkCost, PredictedFigures } from '../design/network.js';
import { parseNetworkJson } from '../export/network-json.js';
import { UsageError } from './args.js';

/** Largest network file read, bytes (a 16383-tap FIR document is under 1 MB). */
export const MAX_NETWORK_FILE_BYTES = 16 * 1024 * 1024;

/**
 * Reads at most `maxBytes` of a text file; more is refused (so `/dev/zero` or a WAV given by
 * mistake ends with a message, not an out-of-memory crash).
 * @throws {UsageError} naming the file when it cannot be read or is longer than `maxBytes`.
 */
export function readBoundedText(path: string, maxBytes: number, what: string): string {
  let fd: number;
  try {
    fd = openSync(path, 'r');
  } catch (e) {
    throw new UsageError(`cannot read ${path}: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`);
  }
  try {
    const buf = Buffer.allocUnsafe(Math.min(maxBytes + 1, 1 << 20));
    const parts: Buffer[] = [];
    let total = 0;
    for (;;) {
      let n: number;
      try {
        n = readSync(fd, buf, 0, buf.length, null);
      } catch (e) {
        throw new UsageError(
          `cannot read ${path}: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`,
        );
      }
      if (n === 0) break;
      total += n;
      if (total > maxBytes) {
        throw new UsageError(
          `${path} is larger than ${maxBytes / (1024 * 1024)} MiB: it is not ${what} (give the file written by 'orthotone design --format json')`,
        );
      }
      parts.push(Buffer.from(buf.subarray(0, n)));
    }
    return Buffer.concat(parts).toString('utf8');
  } finally {
    closeSync(fd);
  }
}

/** A network read from a file, with figures computed from its coefficients. */
export interface CheckedNetwork {
  /** The document, its `predicted` and `cost` replaced by the computed figures. */
  net: Network;
  /** What the file itself stored, for comparison (possibly incomplete). */
  stored: { predicted: unknown; cost: unknown };
  /** One sentence per stored figure that is missing or disagrees with the computed one. */
  disagreements: string[];
}

const num = (x: unknown): number | undefined => (typeof x === 'number' ? x : undefined);

/**
 * Computes a network's figures from its coefficients and compares the stored ones with them.
 * @param net a validated network document (its `predicted` and `cost` may be missing or wrong).
 * @returns the network carrying the computed figures, and the disagreements found.
 * @throws {OrthotoneError} INVALID_BAND for a band outside (0, fs/2).
 */
export function withComputedFigures(net: Network): CheckedNetwork {
  const f = bandFigures(net);
  const predicted: PredictedFigures = {
    worstSuppressionDb: f.worstSuppressionDb,
    maxPhaseErrorDeg: f.maxPhaseErrorDeg,
    maxGainErrorDb: f.maxGainErrorDb,
  };
  const cost: NetworkCost = networkCost(net);
  const raw = net as unknown as { predicted?: unknown; cost?: unknown };
  const sp = (typeof raw.predicted === 'object' && raw.predicted !== null ? raw.predicted : {}) as Record<
    string,
    unknown
  >;
  const sc = (typeof raw.cost === 'object' && raw.cost !== null ? raw.cost : {}) as Record<string, unknown>;
  const checks: [string, unknown, number, number, string, number][] = [
    ['worst suppression', sp.worstSuppressionDb, predicted.worstSuppressionDb, 0.01, 'dB', 2],
    ['max phase error', sp.maxPhaseErrorDeg, predicted.maxPhaseErrorDeg, 1e-4, '°', 6],
    ['max gain error', sp.maxGainErrorDb, predicted.maxGainErrorDb, 1e-5, 'dB', 6],
    ['multiplies per sample', sc.multipliesPerSample, cost.multipliesPerSample, 0, '', 0],
    ['latency', sc.latencySamples, cost.latencySamples, 0.01, 'samples', 2],
  ];
  const field = ['predicted.worstSuppressionDb', 'predicted.maxPhaseErrorDeg', 'predicted.maxGainErrorDb'];
  const disagreements: string[] = [];
  checks.forEach(([name, s, c, tol, unit, digits], k) => {
    const key = k < 3 ? field[k]! : k === 3 ? 'cost.multipliesPerSample' : 'cost.latencySamples';
    const u = unit === '' ? '' : unit === '°' ? '°' : ` ${unit}`;
    const stored = num(s);
    if (stored === undefined || !Number.isFinite(stored)) {
      disagreements.push(`the file has no valid ${key}; computed ${name} ${c.toFixed(digits)}${u}`);
    } else if (!(Math.abs(stored - c) <= tol + 1e-9 * Math.abs(c))) {
      disagreements.push(
        `${name}: stored says ${stored.toFixed(digits)}${u}, computed from the coefficients ${c.toFixed(digits)}${u}`,
      );
    }
  });
  return {
    net: { ...net, predicted, cost } as Network,
    stored: { predicted: raw.predicted, cost: raw.cost },
    disagreements,
  };
}

/**
 * Reads, validates and evaluates a network file.
 * @throws {UsageError} when the file cannot be read or is too large; OrthotoneError
 *   INVALID_DOCUMENT when it is not a valid network document.
 */
export function loadNetworkFile(path: string): CheckedNetwork {
  const net = parseNetworkJson(readBoundedText(path, MAX_NETWORK_FILE_BYTES, 'a network document'));
  return withComputedFigures(net);
}

/**
 * One warning line for a file whose stored figures disagree with its coefficients.
 * @throws never
 */
export function disagreementWarning(path: string, d: readonly string[]): string {
  return `WARNING: ${path}: stored figures disagree with its coefficients (shown figures are computed): ${d.join('; ')}`;
}
