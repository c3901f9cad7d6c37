/**
 * WAV files (Node only), read and written in blocks straight between typed arrays and the file, so
 * memory stays bounded whatever the length. I/Q files are stereo: left = I, right = Q.
 *
 * Formats read: RIFF WAVE and RF64 (EBU Tech 3306), PCM (format tag 1) 8-bit unsigned and 16-, 24-,
 * 32-bit signed, IEEE float (tag 3) 32- and 64-bit, and WAVE_FORMAT_EXTENSIBLE (tag 0xFFFE) whose
 * sub-format is one of those; chunks other than `fmt `, `data` and `ds64` (LIST, fact, JUNK, …)
 * are skipped, odd-sized chunks with their pad byte (Microsoft/IBM "Multimedia Programming
 * Interface and Data Specifications 1.0", 1991, RIFF chunks; Microsoft "WAVEFORMATEXTENSIBLE").
 * Formats written: the same encodings; a file whose data would pass the 4 GiB limit of a RIFF size
 * field is written as RF64 (a JUNK chunk reserved at the start is turned into the `ds64` chunk, as
 * EBU Tech 3306 §3 describes), so a one-hour render at 192 kHz still makes one readable file.
 * Written by hand: the formats are small and fixed, and a general library converted sample by
 * sample (about 90 % of a long render's time) and held the whole file in memory.
 *
 * Integer scaling: a sample x in full-scale units is stored as `round(x·2^(b−1))`, limited to
 * `[−2^(b−1), 2^(b−1) − 1]`, and read back as `v / 2^(b−1)` (the usual two's-complement mapping, AES17
 * full scale at ±1.0); 8-bit data is unsigned with 128 as zero. A round trip is therefore within half
 * an LSB, and +1.0 exactly comes back one LSB low. Samples beyond full scale cannot be stored as
 * integers: they are limited and counted in `clippedSamples`, never clipped silently. Float files
 * keep values beyond ±1.0 (counted in `overFullScale`, since many players clip them).
 *
 * Writes go to a temporary file in the destination's folder, renamed into place when complete: a
 * full disk or a crash leaves the previous file (or none), never a truncated one.
 */
import { closeSync, fstatSync, openSync, readSync, writeSync } from 'node:fs';
import { endianness } from 'node:os';
import { OrthotoneError } from '../core/errors.js';
import { requireOneOf } from '../core/validate.js';
import { describeWriteError, openAtomicTarget } from './files.js';

/** Sample encodings this module writes. */
export type WavEncoding = 'uint8' | 'int16' | 'int24' | 'int32' | 'float32' | 'float64';

/** Encodings accepted by {@link encodeWav} and {@link createWavWriter}. */
export const WAV_ENCODINGS: readonly WavEncoding[] = Object.freeze([
  'uint8',
  'int16',
  'int24',
  'int32',
  'float32',
  'float64',
]);

/** A decoded WAV file. */
export interface WavData {
  /** Sample rate, Hz. */
  sampleRate: number;
  /** One array per channel, full-scale units (1.0 = 0 dBFS). */
  channels: Float32Array[];
  /** Bit-depth code: '8', '16', '24', '32' (integer), '32f', '64' (float). */
  bitDepth: string;
}

/** What writing did to the samples. */
export interface WavWriteReport {
  /** The file's bytes ({@link encodeWav} only; a file writer leaves it empty). */
  bytes: Uint8Array;
  /** Integer files: samples beyond full scale that had to be limited (lost). */
  clippedSamples: number;
  /** Samples with magnitude above 1.0 (float files keep them; integer files clip them). */
  overFullScale: number;
  /** Largest magnitude written, full-scale units. */
  peak: number;
}

/** The layout of a WAV file, read from its header. */
export interface WavInfo {
  /** Sample rate, Hz. */
  sampleRate: number;
  /** Channels per frame. */
  channels: number;
  /** Bits per sample. */
  bitsPerSample: number;
  /** Sample format. */
  float: boolean;
  /** Bit-depth code: '8', '16', '24', '32' (integer), '32f', '64' (float). */
  bitDepth: string;
  /** Bytes per frame (all channels). */
  blockAlign: number;
  /** Frames in the data chunk. */
  frames: number;
  /** Byte offset of the first sample in the file. */
  dataOffset: number;
  /** True for an RF64 file. */
  rf64: boolean;
}

/** Options of {@link openWavReader}. */
export interface WavReadOptions {
  /**
   * Accept a data chunk that claims more bytes than the file holds (an interrupted recording),
   * reading the whole frames that are there. Default false: such a file is refused.
   */
  allowTruncated: boolean;
}

