/**
 * WAV files through wavefile (Node only). I/Q files are stereo: left = I, right = Q.
 * Encodings: 16- and 24-bit integer PCM and 32-bit IEEE float.
 *
 * Integer scaling: a sample x in full-scale units is stored as `round(x·2^(b−1))`, limited to
 * `[−2^(b−1), 2^(b−1) − 1]`, and read back as `v / 2^(b−1)` (the usual two's-complement mapping, AES17
 * full scale at ±1.0). A round trip is therefore within half an LSB, and +1.0 exactly comes back one
 * LSB low. Samples beyond full scale cannot be stored as integers: they are limited and counted in
 * `clippedSamples`, never clipped silently. Float files keep values beyond ±1.0 (counted in
 * `overFullScale`, since many players clip them).
 */
import { readFile, writeFile } from 'node:fs/promises';
import * as wavefileNs from 'wavefile';
import { OrthotoneError } from '../core/errors.js';
import { requireOneOf } from '../core/validate.js';

/** Sample encodings this module writes. */
export type WavEncoding = 'int16' | 'int24' | 'float32';

/** Encodings accepted by {@link encodeWav}. */
export const WAV_ENCODINGS: readonly WavEncoding[] = Object.freeze(['int16', 'int24', 'float32']);

/** A decoded WAV file. */
export interface WavData {
  /** Sample rate, Hz. */
  sampleRate: number;
  /** One array per channel, full-scale units (1.0 = 0 dBFS). */
  channels: Float32Array[];
  /** wavefile's bit-depth code: '8', '16', '24', '32', '32f', '64'. */
  bitDepth: string;
}

/** What writing did to the samples. */
export interface WavWriteReport {
  /** The file's bytes. */
  bytes: Uint8Array;
  /** Integer files: samples beyond full scale that had to be limited (lost). */
  clippedSamples: number;
  /** Samples with magnitude above 1.0 (float files keep them; integer files clip them). */
  overFullScale: number;
  /** Largest magnitude written, full-scale units. */
  peak: number;
}

interface WaveFileLike {
  fromScratch(channels: number, sampleRate: number, bitDepth: string, samples: ArrayLike<number>[]): void;
  fromBuffer(bytes: Uint8Array): void;
  toBuffer(): Uint8Array;
  getSamples(interleaved: boolean, out: unknown): Float64Array | Float64Array[];
  bitDepth: string;
  fmt: { numChannels?: number; sampleRate?: number };
}

type WaveFileCtor = new () => WaveFileLike;

function waveFileClass(): WaveFileCtor {
  // TOOLCHAIN.md: a namespace import, then `ns.WaveFile ?? ns.default?.WaveFile` works in Node ESM,
  // CJS, vitest and Vite alike.
  const ns = wavefileNs as unknown as { WaveFile?: WaveFileCtor; default?: { WaveFile?: WaveFileCtor } };
  const c = ns.WaveFile ?? ns.default?.WaveFile;
  if (!c)
    throw new OrthotoneError('INVALID_ARGUMENT', 'the wavefile package did not load: reinstall dependencies');
  return c;
}

/**
 * Encodes channels as a WAV file.
 * @param channels one Float32Array per channel (same lengths), full-scale units.
 * @param sampleRate Hz (whole number).
 * @param encoding 'int16', 'int24' or 'float32'.
 * @returns the bytes and what happened to out-of-range samples.
 * @throws {OrthotoneError} INVALID_ARGUMENT for no channels, channels of different lengths, a bad
 *   sample rate or encoding.
 */
