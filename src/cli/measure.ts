/**
 * `orthotone measure`: read tone levels, opposite-sideband and carrier suppression, or two-tone
 * products from a WAV capture (receiver audio, or I/Q with I left and Q right).
 * WAV files are read with the shared reader in src/node/wav.ts.
 */
import { writeFileSync } from 'node:fs';
import { cautionsText } from '../core/cautions.js';
import { isOrthotoneError } from '../core/errors.js';
import type { WindowName } from '../core/windows.js';
import { measureSideband } from '../measure/sideband.js';
import type { ToneReading } from '../measure/tones.js';
import { measureTones } from '../measure/tones.js';
import { measureTwoTone } from '../measure/two-tone.js';
import { readWavFile, type WavData, writeWavFile } from '../node/wav.js';
import { choiceOpt, numberListOpt, numberOpt, parseCommand, UsageError } from './args.js';
import { fixed, formatPairs, formatTable } from './table.js';

const HELP = `usage: orthotone measure FILE.wav (--tone HZ (--iq | --offset HZ) | --two-tone HZ,HZ | --tones HZ,...) [options]

Reads a capture of your exciter's output and prints the levels in it.

  --tone HZ              single-tone test: wanted sideband, unwanted sideband and carrier
  --iq                   the file is an I/Q capture (I left, Q right) around the carrier
  --offset HZ            the file is receiver audio with the carrier at HZ in the audio
  --receiver-sideband S  upper (default: receiver tuned below the carrier) | lower
  --sideband S           the sideband you transmit: upper (default) | lower
  --two-tone HZ,HZ       two-tone test: tones, PEP, 3rd- and 5th-order products
                         (with --iq or --offset the tones are audio frequencies, placed as above)
  --tones HZ,...         plain tone levels at these frequencies in the capture
  --channel N            audio channel to read (default 0, the left)
  --window W             blackman-harris (default) | hann | flattop
  --resolution HZ        frame resolution (bin width) in Hz; default: from the capture length
  --format F             table (default) | json
  --out FILE             write to FILE instead of standard output
  -h, --help             this help
`;

const OPTIONS = {
  tone: { type: 'string' },
  iq: { type: 'boolean' },
  offset: { type: 'string' },
  'receiver-sideband': { type: 'string' },
  sideband: { type: 'string' },
  'two-tone': { type: 'string' },
  tones: { type: 'string' },
  channel: { type: 'string' },
  window: { type: 'string' },
  resolution: { type: 'string' },
  format: { type: 'string' },
  out: { type: 'string' },
  help: { type: 'boolean', short: 'h' },
} as const;

/**
 * Reads a WAV file into full-scale channels through the shared reader (src/node/wav.ts).
 * @throws {UsageError} when the file cannot be opened; OrthotoneError when it is not a WAV file.
 */
export async function readWav(path: string): Promise<WavData> {
  try {
    return await readWavFile(path);
  } catch (e) {
    if (isOrthotoneError(e)) throw e;
    throw new UsageError(`cannot read WAV file ${path}: ${(e as Error).message}`);
  }
}

/**
 * Writes channels (full-scale units) as a 32-bit float WAV file through the shared writer;
 * `sampleRate` in Hz.
 * @throws {OrthotoneError} INVALID_ARGUMENT as `encodeWav` (no channels, channels of different
 *   lengths, a bad sample rate); a Node file-system error when the file cannot be written.
 */
export async function writeWav(path: string, sampleRate: number, channels: Float32Array[]): Promise<void> {
  await writeWavFile(path, channels, sampleRate, 'float32');
}

const round = (x: number, d: number): number => (Number.isFinite(x) ? Number(x.toFixed(d)) : x);

function toneRow(name: string, r: ToneReading, refDbfs?: number): string[] {
  return [
    name,
    fixed(r.frequencyHz, 2),
    fixed(r.levelDbfs, 2),
    refDbfs === undefined ? '' : fixed(r.levelDbfs - refDbfs, 2),
    fixed(r.aboveFloorDb, 1) + (r.atFloor ? ' (at floor)' : ''),
  ];
}

const HEAD = ['component', 'Hz', 'dBFS', 'dBc', 'above floor dB'];

/**
 * `orthotone measure` entry point; returns the exit status (0).
 * @throws {UsageError} for bad options or a WAV file that cannot be opened or has the wrong channel
 *   count; OrthotoneError from the reader and the measurements (INVALID_ARGUMENT for a file that is
 *   not WAV or a tone the measurement refuses, CAPTURE_TOO_SHORT, TONES_UNRESOLVED);
 *   a Node file-system error when an output file cannot be written. The CLI's `main` (through
 *   `runGuarded`) turns UsageError and OrthotoneError into one line on stderr and exit status 2.
 */