const LITTLE_ENDIAN_HOST = endianness() === 'LE';
/** The RIFF size fields are 32-bit: above this, write RF64. */
const RIFF_LIMIT = 0xffffffff;
/** Frames converted per block (a block of 64 channels of float64 is 2 MiB). */
const BLOCK_FRAMES = 4096;
/** Header bytes examined for the chunk list before the data chunk. */
const HEADER_SCAN_LIMIT = 1 << 20;

const fail = (msg: string, v?: unknown): never => {
  throw new OrthotoneError('INVALID_ARGUMENT', msg, v);
};

function tag(b: Uint8Array, o: number): string {
  return String.fromCharCode(b[o]!, b[o + 1]!, b[o + 2]!, b[o + 3]!);
}

/** A chunk id safe to print (binary junk shown as hex). */
function showTag(b: Uint8Array, o: number): string {
  const t = tag(b, o);
  return /^[\x20-\x7e]{4}$/.test(t)
    ? JSON.stringify(t)
    : `0x${Array.from(b.subarray(o, o + 4), (x) => x.toString(16).padStart(2, '0')).join('')}`;
}

/**
 * Parses a WAV header: RIFF or RF64, the `fmt ` chunk (PCM, IEEE float, extensible) and the
 * position and length of the `data` chunk.
 * @param head the file's first bytes (at least up to the start of the data chunk).
 * @param fileSize the whole file's length in bytes.
 * @param name how to name the file in messages.
 * @param options `allowTruncated` (see {@link WavReadOptions}).
 * @returns the layout.
 * @throws {OrthotoneError} INVALID_ARGUMENT naming the file and what is wrong: not RIFF/RF64 WAVE,
 *   no fmt or data chunk, 0 channels, an unsupported format or bit depth, a zero sample rate, or a
 *   data chunk that claims more bytes than the file holds.
 * Reference: Microsoft/IBM Multimedia Programming Interface and Data Specifications 1.0 (1991);
 * EBU Tech 3306 (RF64).
 */
export function parseWavHeader(
  head: Uint8Array,
  fileSize: number,
  name = 'the file',
  options: Partial<WavReadOptions> = {},
): WavInfo {
  const dv = new DataView(head.buffer, head.byteOffset, head.byteLength);
  if (head.length < 12) fail(`${name} is not a WAV file: it has only ${head.length} bytes`);
  const riff = tag(head, 0);
  if ((riff !== 'RIFF' && riff !== 'RF64') || tag(head, 8) !== 'WAVE') {
    fail(`${name} is not a WAV file: it starts with ${showTag(head, 0)}, not "RIFF" … "WAVE"`);
  }
  const rf64 = riff === 'RF64';
  let ds64Data: number | undefined;
  let fmt: { tag: number; channels: number; rate: number; align: number; bits: number } | undefined;
  let o = 12;
  // Each chunk moves o on by at least 8 bytes, so the walk ends within head.length / 8 steps
  // whatever the chunk count (RIFF sets no limit on it).
  while (o + 8 <= head.length) {
    const id = tag(head, o);
    const size = dv.getUint32(o + 4, true);
    if (id === 'ds64' && size >= 24) {
      if (o + 8 + 24 > head.length) break;
      ds64Data = Number(dv.getBigUint64(o + 16, true));
    } else if (id === 'fmt ') {
      if (size < 16) fail(`${name}: its fmt chunk has ${size} bytes, fewer than the 16 a WAV format needs`);
      if (o + 8 + Math.min(size, 40) > head.length) break;
      let ftag = dv.getUint16(o + 8, true);
      const bits = dv.getUint16(o + 22, true);
      if (ftag === 0xfffe) {
        // WAVE_FORMAT_EXTENSIBLE: the format is the first two bytes of the sub-format GUID.
        if (size < 40) fail(`${name}: its extensible fmt chunk has ${size} bytes, fewer than 40`);
        ftag = dv.getUint16(o + 8 + 24, true);
      }
      fmt = {
        tag: ftag,
        channels: dv.getUint16(o + 10, true),
        rate: dv.getUint32(o + 12, true),
        align: dv.getUint16(o + 20, true),
        bits,
      };
    } else if (id === 'data') {
      if (!fmt) fail(`${name}: the data chunk comes before any fmt chunk, so its samples cannot be read`);
      const f = fmt!;
      if (f.channels === 0) fail(`${name}: its fmt chunk declares 0 channels: the file holds no audio`);
      if (f.rate === 0) fail(`${name}: its fmt chunk declares a sample rate of 0 Hz`);
      const float = f.tag === 3;
      if (f.tag !== 1 && f.tag !== 3) {
        fail(
          `${name}: WAV format tag ${f.tag} is not supported: use PCM (1) or IEEE float (3), e.g. 24-bit PCM or 32-bit float`,
        );
      }
      const okBits = float ? [32, 64] : [8, 16, 24, 32];
      if (!okBits.includes(f.bits)) {
        fail(
          `${name}: ${f.bits} bits per sample is not supported for ${float ? 'float' : 'PCM'} data: use ${okBits.join(', ')}`,
        );
      }
      const align = (f.bits / 8) * f.channels;
      if (f.align !== 0 && f.align !== align) {
        fail(
          `${name}: block align ${f.align} does not match ${f.channels} channel(s) of ${f.bits} bits (${align})`,
        );
      }
      const offset = o + 8;
      let bytes = size;
      if (rf64 && size === 0xffffffff) {
        if (ds64Data === undefined) fail(`${name}: an RF64 file without its ds64 chunk`);
        bytes = ds64Data!;
      }
      const available = Math.max(0, fileSize - offset);
      if (bytes > available) {
        if (!options.allowTruncated) {
          fail(
            `${name}: its data chunk claims ${bytes} bytes but the file holds ${available} after the header: the file is truncated (an interrupted write?)`,
          );
        }
        bytes = available;
      }
      return {
        sampleRate: f.rate,
        channels: f.channels,
        bitsPerSample: f.bits,
        float,
        bitDepth: float ? (f.bits === 32 ? '32f' : '64') : String(f.bits),
        blockAlign: align,
        frames: Math.floor(bytes / align),
        dataOffset: offset,
        rf64,
      };
    }
    o += 8 + size + (size % 2);
  }
  return fail(
    fmt
      ? `${name}: no data chunk found${o >= head.length && o < fileSize ? ` within the first ${HEADER_SCAN_LIMIT} bytes` : ''}: the file holds no samples`
      : `${name}: no fmt chunk found: not a readable WAV file`,
  );
}

