/**
 * `orthotone measure`: read tone levels, opposite-sideband and carrier suppression, or two-tone
 * products from a WAV capture (receiver audio, or I/Q with I left and Q right).
 * WAV files are read with the shared reader in src/node/wav.ts.
 */
import { cautionsText } from '../core/cautions.js';
import { isOrthotoneError } from '../core/errors.js';
import type { WindowName } from '../core/windows.js';
import { measureSideband } from '../measure/sideband.js';
import type { ToneReading } from '../measure/tones.js';
import { measureTones } from '../measure/tones.js';
import { measureTwoTone } from '../measure/two-tone.js';
import { assertDistinctFiles, writeFileAtomic } from '../node/files.js';
import { openWavReader, type WavReader } from '../node/wav.js';
import { choiceOpt, inCliWords, numberListOpt, numberOpt, parseCommand, UsageError } from './args.js';
import { fixed, formatPairs, formatTable } from './table.js';

/**
 * Most frames read from a capture: 2^22 (87 s at 48 kHz, 22 s at 192 kHz). The measurement averages
 * frames over what it reads; beyond this, more averaging changes the readings by far less than their
 * own spread, while memory would grow with the file. Longer captures are read in part (the output
 * says which part; --start and --length choose it).
 */
export const MAX_FRAMES = 1 << 22;

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
  --start S              where to start reading, seconds into the file (default 0)
  --length S             how much to read, seconds (default: the rest, at most ${MAX_FRAMES} frames,
                         about 87 s at 48 kHz: longer captures are read in part, and the output says so)
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
  start: { type: 'string' },
  length: { type: 'string' },
  format: { type: 'string' },
  out: { type: 'string' },
  help: { type: 'boolean', short: 'h' },
} as const;

/**
 * Reads frames `[start, start + length)` of channels `want` from an open WAV file, in blocks,
 * refusing non-finite samples.
 * @throws {UsageError} naming the sample index (frame and channel) of a NaN or infinite sample.
 */