export async function run(argv: string[]): Promise<number> {
  const { values: v, positionals } = parseCommand(argv, OPTIONS, true);
  if (v.help) {
    process.stdout.write(HELP);
    return 0;
  }
  if (positionals.length !== 1)
    throw new UsageError('measure needs one WAV file: orthotone measure FILE.wav --tone HZ --iq');
  const format = choiceOpt('format', v.format, ['table', 'json'], 'table');
  const modes = ['tone', 'two-tone', 'tones'].filter((k) => v[k] !== undefined);
  if (modes.length !== 1)
    throw new UsageError('give exactly one of --tone HZ, --two-tone HZ,HZ or --tones HZ,...');
  if (v.iq && v.offset !== undefined)
    throw new UsageError('--iq and --offset exclude each other: an I/Q file has no audio offset');
  const wav = await readWav(positionals[0]!);
  const fs = wav.sampleRate;
  const opts = {
    window: v.window as WindowName | undefined,
    resolutionHz: numberOpt('resolution', v.resolution),
  };
  const sideband = (v.sideband ?? 'upper') as 'upper' | 'lower';
  const rxSideband = (v['receiver-sideband'] ?? 'upper') as 'upper' | 'lower';
  let i: Float32Array;
  let q: Float32Array | null = null;
  if (v.iq) {
    if (wav.channels.length < 2)
      throw new UsageError(`--iq needs a stereo file (I left, Q right); ${positionals[0]} has 1 channel`);
    i = wav.channels[0]!;
    q = wav.channels[1]!;
  } else {
    const ch = numberOpt('channel', v.channel ?? '0')!;
    if (!Number.isInteger(ch) || ch < 0 || ch >= wav.channels.length) {
      throw new UsageError(
        `--channel ${ch} does not exist: the file has ${wav.channels.length} channel(s), numbered from 0`,
      );
    }
    i = wav.channels[ch]!;
  }
  const offset = numberOpt('offset', v.offset);
  let text = '';
  let json: unknown;
  if (v.tone !== undefined) {
    const toneHz = numberOpt('tone', v.tone)!;
    if (!v.iq && offset === undefined) {
      throw new UsageError('--tone needs --iq (I/Q capture) or --offset HZ (receiver audio, carrier at HZ)');
    }
    const r = measureSideband(i, q, fs, {
      toneHz,
      sideband,
      offsetHz: offset,
      receiverSideband: rxSideband,
      ...opts,
    });
    json = {
      file: positionals[0],
      sampleRate: fs,
      capture: v.iq ? 'iq' : 'audio',
      ...r,
    };
    const ref = r.wanted.levelDbfs;
    text =
      formatTable([
        HEAD,
        toneRow('wanted', r.wanted, ref),
        toneRow('unwanted', r.unwanted, ref),
        toneRow('carrier', r.carrier, ref),
      ]) +
      '\n' +
      formatPairs([
        ['opposite-sideband suppression', `${fixed(r.sidebandSuppressionDb, 2)} dB`],
        ['carrier suppression', `${fixed(r.carrierSuppressionDb, 2)} dB`],
        ['floor near the wanted tone', `${fixed(r.floorDbc, 1)} dBc per bin`],
        [
          'largest suppression readable',
          `${fixed(r.sidebandMeasurableDb, 1)} dB (sideband), ${fixed(r.carrierMeasurableDb, 1)} dB (carrier)`,
        ],
        ['frequency error', `${fixed(r.frequencyErrorHz, 3)} Hz`],
      ]);
  } else if (v['two-tone'] !== undefined) {
    const [a, b] = numberListOpt('two-tone', v['two-tone'], ',', 2) as [number, number];
    const place = (f: number): number => {
      if (v.iq) return sideband === 'upper' ? f : -f;
      if (offset !== undefined) {
        const d = sideband === 'upper' ? f : -f;
        return rxSideband === 'upper' ? offset + d : offset - d;
      }
      return f;
    };
    const capture = q ? { i, q } : i;
    const r = measureTwoTone(capture, fs, [place(a), place(b)], opts);
    json = { file: positionals[0], sampleRate: fs, capture: v.iq ? 'iq' : 'audio', ...r };
    const ref = r.toneDbfs;
    text =
      formatTable([
        [...HEAD, 'dB re PEP'],
        [...toneRow('tone 1', r.tones[0], ref), fixed(r.tones[0].levelDbfs - r.pepDbfs, 2)],
        [...toneRow('tone 2', r.tones[1], ref), fixed(r.tones[1].levelDbfs - r.pepDbfs, 2)],
        ...r.products.map((p) => [...toneRow(`IM${p.order} ${p.side}`, p.reading, ref), fixed(p.dbPep, 2)]),
      ]) +
      '\n' +
      formatPairs([
        ['PEP', `${fixed(r.pepDbfs, 2)} dBFS`],
        ['3rd order, worst', `${fixed(r.imd3Dbc, 2)} dBc (one tone), ${fixed(r.imd3DbPep, 2)} dB re PEP`],
        ['5th order, worst', `${fixed(r.imd5Dbc, 2)} dBc (one tone), ${fixed(r.imd5DbPep, 2)} dB re PEP`],
        ['tone imbalance', `${fixed(r.toneImbalanceDb, 2)} dB`],
      ]);
  } else {
    const freqs = numberListOpt('tones', v.tones, ',')!;
    const capture = q ? { i, q } : i;
    const r = measureTones(capture, fs, freqs, opts);
    json = { file: positionals[0], sampleRate: fs, capture: q ? 'iq' : 'audio', tones: r };
    text = formatTable([HEAD, ...r.map((t) => toneRow(`${t.nominalHz} Hz`, t))]);
  }
  const out =
    format === 'json'
      ? `${JSON.stringify(json, (_k, x) => (typeof x === 'number' ? round(x, 6) : x), 2)}\n`
      : `${text}\n${cautionsText()}\n`;
  if (v.out !== undefined) writeFileSync(v.out as string, out);
  else process.stdout.write(out);
  return 0;
}