/**
 * Reverses the bytes of each whole `width`-byte word in the first `n` bytes of `b`, in place: a
 * little-endian word becomes big-endian and back (used on a big-endian host, since WAV data is
 * little-endian; RIFF, Microsoft/IBM 1991). A trailing part-word is left as it is. Internal to the
 * WAV module (not in `orthotone/node`); exported for its tests.
 * @param b the bytes.
 * @param width word size, bytes (1 leaves `b` unchanged).
 * @param n bytes to treat.
 * @throws never
 */
export function swapBytes(b: Uint8Array, width: number, n: number): void {
  // A 1-byte word has nothing to swap: the inner loop does not run (a = z).
  for (let o = 0; o + width <= n; o += width) {
    for (let a = o, z = o + width - 1; a < z; a++, z--) {
      const t = b[a]!;
      b[a] = b[z]!;
      b[z] = t;
    }
  }
}

/**
 * Converts interleaved little-endian sample bytes into per-channel full-scale floats.
 * `raw` must start on an 8-byte boundary of its buffer.
 */
function decodeBlock(
  raw: Uint8Array,
  info: Pick<WavInfo, 'channels' | 'bitsPerSample' | 'float'>,
  frames: number,
  out: Float32Array[],
  at: number,
): void {
  const nc = info.channels;
  const n = frames * nc;
  const bytes = info.bitsPerSample / 8;
  if (!LITTLE_ENDIAN_HOST && bytes > 1 && bytes !== 3) swapBytes(raw, bytes, n * bytes);
  const buf = raw.buffer;
  const off = raw.byteOffset;
  if (info.float && bytes === 4) {
    const s = new Float32Array(buf, off, n);
    for (let c = 0; c < nc; c++) {
      const o = out[c];
      if (!o) continue;
      for (let k = 0, j = c; k < frames; k++, j += nc) o[at + k] = s[j]!;
    }
  } else if (info.float) {
    const s = new Float64Array(buf, off, n);
    for (let c = 0; c < nc; c++) {
      const o = out[c];
      if (!o) continue;
      for (let k = 0, j = c; k < frames; k++, j += nc) o[at + k] = s[j]!;
    }
  } else if (bytes === 1) {
    for (let c = 0; c < nc; c++) {
      const o = out[c];
      if (!o) continue;
      for (let k = 0, j = c; k < frames; k++, j += nc) o[at + k] = (raw[j]! - 128) / 128;
    }
  } else if (bytes === 2) {
    const s = new Int16Array(buf, off, n);
    for (let c = 0; c < nc; c++) {
      const o = out[c];
      if (!o) continue;
      for (let k = 0, j = c; k < frames; k++, j += nc) o[at + k] = s[j]! / 32768;
    }
  } else if (bytes === 3) {
    for (let c = 0; c < nc; c++) {
      const o = out[c];
      if (!o) continue;
      for (let k = 0, j = 3 * c; k < frames; k++, j += 3 * nc) {
        const v = (raw[j]! | (raw[j + 1]! << 8) | (raw[j + 2]! << 16)) << 8; // sign-extend 24 → 32
        o[at + k] = (v >> 8) / 8388608;
      }
    }
  } else {
    const s = new Int32Array(buf, off, n);
    for (let c = 0; c < nc; c++) {
      const o = out[c];
      if (!o) continue;
      for (let k = 0, j = c; k < frames; k++, j += nc) o[at + k] = s[j]! / 2147483648;
    }
  }
}