export function encodeWav(
  channels: Float32Array[],
  sampleRate: number,
  encoding: WavEncoding,
): WavWriteReport {
  requireOneOf('encoding', encoding, WAV_ENCODINGS);
  if (!Array.isArray(channels) || channels.length < 1) {
    throw new OrthotoneError('INVALID_ARGUMENT', 'give at least one channel to write');
  }
  const n = channels[0]!.length;
  if (channels.some((c) => c.length !== n)) {
    throw new OrthotoneError(
      'BUFFER_MISMATCH',
      `channels have different lengths (${channels.map((c) => c.length).join(', ')}): pass equal lengths`,
    );
  }
  if (!Number.isInteger(sampleRate) || sampleRate < 1 || sampleRate > 4_294_967_295) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `sampleRate ${sampleRate} must be a whole number of Hz for a WAV file`,
      sampleRate,
    );
  }
  let clipped = 0;
  let over = 0;
  let peak = 0;
  for (const c of channels) {
    for (let k = 0; k < n; k++) {
      const a = Math.abs(c[k]!);
      if (a > peak) peak = a;
      if (a > 1) over++;
    }
  }
  const W = waveFileClass();
  const wav = new W();
  if (encoding === 'float32') {
    wav.fromScratch(channels.length, sampleRate, '32f', channels);
  } else {
    const bits = encoding === 'int16' ? 16 : 24;
    const scale = 2 ** (bits - 1);
    const max = scale - 1;
    const ints = channels.map((c) => {
      const out = new Int32Array(n);
      for (let k = 0; k < n; k++) {
        const x = c[k]!;
        let v = Math.round(x * scale);
        if (!(v <= max)) {
          // +1.0 exactly lands one LSB above the top code: limited, within one LSB, not counted.
          if (!(x <= 1)) clipped++;
          v = Number.isNaN(v) ? 0 : max;
        } else if (v < -scale) {
          clipped++;
          v = -scale;
        }
        out[k] = v;
      }
      return out;
    });
    wav.fromScratch(channels.length, sampleRate, String(bits), ints);
  }
  return { bytes: wav.toBuffer(), clippedSamples: clipped, overFullScale: over, peak };
}

/**
 * Decodes a WAV file (PCM 8/16/24/32-bit integer or 32/64-bit float) to full-scale units.
 * @throws {OrthotoneError} INVALID_ARGUMENT when the bytes are not a readable WAV file.
 */
export function decodeWav(bytes: Uint8Array): WavData {
  const W = waveFileClass();
  const wav = new W();
  try {
    wav.fromBuffer(bytes);
  } catch (e) {
    throw new OrthotoneError('INVALID_ARGUMENT', `not a readable WAV file: ${(e as Error).message}`);
  }
  const depth = wav.bitDepth;
  const raw = wav.getSamples(false, Float64Array);
  const chans = (Array.isArray(raw) ? raw : [raw]) as Float64Array[];
  let scale = 1;
  let offset = 0;
  if (depth === '8') {
    scale = 128;
    offset = 128;
  } else if (depth !== '32f' && depth !== '64') {
    const bits = Number.parseInt(depth, 10);
    if (!Number.isFinite(bits)) {
      throw new OrthotoneError('INVALID_ARGUMENT', `WAV bit depth ${depth} is not supported`);
    }
    scale = 2 ** (bits - 1);
  }
  const channels = chans.map((c) => {
    const out = new Float32Array(c.length);
    for (let k = 0; k < c.length; k++) out[k] = (c[k]! - offset) / scale;
    return out;
  });
  return { sampleRate: Number(wav.fmt.sampleRate), channels, bitDepth: depth };
}

/**
 * Writes a WAV file.
 * @param path file to write.
 * @returns the write report (see {@link encodeWav}).
 * @throws {OrthotoneError} as {@link encodeWav}; file system errors pass through.
 */
export async function writeWavFile(
  path: string,
  channels: Float32Array[],
  sampleRate: number,
  encoding: WavEncoding,
): Promise<WavWriteReport> {
  const r = encodeWav(channels, sampleRate, encoding);
  await writeFile(path, r.bytes);
  return r;
}

/**
 * Reads a WAV file.
 * @throws {OrthotoneError} INVALID_ARGUMENT when it is not a readable WAV file.
 */
export async function readWavFile(path: string): Promise<WavData> {
  return decodeWav(new Uint8Array(await readFile(path)));
}

