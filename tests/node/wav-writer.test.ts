/**
 * The WAV writers (createWavWriter, writeWavFile, encodeWav, writeIqWavFile): options refused with
 * a message that names the value and the fix, misuse of a writer, the data-size limit, a disk that
 * refuses bytes (a stand-in sink, and a real 64 KiB tmpfs when run as root), and the counts of
 * limited samples for known values. Integer coding: round(x·2^(b−1)) limited to the b-bit range,
 * so +1.0 lands one LSB above the top code and is limited within one LSB without being counted
 * (the file header of src/node/wav.ts; AES17 full scale at ±1.0).
 */
import { mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import {
  createWavWriter,
  decodeWav,
  encodeWav,
  readIqWavFile,
  readWavFile,
  toMono,
  type WavEncoding,
  writeIqWavFile,
  writeWavFile,
} from '../../src/node/wav.js';
import { expectOrthotoneError } from '../support/errors.js';
import { canListDescriptors, descriptorsUnder, useSmallDisk } from './disk.js';

const root = mkdtempSync(join(tmpdir(), 'orthotone-wav-writer-'));
afterAll(() => rmSync(root, { recursive: true, force: true }));
let n = 0;
/** A fresh empty folder per test, so leftovers can be listed. */
const folder = () => {
  const d = join(root, `t${n++}`);
  mkdirSync(d);
  return d;
};
const f32 = (...v: number[]) => Float32Array.from(v);
const eio = () => Object.assign(new Error('EIO: i/o error, write'), { code: 'EIO' });

describe('options: refused before any file is made, naming the value and the fix', () => {
  it('encoding, channels (1 to 64) and sample rate (whole Hz that fit the 32-bit field)', () => {
    const d = folder();
    const p = join(d, 'x.wav');
    const bad: [object, RegExp][] = [
      [{ encoding: 'int12' }, /^encoding "int12" is not recognised: use one of 'uint8', 'int16'/],
      [{ channels: 0 }, /^channels 0 must be a whole number from 1 to 64$/],
      [{ channels: 65 }, /^channels 65 must be a whole number from 1 to 64$/],
      [{ channels: 1.5 }, /^channels 1\.5 must be a whole number from 1 to 64$/],
      [{ sampleRate: 0 }, /^sampleRate 0 must be a whole number of Hz for a WAV file$/],
      [{ sampleRate: 8000.5 }, /^sampleRate 8000\.5 must be a whole number of Hz for a WAV file$/],
      [{ sampleRate: 4_294_967_296 }, /^sampleRate 4294967296 must be a whole number of Hz/],
    ];
    for (const [o, re] of bad) {
      const options = { channels: 1, sampleRate: 8000, encoding: 'int16' as WavEncoding, ...o };
      expectOrthotoneError(() => createWavWriter(p, options), 'INVALID_ARGUMENT', re);
    }
    expect(readdirSync(d)).toEqual([]);
  });
  it('the edges of each range are accepted and written into the header', async () => {
    const d = folder();
    for (const [channels, sampleRate] of [
      [1, 1],
      [64, 8000],
      [1, 4_294_967_295],
    ] as const) {
      const p = join(d, `${channels}-${sampleRate}.wav`);
      const w = createWavWriter(p, { channels, sampleRate, encoding: 'uint8' });
      w.write(Array.from({ length: channels }, () => f32(0.5, -0.5)));
      w.close();
      const back = await readWavFile(p);
      expect([back.channels.length, back.sampleRate]).toEqual([channels, sampleRate]);
      expect(Array.from(back.channels[channels - 1]!)).toEqual([0.5, -0.5]);
    }
  });
  it('encodeWav and writeWavFile refuse no channels, or channels of different lengths', async () => {
    expectOrthotoneError(
      () => encodeWav([], 8000, 'int16'),
      'INVALID_ARGUMENT',
      /^give at least one channel to write$/,
    );
    expectOrthotoneError(
      () => encodeWav([new Float32Array(3), new Float32Array(4)], 8000, 'int16'),
      'BUFFER_MISMATCH',
      /^channels have different lengths \(3, 4\): pass equal lengths$/,
    );
    const d = folder();
    await expect(writeWavFile(join(d, 'x.wav'), [], 8000, 'int16')).rejects.toThrow(
      /^give at least one channel to write$/,
    );
    expect(readdirSync(d)).toEqual([]);
  });
});

describe('a writer used wrongly', () => {
  it('a wrong channel count or short arrays: BUFFER_MISMATCH, and the writer is given up', () => {
    const d = folder();
    const w = createWavWriter(join(d, 'x.wav'), { channels: 2, sampleRate: 8000, encoding: 'int16' });
    expectOrthotoneError(
      () => w.write([f32(1, 2, 3)]),
      'BUFFER_MISMATCH',
      /^1 channel arrays given to a 2-channel WAV writer: pass 2$/,
    );
    expect(readdirSync(d)).toEqual([]);
    expectOrthotoneError(() => w.write([f32(0), f32(0)]), 'INVALID_ARGUMENT', /^write after close or abort$/);
    const w2 = createWavWriter(join(d, 'y.wav'), { channels: 2, sampleRate: 8000, encoding: 'int16' });
    // frames defaults to the first array's length; a count within both lengths is fine.
    w2.write([f32(0.5, 0.5, 0.5), f32(0.25, 0.25)], 2);
    expect(w2.frames).toBe(2);
    expectOrthotoneError(
      () => w2.write([f32(0.5, 0.5, 0.5), f32(0.25, 0.25)]),
      'BUFFER_MISMATCH',
      /^channels have different lengths \(3, 2\): pass equal lengths$/,
    );
    expect(readdirSync(d)).toEqual([]);
  });
  it('write or close after close or abort is refused; abort after close keeps the file', async () => {
    const d = folder();
    const p = join(d, 'x.wav');
    const w = createWavWriter(p, { channels: 1, sampleRate: 8000, encoding: 'int16' });
    w.write([f32(0.5, -0.5)]);
    w.write([f32(0.25)]);
    expect(w.frames).toBe(3);
    w.close();
    expectOrthotoneError(() => w.write([f32(0)]), 'INVALID_ARGUMENT', /^write after close or abort$/);
    expectOrthotoneError(() => w.close(), 'INVALID_ARGUMENT', /^close after close or abort$/);
    w.abort();
    expect(Array.from((await readWavFile(p)).channels[0]!)).toEqual([0.5, -0.5, 0.25]);
    const a = createWavWriter(join(d, 'y.wav'), { channels: 1, sampleRate: 8000, encoding: 'int16' });
    a.abort();
    expectOrthotoneError(() => a.close(), 'INVALID_ARGUMENT', /^close after close or abort$/);
    expect(readdirSync(d)).toEqual(['x.wav']);
  });
  it('maxDataBytes: data up to the limit is written, a byte beyond it refused before writing', async () => {
    const d = folder();
    const p = join(d, 'x.wav');
    writeFileSync(p, 'old');
    // int16 stereo: 4 bytes a frame; 40 bytes = 10 frames.
    const w = createWavWriter(p, { channels: 2, sampleRate: 8000, encoding: 'int16', maxDataBytes: 40 });
    w.write([new Float32Array(6), new Float32Array(6)]);
    w.write([new Float32Array(4), new Float32Array(4)]);
    expectOrthotoneError(
      () => w.write([new Float32Array(1), new Float32Array(1)]),
      'WRITE_FAILED',
      new RegExp(`^cannot write ${p}: its data would pass 40 bytes: write a shorter file$`),
    );
    expect(readFileSync(p, 'utf8')).toBe('old');
    expect(readdirSync(d)).toEqual(['x.wav']);
    // One write of 11 frames (44 bytes) is refused whole.
    const big = createWavWriter(p, { channels: 2, sampleRate: 8000, encoding: 'int16', maxDataBytes: 40 });
    expectOrthotoneError(
      () => big.write([new Float32Array(11), new Float32Array(11)]),
      'WRITE_FAILED',
      /its data would pass 40 bytes/,
    );
    expect(readdirSync(d)).toEqual(['x.wav']);
    const ok = createWavWriter(p, { channels: 2, sampleRate: 8000, encoding: 'int16', maxDataBytes: 40 });
    ok.write([new Float32Array(10), new Float32Array(10)]);
    ok.close();
    expect((await readWavFile(p)).channels[0]!.length).toBe(10);
  });
});

describe('a disk that refuses bytes', () => {
  it('at the first write (the header): createWavWriter fails, nothing left', () => {
    const d = folder();
    const refuse = {
      write() {
        throw eio();
      },
    };
    expectOrthotoneError(
      () => createWavWriter(join(d, 'x.wav'), { channels: 1, sampleRate: 8000, encoding: 'int16' }, refuse),
      'WRITE_FAILED',
      new RegExp(`^cannot write ${join(d, 'x.wav')}: EIO: i/o error, write$`),
    );
    expect(readdirSync(d)).toEqual([]);
  });
  it('while writing samples: write() itself fails; at close: close() fails; the old file is kept', () => {
    const d = folder();
    const p = join(d, 'x.wav');
    writeFileSync(p, 'old');
    let calls = 0;
    const secondFails = {
      write() {
        if (++calls === 2) throw eio();
      },
    };
    const w = createWavWriter(p, { channels: 1, sampleRate: 8000, encoding: 'int16' }, secondFails);
    expectOrthotoneError(() => w.write([f32(0.5)]), 'WRITE_FAILED', /EIO: i\/o error/);
    expect(readdirSync(d)).toEqual(['x.wav']);
    calls = 0;
    const thirdFails = {
      write() {
        if (++calls === 3) throw eio();
      },
    };
    const w2 = createWavWriter(p, { channels: 1, sampleRate: 8000, encoding: 'int16' }, thirdFails);
    w2.write([f32(0.5, 0.25)]);
    expectOrthotoneError(() => w2.close(), 'WRITE_FAILED', /EIO: i\/o error/);
    expect(readFileSync(p, 'utf8')).toBe('old');
    expect(readdirSync(d)).toEqual(['x.wav']);
  });

  describe('a real 64 KiB tmpfs (needs root)', () => {
    /** The small disk's folder, or the test is skipped (not root; fails under .ci/run). */
    const smallDisk = useSmallDisk(() => root);
    it('a WAV larger than the disk: write() fails "disk is full", the old file kept, nothing left open', async (ctx) => {
      const mnt = smallDisk(ctx);
      const p = join(mnt, 'x.wav');
      await writeWavFile(p, [f32(0.5, -0.5)], 8000, 'int16');
      const w = createWavWriter(p, { channels: 2, sampleRate: 48_000, encoding: 'float32' });
      const s = new Float32Array(12_000).fill(0.25); // 96 000 bytes of data
      expectOrthotoneError(
        () => w.write([s, s]),
        'WRITE_FAILED',
        new RegExp(`^cannot write ${p}: the disk is full \\(the previous file, if any, is kept\\)$`),
      );
      expect(readdirSync(mnt)).toEqual(['x.wav']);
      expect(Array.from((await readWavFile(p)).channels[0]!)).toEqual([0.5, -0.5]);
      if (canListDescriptors) expect(descriptorsUnder(mnt)).toEqual([]);
    });
  });
});

describe('what writing did to the samples', () => {
  // 1.5, −1.5 and NaN cannot be stored as integers (NaN is stored as 0); +1.0 and −1.0 can, within one LSB.
  const x = f32(0.5, 1, -1, 1.5, -1.5, Number.NaN, 0.25);
  for (const enc of ['uint8', 'int16', 'int24', 'int32'] as const) {
    it(`${enc}: 3 samples limited and counted, 2 beyond full scale, peak 1.5`, () => {
      const r = encodeWav([x], 8000, enc);
      expect([r.clippedSamples, r.overFullScale, r.peak]).toEqual([3, 2, 1.5]);
      const back = decodeWav(r.bytes).channels[0]!;
      expect([back[0], back[2], back[4], back[5], back[6]]).toEqual([0.5, -1, -1, 0, 0.25]);
      // In range only: nothing counted.
      const clean = encodeWav([f32(0.5, 1, -1, 0), f32(0, 0.25, -0.25, 1)], 8000, enc);
      expect([clean.clippedSamples, clean.overFullScale, clean.peak]).toEqual([0, 0, 1]);
    });
  }
  it('float files keep values beyond full scale: counted as over, none limited', () => {
    const r = encodeWav([f32(0.5, 1.5, -2)], 8000, 'float32');
    expect([r.clippedSamples, r.overFullScale, r.peak]).toEqual([0, 2, 2]);
  });
  it('only the frames written count, across blocks of 4096 frames', () => {
    const d = folder();
    const w = createWavWriter(join(d, 'x.wav'), { channels: 1, sampleRate: 8000, encoding: 'int16' });
    // Frame 4096 (the first of the second block) is 1.25; frame 9000 (beyond the count) is 3.
    const s = new Float32Array(10_000).fill(0.5);
    s[4096] = 1.25;
    s[9000] = 3;
    w.write([s], 8000);
    const r = w.close();
    expect([r.clippedSamples, r.overFullScale, r.peak]).toEqual([1, 1, 1.25]);
    const e = encodeWav([s.subarray(0, 8000)], 8000, 'int16');
    expect([e.clippedSamples, e.overFullScale, e.peak]).toEqual([1, 1, 1.25]);
  });
});

describe('I/Q files and mono', () => {
  it('writeIqWavFile refuses I and Q of different lengths, naming both', async () => {
    const d = folder();
    const e = await writeIqWavFile(join(d, 'iq.wav'), f32(1, 2, 3), f32(1, 2, 3, 4), 8000).catch((x) => x);
    expect(e).toMatchObject({
      code: 'BUFFER_MISMATCH',
      message: 'I has 3 samples but Q has 4: pass equal lengths',
    });
    expect(readdirSync(d)).toEqual([]);
  });
  it('writeIqWavFile writes 32-bit IEEE float (format 3) unless told otherwise, left I and right Q', async () => {
    const d = folder();
    const p = join(d, 'iq.wav');
    const i = f32(0.1, -0.2, 1.5);
    const q = f32(-0.3, 0.4, -1.5);
    const r = await writeIqWavFile(p, i, q, 96_000);
    expect([r.overFullScale, r.clippedSamples]).toEqual([2, 0]);
    const b = readFileSync(p);
    // fmt chunk at byte 48 (after RIFF header and the 36-byte JUNK chunk): format tag, bits per sample.
    expect([b.toString('latin1', 48, 52), b.readUInt16LE(56), b.readUInt16LE(70)]).toEqual(['fmt ', 3, 32]);
    const back = await readIqWavFile(p);
    expect([Array.from(back.i), Array.from(back.q), back.sampleRate]).toEqual([
      Array.from(i),
      Array.from(q),
      96_000,
    ]);
  });
  it('readIqWavFile refuses a file of three channels, naming the count', async () => {
    const d = folder();
    const p = join(d, 'three.wav');
    await writeWavFile(p, [f32(0), f32(0), f32(0)], 8000, 'int16');
    const e = await readIqWavFile(p).catch((x) => x);
    expect(e).toMatchObject({
      code: 'INVALID_ARGUMENT',
      message: `${p} has 3 channels: an I/Q file has exactly two (left I, right Q)`,
    });
  });
  it('toMono gives the one channel itself, not a copy', () => {
    const c = f32(0.5, -0.5);
    expect(toMono({ sampleRate: 8000, channels: [c], bitDepth: '32f' })).toBe(c);
  });
});