/** A WAV file open for reading in blocks. */
export interface WavReader {
  /** The file's layout. */
  readonly info: WavInfo;
  /**
   * Reads up to `frames` frames from the current position into `out[c]` starting at `at`
   * (channels whose `out[c]` is undefined are skipped); advances the position.
   * @returns frames read (0 at the end).
   * @throws {OrthotoneError} INVALID_ARGUMENT when `out` arrays are too short; a file-system error.
   */
  read(out: (Float32Array | undefined)[], frames: number, at?: number): number;
  /**
   * Moves to frame `frame` (0 … frames).
   * @throws {OrthotoneError} INVALID_ARGUMENT for a frame outside the file.
   */
  seek(frame: number): void;
  /**
   * Closes the file.
   * @throws never
   */
  close(): void;
}

/**
 * Opens a WAV file for reading in blocks (bounded memory, whatever the file's length).
 * @param path a regular file (a device or a pipe is refused: its length is unknown).
 * @param options see {@link WavReadOptions}.
 * @returns a reader positioned at the first frame.
 * @throws {OrthotoneError} INVALID_ARGUMENT as {@link parseWavHeader}, or for a path that is not a
 *   regular file; a Node file-system error when the file cannot be opened.
 * Reference: see the file header.
 */
export function openWavReader(path: string, options: Partial<WavReadOptions> = {}): WavReader {
  const fd = openSync(path, 'r');
  let info: WavInfo;
  try {
    const st = fstatSync(fd);
    if (!st.isFile()) fail(`${path} is not a regular file (a device, pipe or folder): give a WAV file`);
    const head = new Uint8Array(Math.min(st.size, HEADER_SCAN_LIMIT));
    let got = 0;
    while (got < head.length) {
      const n = readSync(fd, head, got, head.length - got, got);
      if (n === 0) break;
      got += n;
    }
    info = parseWavHeader(head.subarray(0, got), st.size, path, options);
  } catch (e) {
    closeSync(fd);
    throw e;
  }
  const i = info;
  const scratch = new Uint8Array(new ArrayBuffer(BLOCK_FRAMES * i.blockAlign + 8));
  let pos = 0;
  let open = true;
  return {
    info: i,
    read(out, frames, at = 0) {
      const want = Math.max(0, Math.min(frames, i.frames - pos));
      for (const o of out) {
        if (o && o.length < at + want)
          fail(`read: an output array holds ${o.length} samples, ${at + want} needed`);
      }
      let done = 0;
      while (done < want) {
        const m = Math.min(BLOCK_FRAMES, want - done);
        const len = m * i.blockAlign;
        let got = 0;
        const fileAt = i.dataOffset + (pos + done) * i.blockAlign;
        while (got < len) {
          const n = readSync(fd, scratch, got, len - got, fileAt + got);
          if (n === 0) break;
          got += n;
        }
        const whole = Math.floor(got / i.blockAlign);
        decodeBlock(scratch, i, whole, out as Float32Array[], at + done);
        done += whole;
        if (whole < m) break;
      }
      pos += done;
      return done;
    },
    seek(frame) {
      if (!Number.isInteger(frame) || frame < 0 || frame > i.frames) {
        fail(`frame ${frame} is outside the file: use 0 to ${i.frames}`, frame);
      }
      pos = frame;
    },
    close() {
      if (open) closeSync(fd);
      open = false;
    },
  };
}

/** Options of {@link createWavWriter}. */
export interface WavWriterOptions {
  /** Channels per frame (1 … 64). */
  channels: number;
  /** Sample rate, whole Hz. */
  sampleRate: number;
  /** Sample encoding. */
  encoding: WavEncoding;
  /**
   * Largest data size allowed, bytes, checked before each block is written (default: no limit
   * beyond RF64's). A render checks its whole length against this before it starts.
   */
  maxDataBytes: number;
  /**
   * RIFF size above which the file is written as RF64, bytes (default 0xFFFFFFFF, the 4 GiB limit
   * of a RIFF size field); a lower value makes RF64 files for tests or for tools that want them.
   */
  rf64AboveBytes: number;
}