/**
 * Writes an I/Q pair as a stereo WAV file: left = I, right = Q.
 * @throws {OrthotoneError} BUFFER_MISMATCH when I and Q differ in length; as {@link encodeWav}.
 * @example
 * ```ts
 * import { mkdtempSync } from 'node:fs';
 * import { tmpdir } from 'node:os';
 * import { join } from 'node:path';
 * import { createQuadratureGenerator, createSignalSource, designNetwork } from 'orthotone';
 * import { readIqWavFile, writeIqWavFile } from 'orthotone/node';
 *
 * // One second of a 1000 Hz tone as I/Q (left I, right Q), written and read back.
 * const net = designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'allpass', targetDb: 60 });
 * const gen = createQuadratureGenerator(net);
 * const audio = new Float32Array(48000);
 * createSignalSource({ kind: 'tone', frequencyHz: 1000, levelDbfs: -6 }, 48000).fill(audio);
 * const i = new Float32Array(48000);
 * const q = new Float32Array(48000);
 * gen.process(audio, i, q);
 * const file = join(mkdtempSync(join(tmpdir(), 'iq-')), 'tone-iq.wav');
 * await writeIqWavFile(file, i, q, 48000); // 32-bit float by default
 * const back = await readIqWavFile(file);
 * console.log(back.sampleRate, back.i.length, back.q.length);
 * ```
 */
export async function writeIqWavFile(
  path: string,
  i: Float32Array,
  q: Float32Array,
  sampleRate: number,
  encoding: WavEncoding = 'float32',
): Promise<WavWriteReport> {
  if (i.length !== q.length) {
    throw new OrthotoneError(
      'BUFFER_MISMATCH',
      `I has ${i.length} samples but Q has ${q.length}: pass equal lengths`,
    );
  }
  return writeWavFile(path, [i, q], sampleRate, encoding);
}

/**
 * Reads a stereo I/Q WAV file (left = I, right = Q).
 * @throws {OrthotoneError} INVALID_ARGUMENT when the file is not stereo.
 * @example
 * ```ts
 * import { mkdtempSync } from 'node:fs';
 * import { tmpdir } from 'node:os';
 * import { join } from 'node:path';
 * import { createQuadratureGenerator, createSignalSource, designNetwork } from 'orthotone';
 * import { readIqWavFile, writeIqWavFile } from 'orthotone/node';
 *
 * // One second of a 1000 Hz tone as I/Q (left I, right Q), written and read back.
 * const net = designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'allpass', targetDb: 60 });
 * const gen = createQuadratureGenerator(net);
 * const audio = new Float32Array(48000);
 * createSignalSource({ kind: 'tone', frequencyHz: 1000, levelDbfs: -6 }, 48000).fill(audio);
 * const i = new Float32Array(48000);
 * const q = new Float32Array(48000);
 * gen.process(audio, i, q);
 * const file = join(mkdtempSync(join(tmpdir(), 'iq-')), 'tone-iq.wav');
 * await writeIqWavFile(file, i, q, 48000); // 32-bit float by default
 * const back = await readIqWavFile(file);
 * console.log(back.sampleRate, back.i.length, back.q.length);
 * ```
 */
export async function readIqWavFile(
  path: string,
): Promise<{ i: Float32Array; q: Float32Array; sampleRate: number }> {
  const d = await readWavFile(path);
  if (d.channels.length !== 2) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `${path} has ${d.channels.length} channel(s): an I/Q file is stereo (left I, right Q)`,
    );
  }
  return { i: d.channels[0]!, q: d.channels[1]!, sampleRate: d.sampleRate };
}

/**
 * Mixes any WAV channels down to one mono signal (mean of the channels).
 * @returns the mono samples, full-scale units (the channel itself, not a copy, when there is one).
 * @throws never for data from {@link readWav} (at least one channel); an object with no channels
 *   fails with a TypeError.
 */
export function toMono(d: WavData): Float32Array {
  if (d.channels.length === 1) return d.channels[0]!;
  const n = d.channels[0]!.length;
  const out = new Float32Array(n);
  for (const c of d.channels) for (let k = 0; k < n; k++) out[k]! += c[k]! / d.channels.length;
  return out;
}