function readSpan(
  r: WavReader,
  file: string,
  start: number,
  length: number,
  want: readonly number[],
): Float32Array[] {
  const out: (Float32Array | undefined)[] = [];
  for (const c of want) out[c] = new Float32Array(length);
  r.seek(start);
  const got = r.read(out, length);
  for (const c of want) {
    const x = out[c]!;
    for (let k = 0; k < got; k++) {
      if (!Number.isFinite(x[k]!)) {
        throw new UsageError(
          `${file} holds a non-finite sample (${x[k]}) at frame ${start + k}, channel ${c}: the capture is damaged; record it again`,
        );
      }
    }
  }
  return want.map((c) => out[c]!.subarray(0, got));
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

/**
 * A suppression figure shown against what the capture can read: beyond that limit the component is
 * under the floor, and the figure is the floor's, not the device's.
 */
function beyond(db: number, readableDb: number, what: string): string {
  return db > readableDb
    ? `more than ${fixed(readableDb, 1)} dB (the ${what} is below the floor this capture can read)`
    : `${fixed(db, 2)} dB`;
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
  const file = positionals[0]!;
  const outFile = v.out as string | undefined;
  assertDistinctFiles([['FILE', file]], [['--out', outFile]]);
  const windowName = choiceOpt<WindowName>(
    'window',
    v.window,
    ['blackman-harris', 'hann', 'flattop'],
    'blackman-harris',
  );
  const opts = {
    window: windowName,
    resolutionHz: numberOpt('resolution', v.resolution),
  };
  const sideband = choiceOpt('sideband', v.sideband, ['upper', 'lower'] as const, 'upper');
  const rxSideband = choiceOpt(
    'receiver-sideband',
    v['receiver-sideband'],
    ['upper', 'lower'] as const,
    'upper',
  );
  let wav: WavReader;
  try {
    wav = openWavReader(file);
  } catch (e) {
    if (isOrthotoneError(e)) throw e;
    throw new UsageError(
      `cannot read WAV file ${file}: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`,
    );
  }
  const fs = wav.info.sampleRate;
  const nc = wav.info.channels;
  const total = wav.info.frames;
  const startS = numberOpt('start', v.start) ?? 0;
  const startFrame = Math.round(startS * fs);
  if (!(startS >= 0) || startFrame >= total) {
    wav.close();
    throw new UsageError(
      `--start ${startS} s must lie inside the capture: from 0 to ${(total / fs).toFixed(3)} s`,
    );
  }
  const lengthS = numberOpt('length', v.length);
  if (lengthS !== undefined && !(lengthS > 0)) {
    wav.close();
    throw new UsageError(`--length ${lengthS} s must be more than 0 s`);
  }
  const wantFrames = Math.min(total - startFrame, lengthS === undefined ? total : Math.round(lengthS * fs));
  if (lengthS !== undefined && Math.round(lengthS * fs) > MAX_FRAMES) {
    wav.close();
    throw new UsageError(
      `--length ${lengthS} s is ${Math.round(lengthS * fs)} frames, more than the ${MAX_FRAMES} read at once: give at most ${(MAX_FRAMES / fs).toFixed(1)} s`,
    );
  }
  const frames = Math.min(wantFrames, MAX_FRAMES);
  let i: Float32Array;
  let q: Float32Array | null = null;
  try {
    if (v.iq) {
      if (nc !== 2)
        throw new UsageError(
          `--iq needs an I/Q file of exactly two channels (I left, Q right); ${file} has ${nc} channel${nc === 1 ? '' : 's'}`,
        );
      [i, q] = readSpan(wav, file, startFrame, frames, [0, 1]) as [Float32Array, Float32Array];
    } else {
      const ch = numberOpt('channel', v.channel ?? '0')!;
      if (!Number.isInteger(ch) || ch < 0 || ch >= nc) {
        throw new UsageError(
          `--channel ${ch} does not exist: the file has ${nc} channel${nc === 1 ? '' : 's'}, numbered from 0`,
        );
      }
      [i] = readSpan(wav, file, startFrame, frames, [ch]) as [Float32Array];
    }
  } finally {
    wav.close();
  }
  const partial =
    frames < total
      ? `read ${(frames / fs).toFixed(3)} s from ${(startFrame / fs).toFixed(3)} s of a ${(total / fs).toFixed(3)} s capture (--start, --length choose the part)`
      : undefined;
  const offset = numberOpt('offset', v.offset);
  let text = '';
  let json: unknown;
  if (v.tone !== undefined) {
    const toneHz = numberOpt('tone', v.tone)!;
    if (!(toneHz > 0 && toneHz < fs / 2))
      throw new UsageError(`--tone ${toneHz} Hz must lie above 0 Hz and below Nyquist ${fs / 2} Hz`);
    if (!v.iq && offset === undefined) {
      throw new UsageError('--tone needs --iq (I/Q capture) or --offset HZ (receiver audio, carrier at HZ)');
    }
    const r = inCliWords(() =>
      measureSideband(i, q, fs, {
        toneHz,
        sideband,
        offsetHz: offset,
        receiverSideband: rxSideband,
        ...opts,
      }),
    );
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
        [
          'opposite-sideband suppression',
          beyond(r.sidebandSuppressionDb, r.sidebandMeasurableDb, 'sideband'),
        ],
        ['carrier suppression', beyond(r.carrierSuppressionDb, r.carrierMeasurableDb, 'carrier')],
        ['floor near the wanted tone', `${fixed(r.floorDbc, 1)} dBc (noise in one spectrum line)`],
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
    if (a === b)
      throw new UsageError(`--two-tone ${a},${b} is one tone twice: give two different frequencies`);
    const r = inCliWords(() => measureTwoTone(capture, fs, [place(a), place(b)], opts));
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
    if (typeof v.tones !== 'string' || v.tones.trim() === '')
      throw new UsageError('--tones needs frequencies in Hz, e.g. --tones 700,1900');
    const freqs = numberListOpt('tones', v.tones, ',')!;
    for (const f of freqs) {
      const lim = fs / 2;
      if (q ? !(f !== 0 && Math.abs(f) < lim) : !(f > 0 && f < lim)) {
        throw new UsageError(
          `--tones ${f} Hz must lie ${q ? `between -${lim} and ${lim} Hz, not at 0 Hz (the carrier)` : `above 0 Hz and below Nyquist ${lim} Hz`}`,
        );
      }
    }
    const capture = q ? { i, q } : i;
    const r = inCliWords(() => measureTones(capture, fs, freqs, opts));
    json = { file: positionals[0], sampleRate: fs, capture: q ? 'iq' : 'audio', tones: r };
    text = formatTable([HEAD, ...r.map((t) => toneRow(`${t.nominalHz} Hz`, t))]);
  }
  Object.assign(json as object, { startFrame, framesRead: frames, totalFrames: total });
  const out =
    format === 'json'
      ? `${JSON.stringify(json, (_k, x) => (typeof x === 'number' ? round(x, 6) : x), 2)}\n`
      : `${text}\n${cautionsText()}\n`;
  if (partial !== undefined) process.stderr.write(`note: ${partial}\n`);
  if (outFile !== undefined) writeFileAtomic(outFile, out);
  else process.stdout.write(out);
  return 0;
}