/** A WAV file being written in blocks. */
export interface WavWriter {
  /**
   * Appends `frames` frames (default: the first array's length) from one array per channel.
   * @throws {OrthotoneError} BUFFER_MISMATCH for a wrong channel count or short arrays;
   *   WRITE_FAILED (the temporary file is removed) when the disk refuses the data.
   */
  write(channels: readonly Float32Array[], frames?: number): void;
  /**
   * Completes the header, flushes and renames the file into place.
   * @returns what writing did to the samples (`bytes` empty).
   * @throws {OrthotoneError} WRITE_FAILED (the temporary file is removed, an old file kept).
   */
  close(): WavWriteReport;
  /**
   * Gives up: removes the temporary file; an old file at the path is kept.
   * @throws never
   */
  abort(): void;
  /** Frames written so far. */
  readonly frames: number;
}

/** Bits, float flag and format tag of an encoding. */
function encodingLayout(e: WavEncoding): { bits: number; float: boolean } {
  switch (e) {
    case 'uint8':
      return { bits: 8, float: false };
    case 'int16':
      return { bits: 16, float: false };
    case 'int24':
      return { bits: 24, float: false };
    case 'int32':
      return { bits: 32, float: false };
    case 'float32':
      return { bits: 32, float: true };
    case 'float64':
      return { bits: 64, float: true };
  }
}

/** The header written at the start (RIFF with a JUNK chunk reserving room for ds64). */
function headerBytes(
  nc: number,
  fs: number,
  enc: WavEncoding,
  dataBytes: number,
  frames: number,
  rf64Above = RIFF_LIMIT,
): Uint8Array {
  const { bits, float } = encodingLayout(enc);
  const fmtSize = float ? 18 : 16;
  const factSize = float ? 12 : 0;
  const len = 12 + 36 + 8 + fmtSize + factSize + 8;
  const b = new Uint8Array(len);
  const dv = new DataView(b.buffer);
  const put = (o: number, s: string) => {
    for (let k = 0; k < 4; k++) b[o + k] = s.charCodeAt(k);
  };
  const padded = dataBytes + (dataBytes % 2);
  const riffSize = len - 8 + padded;
  const big = riffSize > rf64Above;
  put(0, big ? 'RF64' : 'RIFF');
  dv.setUint32(4, big ? 0xffffffff : riffSize, true);
  put(8, 'WAVE');
  // 36-byte chunk at 12: JUNK while the file is small, ds64 once it passes 4 GiB (EBU Tech 3306).
  put(12, big ? 'ds64' : 'JUNK');
  dv.setUint32(16, 28, true);
  if (big) {
    dv.setBigUint64(20, BigInt(riffSize), true);
    dv.setBigUint64(28, BigInt(dataBytes), true);
    dv.setBigUint64(36, BigInt(frames), true);
    // bytes 44–47, the table length, stay 0 (no table): the buffer starts zeroed.
  }
  let o = 48;
  put(o, 'fmt ');
  dv.setUint32(o + 4, fmtSize, true);
  dv.setUint16(o + 8, float ? 3 : 1, true);
  dv.setUint16(o + 10, nc, true);
  dv.setUint32(o + 12, fs, true);
  dv.setUint32(o + 16, fs * nc * (bits / 8), true);
  dv.setUint16(o + 20, nc * (bits / 8), true);
  dv.setUint16(o + 22, bits, true);
  // A float fmt chunk ends with cbSize = 0 (bytes o + 24 … 25), left zero from the fresh buffer.
  o += 8 + fmtSize;
  if (float) {
    put(o, 'fact');
    dv.setUint32(o + 4, 4, true);
    dv.setUint32(o + 8, big ? 0xffffffff : frames, true);
    o += 12;
  }
  put(o, 'data');
  dv.setUint32(o + 4, big ? 0xffffffff : dataBytes, true);
  return b;
}

function checkWriterOptions(o: Pick<WavWriterOptions, 'channels' | 'sampleRate' | 'encoding'>): void {
  requireOneOf('encoding', o.encoding, WAV_ENCODINGS);
  if (!Number.isInteger(o.channels) || o.channels < 1 || o.channels > 64) {
    fail(`channels ${o.channels} must be a whole number from 1 to 64`, o.channels);
  }
  if (!Number.isInteger(o.sampleRate) || o.sampleRate < 1 || o.sampleRate > 4_294_967_295) {
    fail(`sampleRate ${o.sampleRate} must be a whole number of Hz for a WAV file`, o.sampleRate);
  }
}

