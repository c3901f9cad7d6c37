/**
 * The bytes the WAV writers put on disk, read field by field here against the format's own
 * layout, not through the module's reader: RIFF WAVE (Microsoft/IBM, "Multimedia Programming
 * Interface and Data Specifications 1.0", 1991: RIFF header, `fmt ` chunk with wFormatTag,
 * nChannels, nSamplesPerSec, nAvgBytesPerSec, nBlockAlign, wBitsPerSample; a `fact` chunk with the
 * sample count for non-PCM data; chunks padded to an even length) and RF64 (EBU Tech 3306: "RF64"
 * with size −1, a `ds64` chunk holding the 64-bit RIFF size, data size and sample count, data
 * size −1). Sample codes from known amplitudes: code = round(x·2^(b−1)), limited to the b-bit
 * range; 8-bit offset binary (128 = 0).
 */
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { createWavWriter, encodeWav, swapBytes, type WavEncoding, writeWavFile } from '../../src/node/wav.js';

const dir = mkdtempSync(join(tmpdir(), 'orthotone-wav-layout-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

interface Chunk {
  id: string;
  size: number;
  at: number;
}

/** The RIFF/RF64 header and the list of chunks, walked by hand. */
function chunks(b: Uint8Array): { form: string; size: number; wave: string; list: Chunk[] } {
  const dv = new DataView(b.buffer, b.byteOffset, b.byteLength);
  const tag = (o: number) => String.fromCharCode(...b.subarray(o, o + 4));
  const list: Chunk[] = [];
  for (let o = 12; o + 8 <= b.length; ) {
    const size = dv.getUint32(o + 4, true);
    list.push({ id: tag(o), size, at: o + 8 });
    if (size === 0xffffffff) break; // RF64 data chunk: its size is in ds64
    o += 8 + size + (size % 2);
  }
  return { form: tag(0), size: dv.getUint32(4, true), wave: tag(8), list };
}

const layouts: [WavEncoding, number, number, boolean][] = [
  // encoding, wFormatTag, wBitsPerSample, float
  ['uint8', 1, 8, false],
  ['int16', 1, 16, false],
  ['int24', 1, 24, false],
  ['int32', 1, 32, false],
  ['float32', 3, 32, true],
  ['float64', 3, 64, true],
];

describe('the RIFF WAVE header written for each encoding', () => {
  for (const [enc, formatTag, bits, float] of layouts) {
    for (const [nc, frames] of [
      [1, 3],
      [3, 5],
    ] as const) {
      it(`${enc}, ${nc} channel(s), ${frames} frames: every field as the layout defines it`, async () => {
        const chans = Array.from({ length: nc }, (_, c) =>
          Float32Array.from({ length: frames }, (_, k) => (c - k) / 8),
        );
        const p = join(dir, `h-${enc}-${nc}.wav`);
        await writeWavFile(p, chans, 44_100, enc);
        const b = new Uint8Array(readFileSync(p));
        const dv = new DataView(b.buffer, b.byteOffset, b.byteLength);
        const h = chunks(b);
        expect([h.form, h.wave]).toEqual(['RIFF', 'WAVE']);
        // The RIFF size counts everything after its own 8 bytes.
        expect(h.size).toBe(b.length - 8);
        expect(h.list.map((c) => c.id)).toEqual(
          float ? ['JUNK', 'fmt ', 'fact', 'data'] : ['JUNK', 'fmt ', 'data'],
        );
        // A JUNK chunk of 28 bytes: room for a ds64 chunk (EBU Tech 3306) should the file grow past 4 GiB.
        expect(h.list[0]).toEqual({ id: 'JUNK', size: 28, at: 20 });
        const fmt = h.list[1]!;
        // Float formats carry cbSize (0): an 18-byte WAVEFORMATEX; PCM the 16-byte PCMWAVEFORMAT.
        expect(fmt.size).toBe(float ? 18 : 16);
        const align = (nc * bits) / 8;
        expect({
          tag: dv.getUint16(fmt.at, true),
          channels: dv.getUint16(fmt.at + 2, true),
          rate: dv.getUint32(fmt.at + 4, true),
          bytesPerSecond: dv.getUint32(fmt.at + 8, true),
          align: dv.getUint16(fmt.at + 12, true),
          bits: dv.getUint16(fmt.at + 14, true),
        }).toEqual({
          tag: formatTag,
          channels: nc,
          rate: 44_100,
          bytesPerSecond: 44_100 * align,
          align,
          bits,
        });
        if (float) {
          expect(dv.getUint16(fmt.at + 16, true)).toBe(0);
          const fact = h.list[2]!;
          expect(fact.size).toBe(4);
          expect(dv.getUint32(fact.at, true)).toBe(frames);
        }
        const data = h.list.at(-1)!;
        expect(data.id).toBe('data');
        expect(data.size).toBe(frames * align);
        // An odd-sized data chunk is followed by one zero pad byte, counted in the RIFF size.
        expect(b.length).toBe(data.at + data.size + (data.size % 2));
        if (data.size % 2) expect(b[b.length - 1]).toBe(0);
        // encodeWav makes the same bytes in memory.
        expect(Buffer.compare(Buffer.from(encodeWav(chans, 44_100, enc).bytes), Buffer.from(b))).toBe(0);
      });
    }
  }
});

describe('sample codes for known amplitudes', () => {
  const x = Float32Array.from([0, 0.5, -0.5, -1, 1, 0.25, 2 ** -20]);
  const dataOf = (enc: WavEncoding, chans: Float32Array[] = [x]) => {
    const b = encodeWav(chans, 8000, enc).bytes;
    const data = chunks(b).list.at(-1)!;
    return { b, dv: new DataView(b.buffer, b.byteOffset + data.at, data.size), data };
  };
  it('8-bit: offset binary, 128 = 0, +1.0 limited to 255', () => {
    const { b, data } = dataOf('uint8');
    expect(Array.from(b.subarray(data.at, data.at + 7))).toEqual([128, 192, 64, 0, 255, 160, 128]);
  });
  it('16-bit: round(x·32768), little-endian, +1.0 limited to 32767', () => {
    const { dv } = dataOf('int16');
    expect(Array.from({ length: 7 }, (_, k) => dv.getInt16(2 * k, true))).toEqual([
      0, 16384, -16384, -32768, 32767, 8192, 0,
    ]);
  });
  it('24-bit: three little-endian bytes of round(x·2^23)', () => {
    const { b, data } = dataOf('int24');
    expect(Array.from(b.subarray(data.at, data.at + 21))).toEqual([
      0x00, 0x00, 0x00, 0x00, 0x00, 0x40, 0x00, 0x00, 0xc0, 0x00, 0x00, 0x80, 0xff, 0xff, 0x7f, 0x00, 0x00,
      0x20, 0x08, 0x00, 0x00,
    ]);
  });
  it('32-bit: round(x·2^31), +1.0 limited to 2^31 − 1', () => {
    const { dv } = dataOf('int32');
    expect(Array.from({ length: 7 }, (_, k) => dv.getInt32(4 * k, true))).toEqual([
      0,
      2 ** 30,
      -(2 ** 30),
      -(2 ** 31),
      2 ** 31 - 1,
      2 ** 29,
      2 ** 11,
    ]);
  });
  it('float: the values themselves, IEEE 754 little-endian', () => {
    const f = dataOf('float32').dv;
    const d = dataOf('float64').dv;
    for (let k = 0; k < x.length; k++) {
      expect(f.getFloat32(4 * k, true)).toBe(x[k]);
      expect(d.getFloat64(8 * k, true)).toBe(x[k]);
    }
  });
  it('channels interleaved frame by frame: L0 R0 L1 R1 …', () => {
    const l = Float32Array.from([0.5, 0.25]);
    const r = Float32Array.from([-0.5, -0.25]);
    const { dv } = dataOf('int16', [l, r]);
    expect(Array.from({ length: 4 }, (_, k) => dv.getInt16(2 * k, true))).toEqual([
      16384, -16384, 8192, -8192,
    ]);
  });
});

describe('RF64 (EBU Tech 3306) once the RIFF size would pass the limit', () => {
  for (const [enc, float] of [
    ['int16', false],
    ['float32', true],
  ] as const) {
    it(`${enc}: "RF64" and size −1, a ds64 chunk with the 64-bit sizes, data size −1`, () => {
      const frames = 300;
      const p = join(dir, `rf64-${enc}.wav`);
      const w = createWavWriter(p, { channels: 2, sampleRate: 48_000, encoding: enc, rf64AboveBytes: 1000 });
      const s = Float32Array.from({ length: frames }, (_, k) => Math.sin(k / 3) / 2);
      w.write([s, s]);
      w.close();
      const b = new Uint8Array(readFileSync(p));
      const dv = new DataView(b.buffer, b.byteOffset, b.byteLength);
      const h = chunks(b);
      expect([h.form, h.size, h.wave]).toEqual(['RF64', 0xffffffff, 'WAVE']);
      expect(h.list.map((c) => c.id)).toEqual(
        float ? ['ds64', 'fmt ', 'fact', 'data'] : ['ds64', 'fmt ', 'data'],
      );
      const ds64 = h.list[0]!;
      const dataBytes = frames * 2 * (float ? 4 : 2);
      // ds64: riffSize, dataSize, sampleCount (64-bit each), then a table of 0 entries.
      expect(ds64.size).toBe(28);
      expect(dv.getBigUint64(ds64.at, true)).toBe(BigInt(b.length - 8));
      expect(dv.getBigUint64(ds64.at + 8, true)).toBe(BigInt(dataBytes));
      expect(dv.getBigUint64(ds64.at + 16, true)).toBe(BigInt(frames));
      expect(dv.getUint32(ds64.at + 24, true)).toBe(0);
      const data = h.list.at(-1)!;
      expect(data.size).toBe(0xffffffff);
      expect(b.length - data.at).toBe(dataBytes);
      // fact's 32-bit sample count also gives way to ds64's.
      if (float) expect(dv.getUint32(h.list[2]!.at, true)).toBe(0xffffffff);
    });
  }
  it('a file whose RIFF size equals the limit stays RIFF; one byte more makes it RF64', () => {
    // uint8 mono, 10 frames: 48 + 24 + 8 header bytes after the first 8, plus 10 data bytes = 82.
    const riffSizeFor = (frames: number) => 12 + 36 + 8 + 16 + 8 + frames + (frames % 2) - 8;
    const make = (limit: number) => {
      const p = join(dir, `edge-${limit}.wav`);
      const w = createWavWriter(p, {
        channels: 1,
        sampleRate: 8000,
        encoding: 'uint8',
        rf64AboveBytes: limit,
      });
      w.write([new Float32Array(10)]);
      w.close();
      return chunks(new Uint8Array(readFileSync(p)));
    };
    expect(riffSizeFor(10)).toBe(82);
    expect(make(82)).toMatchObject({ form: 'RIFF', size: 82 });
    expect(make(81)).toMatchObject({ form: 'RF64', size: 0xffffffff });
  });
});

describe('swapBytes (the big-endian host path)', () => {
  it('reverses each whole word and leaves a trailing part-word', () => {
    const b = (...v: number[]) => Uint8Array.from(v);
    const run = (x: Uint8Array, w: number, n = x.length) => {
      swapBytes(x, w, n);
      return Array.from(x);
    };
    expect(run(b(1, 2, 3, 4, 5), 1)).toEqual([1, 2, 3, 4, 5]);
    expect(run(b(1, 2, 3, 4, 5), 2)).toEqual([2, 1, 4, 3, 5]);
    expect(run(b(1, 2, 3, 4, 5, 6, 7), 3)).toEqual([3, 2, 1, 6, 5, 4, 7]);
    expect(run(b(1, 2, 3, 4, 5, 6, 7, 8, 9), 4)).toEqual([4, 3, 2, 1, 8, 7, 6, 5, 9]);
    expect(run(b(1, 2, 3, 4, 5, 6, 7, 8), 8)).toEqual([8, 7, 6, 5, 4, 3, 2, 1]);
    // Only the first n bytes.
    expect(run(b(1, 2, 3, 4, 5, 6), 2, 4)).toEqual([2, 1, 4, 3, 5, 6]);
  });
  it('turns a little-endian IEEE 754 double into the big-endian one and back', () => {
    const le = new Uint8Array(16);
    const dv = new DataView(le.buffer);
    dv.setFloat64(0, Math.PI, true);
    dv.setFloat64(8, -1 / 3, true);
    swapBytes(le, 8, 16);
    expect([dv.getFloat64(0, false), dv.getFloat64(8, false)]).toEqual([Math.PI, -1 / 3]);
    swapBytes(le, 8, 16);
    expect([dv.getFloat64(0, true), dv.getFloat64(8, true)]).toEqual([Math.PI, -1 / 3]);
  });
});