/** Encodes interleaved samples into `dst` (8-byte aligned); returns bytes written; updates stats. */
function encodeBlock(
  src: readonly Float32Array[],
  from: number,
  frames: number,
  enc: WavEncoding,
  dst: Uint8Array,
  st: { clipped: number; over: number; peak: number },
): number {
  const nc = src.length;
  const n = frames * nc;
  // Statistics first, one pass per channel.
  let peak = st.peak;
  let over = 0;
  for (let c = 0; c < nc; c++) {
    const s = src[c]!;
    for (let k = from; k < from + frames; k++) {
      const a = Math.abs(s[k]!);
      if (a > peak) peak = a;
      if (a > 1) over++;
    }
  }
  st.peak = peak;
  st.over += over;
  const buf = dst.buffer;
  const off = dst.byteOffset;
  if (enc === 'float32' || enc === 'float64') {
    const d = enc === 'float32' ? new Float32Array(buf, off, n) : new Float64Array(buf, off, n);
    for (let c = 0; c < nc; c++) {
      const s = src[c]!;
      for (let k = 0, j = c; k < frames; k++, j += nc) d[j] = s[from + k]!;
    }
    const bytes = n * (enc === 'float32' ? 4 : 8);
    if (!LITTLE_ENDIAN_HOST) swapBytes(dst, enc === 'float32' ? 4 : 8, bytes);
    return bytes;
  }
  const bits = encodingLayout(enc).bits;
  const scale = 2 ** (bits - 1);
  const max = scale - 1;
  let clipped = 0;
  // round(x·scale) limited to [−scale, max]; +1.0 exactly lands one LSB above the top code and is
  // limited without being counted (it is within one LSB); NaN becomes 0 and is counted.
  const q = (x: number): number => {
    let v = Math.round(x * scale);
    if (!(v <= max)) {
      if (!(x <= 1)) clipped++;
      v = Number.isNaN(v) ? 0 : max;
    } else if (v < -scale) {
      clipped++;
      v = -scale;
    }
    return v;
  };
  let bytes: number;
  if (enc === 'uint8') {
    for (let c = 0; c < nc; c++) {
      const s = src[c]!;
      for (let k = 0, j = c; k < frames; k++, j += nc) dst[j] = q(s[from + k]!) + 128;
    }
    bytes = n;
  } else if (enc === 'int16') {
    const d = new Int16Array(buf, off, n);
    for (let c = 0; c < nc; c++) {
      const s = src[c]!;
      for (let k = 0, j = c; k < frames; k++, j += nc) d[j] = q(s[from + k]!);
    }
    bytes = 2 * n;
    if (!LITTLE_ENDIAN_HOST) swapBytes(dst, 2, bytes);
  } else if (enc === 'int24') {
    for (let c = 0; c < nc; c++) {
      const s = src[c]!;
      for (let k = 0, j = 3 * c; k < frames; k++, j += 3 * nc) {
        const v = q(s[from + k]!);
        dst[j] = v & 0xff;
        dst[j + 1] = (v >> 8) & 0xff;
        dst[j + 2] = (v >> 16) & 0xff;
      }
    }
    bytes = 3 * n;
  } else {
    const d = new Int32Array(buf, off, n);
    for (let c = 0; c < nc; c++) {
      const s = src[c]!;
      for (let k = 0, j = c; k < frames; k++, j += nc) d[j] = q(s[from + k]!);
    }
    bytes = 4 * n;
    if (!LITTLE_ENDIAN_HOST) swapBytes(dst, 4, bytes);
  }
  st.clipped += clipped;
  return bytes;
}

/** Low-level file output, replaceable in tests to simulate a full disk. */
export interface FileSink {
  /**
   * Writes `n` bytes of `b` at byte position `at`.
   * @throws a Node file-system error (ENOSPC, EIO, …) when the bytes cannot be written.
   */
  write(fd: number, b: Uint8Array, n: number, at: number): void;
}

const NODE_SINK: FileSink = {
  write(fd, b, n, at) {
    let done = 0;
    while (done < n) done += writeSync(fd, b, done, n - done, at + done);
  },
};

/**
 * Starts writing a WAV file in blocks: samples go to a temporary file beside `path`, which
 * `close()` completes and renames into place. Data beyond 4 GiB makes the file RF64.
 * @param path destination.
 * @param options channels, sampleRate (whole Hz), encoding, maxDataBytes.
 * @param sink file output (tests pass one that fails, to check the failure path).
 * @returns the writer.
 * @throws {OrthotoneError} INVALID_ARGUMENT for bad options; WRITE_FAILED when the temporary file
 *   cannot be created.
 * Reference: see the file header (RIFF WAVE, EBU Tech 3306); write-then-rename per IEEE Std
 * 1003.1 `rename()`.
 */
export function createWavWriter(
  path: string,
  options: Pick<WavWriterOptions, 'channels' | 'sampleRate' | 'encoding'> & Partial<WavWriterOptions>,
  sink: FileSink = NODE_SINK,
): WavWriter {
  checkWriterOptions(options as WavWriterOptions);
  const { channels: nc, sampleRate: fs, encoding: enc } = options;
  const maxData = options.maxDataBytes ?? Number.MAX_SAFE_INTEGER;
  const rf64Above = Math.min(RIFF_LIMIT, options.rf64AboveBytes ?? RIFF_LIMIT);
  const width = encodingLayout(enc).bits / 8;
  const target = openAtomicTarget(path);
  const fd = target.fd;
  const headLen = headerBytes(nc, fs, enc, 0, 0).length;
  const block = new Uint8Array(new ArrayBuffer(BLOCK_FRAMES * nc * width + 8));
  const st = { clipped: 0, over: 0, peak: 0 };
  let frames = 0;
  let dataBytes = 0;
  let finished = false;
  const abort = (): void => {
    finished = true;
    target.abort();
  };
  const failWrite = (e: unknown): never => {
    abort();
    if (e instanceof OrthotoneError) throw e;
    throw new OrthotoneError('WRITE_FAILED', describeWriteError(e, path), path);
  };
  try {
    sink.write(fd, headerBytes(nc, fs, enc, 0, 0), headLen, 0);
  } catch (e) {
    failWrite(e);
  }
  return {
    get frames() {
      return frames;
    },
    write(chans, count) {
      if (finished) fail('write after close or abort');
      if (chans.length !== nc) {
        abort();
        throw new OrthotoneError(
          'BUFFER_MISMATCH',
          `${chans.length} channel arrays given to a ${nc}-channel WAV writer: pass ${nc}`,
        );
      }
      const n = count ?? chans[0]!.length;
      if (chans.some((c) => c.length < n)) {
        abort();
        throw new OrthotoneError(
          'BUFFER_MISMATCH',
          `channels have different lengths (${chans.map((c) => c.length).join(', ')}): pass equal lengths`,
        );
      }
      if (dataBytes + n * nc * width > maxData) {
        failWrite(
          new OrthotoneError(
            'WRITE_FAILED',
            `cannot write ${path}: its data would pass ${maxData} bytes: write a shorter file`,
            path,
          ),
        );
      }
      try {
        for (let o = 0; o < n; o += BLOCK_FRAMES) {
          const m = Math.min(BLOCK_FRAMES, n - o);
          const bytes = encodeBlock(chans, o, m, enc, block, st);
          sink.write(fd, block, bytes, headLen + dataBytes);
          dataBytes += bytes;
          frames += m;
        }
      } catch (e) {
        failWrite(e);
      }
    },
    close() {
      if (finished) fail('close after close or abort');
      try {
        if (dataBytes % 2 === 1) sink.write(fd, new Uint8Array(1), 1, headLen + dataBytes);
        // The header's length depends on the encoding only, so it fits the room left at the start.
        sink.write(fd, headerBytes(nc, fs, enc, dataBytes, frames, rf64Above), headLen, 0);
        target.commit();
        finished = true;
      } catch (e) {
        failWrite(e);
      }
      return { bytes: new Uint8Array(0), clippedSamples: st.clipped, overFullScale: st.over, peak: st.peak };
    },
    abort,
  };
}

function checkChannels(channels: Float32Array[]): number {
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
  return n;
}

/**
 * Encodes channels as WAV bytes in memory (for small files; {@link createWavWriter} streams).
 * @param channels one Float32Array per channel (same lengths), full-scale units.
 * @param sampleRate Hz (whole number).
 * @param encoding 'uint8', 'int16', 'int24', 'int32', 'float32' or 'float64'.
 * @returns the bytes and what happened to out-of-range samples.
 * @throws {OrthotoneError} INVALID_ARGUMENT for no channels, a bad sample rate or encoding;
 *   BUFFER_MISMATCH for channels of different lengths.
 * Reference: see the file header (RIFF WAVE).
 */
export function encodeWav(
  channels: Float32Array[],
  sampleRate: number,
  encoding: WavEncoding,
): WavWriteReport {
  requireOneOf('encoding', encoding, WAV_ENCODINGS);
  const n = checkChannels(channels);
  checkWriterOptions({ channels: channels.length, sampleRate, encoding });
  const width = encodingLayout(encoding).bits / 8;
  const dataBytes = n * channels.length * width;
  const head = headerBytes(channels.length, sampleRate, encoding, dataBytes, n);
  // Header, data, and the pad byte an odd-sized data chunk takes (left zero).
  const out = new Uint8Array(head.length + dataBytes + (dataBytes % 2));
  out.set(head, 0);
  const st = { clipped: 0, over: 0, peak: 0 };
  const block = new Uint8Array(new ArrayBuffer(BLOCK_FRAMES * channels.length * width + 8));
  let at = head.length;
  for (let o = 0; o < n; o += BLOCK_FRAMES) {
    const m = Math.min(BLOCK_FRAMES, n - o);
    const bytes = encodeBlock(channels, o, m, encoding, block, st);
    out.set(block.subarray(0, bytes), at);
    at += bytes;
  }
  return {
    bytes: out,
    clippedSamples: st.clipped,
    overFullScale: st.over,
    peak: st.peak,
  };
}

/** Largest number of samples (all channels) decoded into memory at once by default: 1 GiB of floats. */
export const MAX_DECODED_SAMPLES = 1 << 28;

function checkDecodedSize(info: WavInfo, name: string): void {
  if (info.frames * info.channels > MAX_DECODED_SAMPLES) {
    fail(
      `${name} holds ${info.frames} frames of ${info.channels} channel(s), more than the ${MAX_DECODED_SAMPLES} samples read into memory at once: read it in blocks with openWavReader`,
    );
  }
}

/**
 * Decodes WAV bytes in memory (PCM 8/16/24/32-bit integer or 32/64-bit float, plain or extensible,
 * RIFF or RF64) to full-scale units.
 * @param bytes the whole file.
 * @param options see {@link WavReadOptions}.
 * @throws {OrthotoneError} INVALID_ARGUMENT when the bytes are not a readable WAV file (see
 *   {@link parseWavHeader}) or hold more than {@link MAX_DECODED_SAMPLES} samples.
 * Reference: see the file header.
 */
export function decodeWav(bytes: Uint8Array, options: Partial<WavReadOptions> = {}): WavData {
  const info = parseWavHeader(bytes, bytes.length, 'the WAV data', options);
  checkDecodedSize(info, 'the WAV data');
  const channels = Array.from({ length: info.channels }, () => new Float32Array(info.frames));
  const scratch = new Uint8Array(new ArrayBuffer(BLOCK_FRAMES * info.blockAlign + 8));
  for (let f = 0; f < info.frames; f += BLOCK_FRAMES) {
    const m = Math.min(BLOCK_FRAMES, info.frames - f);
    const from = info.dataOffset + f * info.blockAlign;
    scratch.set(bytes.subarray(from, from + m * info.blockAlign));
    decodeBlock(scratch, info, m, channels, f);
  }
  return { sampleRate: info.sampleRate, channels, bitDepth: info.bitDepth };
}

/**
 * Writes a WAV file atomically (temporary file, then rename), in blocks.
 * @param path file to write.
 * @returns the write report (see {@link encodeWav}; `bytes` empty).
 * @throws {OrthotoneError} as {@link encodeWav}; WRITE_FAILED when the file cannot be written (an
 *   old file at `path` is kept).
 */
export async function writeWavFile(
  path: string,
  channels: Float32Array[],
  sampleRate: number,
  encoding: WavEncoding,
): Promise<WavWriteReport> {
  const n = checkChannels(channels);
  const w = createWavWriter(path, { channels: channels.length, sampleRate, encoding });
  w.write(channels, n);
  return w.close();
}

/**
 * Reads a whole WAV file into memory, in blocks (no copy of the file's bytes is held).
 * @throws {OrthotoneError} INVALID_ARGUMENT when it is not a readable WAV file, not a regular file,
 *   or holds more than {@link MAX_DECODED_SAMPLES} samples; a Node file-system error when it cannot
 *   be opened.
 */
export async function readWavFile(path: string, options: Partial<WavReadOptions> = {}): Promise<WavData> {
  const r = openWavReader(path, options);
  try {
    checkDecodedSize(r.info, path);
    const channels = Array.from({ length: r.info.channels }, () => new Float32Array(r.info.frames));
    r.read(channels, r.info.frames);
    return { sampleRate: r.info.sampleRate, channels, bitDepth: r.info.bitDepth };
  } finally {
    r.close();
  }
}

/**
 * Writes an I/Q pair as a stereo WAV file: left = I, right = Q (atomically, see {@link writeWavFile}).
 * @throws {OrthotoneError} BUFFER_MISMATCH when I and Q differ in length; as {@link writeWavFile}.
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
 * @throws {OrthotoneError} INVALID_ARGUMENT when the file does not have exactly two channels; as
 *   {@link readWavFile}.
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
      `${path} has ${d.channels.length} channel${d.channels.length === 1 ? '' : 's'}: an I/Q file has exactly two (left I, right Q)`,
    );
  }
  return { i: d.channels[0]!, q: d.channels[1]!, sampleRate: d.sampleRate };
}

/**
 * Mixes any WAV channels down to one mono signal (mean of the channels).
 * @returns the mono samples, full-scale units (the channel itself, not a copy, when there is one).
 * @throws never for data from {@link readWavFile} (at least one channel); an object with no
 *   channels fails with a TypeError.
 */
export function toMono(d: WavData): Float32Array {
  if (d.channels.length === 1) return d.channels[0]!;
  const n = d.channels[0]!.length;
  const out = new Float32Array(n);
  for (const c of d.channels) for (let k = 0; k < n; k++) out[k]! += c[k]! / d.channels.length;
  return out;
}
