/**
 * The block WAV reader and writer (src/node/wav.ts): headers built here by hand from the RIFF WAVE
 * layout (Microsoft/IBM Multimedia Programming Interface and Data Specifications 1.0, 1991;
 * WAVEFORMATEXTENSIBLE; EBU Tech 3306 for RF64), so the reader is checked against the format, not
 * against its own writer; bad headers refused with a message; writes atomic on a failing disk.
 */
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { createWavWriter, decodeWav, openWavReader, readWavFile, writeWavFile } from '../../src/node/wav.js';

const dir = mkdtempSync(join(tmpdir(), 'orthotone-wavs-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

interface Layout {
  tag: number;
  channels: number;
  rate: number;
  bits: number;
  extensible?: boolean;
  /** Chunks placed between fmt and data: [id, payload]. */
  extra?: [string, Uint8Array][];
  /** Overrides the data chunk's size field. */
  claim?: number;
  rf64?: boolean;
}

/** A WAV file laid out by hand, little-endian, chunks padded to even length. */
function wavBytes(l: Layout, data: Uint8Array): Uint8Array {
  const parts: Uint8Array[] = [];
  const chunk = (id: string, payload: Uint8Array, size = payload.length): void => {
    const h = new Uint8Array(8);
    for (let k = 0; k < 4; k++) h[k] = id.charCodeAt(k);
    new DataView(h.buffer).setUint32(4, size, true);
    parts.push(h, payload);
    if (payload.length % 2) parts.push(new Uint8Array(1));
  };
  if (l.rf64) {
    const ds = new Uint8Array(28);
    const dv = new DataView(ds.buffer);
    dv.setBigUint64(8, BigInt(data.length), true);
    dv.setBigUint64(16, BigInt(data.length / ((l.bits / 8) * l.channels)), true);
    chunk('ds64', ds);
  }
  const fmt = new Uint8Array(l.extensible ? 40 : 16);
  const f = new DataView(fmt.buffer);
  f.setUint16(0, l.extensible ? 0xfffe : l.tag, true);
  f.setUint16(2, l.channels, true);
  f.setUint32(4, l.rate, true);
  f.setUint32(8, (l.rate * l.channels * l.bits) / 8, true);
  f.setUint16(12, (l.channels * l.bits) / 8, true);
  f.setUint16(14, l.bits, true);
  if (l.extensible) {
    f.setUint16(16, 22, true);
    f.setUint16(18, l.bits, true);
    f.setUint32(20, 3, true); // channel mask: front left, front right
    f.setUint16(24, l.tag, true); // sub-format GUID begins with the format tag
    fmt.set([0x00, 0x00, 0x00, 0x00, 0x10, 0x00, 0x80, 0x00, 0x00, 0xaa, 0x00, 0x38, 0x9b, 0x71], 26);
  }
  chunk('fmt ', fmt);
  for (const [id, p] of l.extra ?? []) chunk(id, p);
  chunk('data', data, l.rf64 ? 0xffffffff : (l.claim ?? data.length));
  const body = parts.reduce((n, p) => n + p.length, 0);
  const head = new Uint8Array(12);
  const hd = new DataView(head.buffer);
  'RIFF'.split('').forEach((_c, k) => {
    head[k] = (l.rf64 ? 'RF64' : 'RIFF').charCodeAt(k);
  });
  hd.setUint32(4, l.rf64 ? 0xffffffff : 4 + body, true);
  'WAVE'.split('').forEach((c, k) => {
    head[8 + k] = c.charCodeAt(0);
  });
  const out = new Uint8Array(12 + body);
  out.set(head, 0);
  let o = 12;
  for (const p of parts) {
    out.set(p, o);
    o += p.length;
  }
  return out;
}

/** Stereo frames (L, R) stored as each format's integers/floats, little-endian. */
function samples(bits: number, float: boolean, frames: [number, number][]): Uint8Array {
  const w = bits / 8;
  const b = new Uint8Array(frames.length * 2 * w);
  const dv = new DataView(b.buffer);
  frames.flat().forEach((v, k) => {
    const o = k * w;
    if (float) {
      if (bits === 32) dv.setFloat32(o, v, true);
      else dv.setFloat64(o, v, true);
    } else if (bits === 8) dv.setUint8(o, v);
    else if (bits === 16) dv.setInt16(o, v, true);
    else if (bits === 24) {
      dv.setUint8(o, v & 0xff);
      dv.setUint8(o + 1, (v >> 8) & 0xff);
      dv.setInt8(o + 2, v >> 16);
    } else dv.setInt32(o, v, true);
  });
  return b;
}

describe('reading every PCM and float layout', () => {
  // Each case: stored codes and the full-scale values they mean (code / 2^(b−1); 8-bit: (code − 128)/128).
  const cases: [string, number, boolean, [number, number][], [number, number][]][] = [
    [
      '8-bit unsigned',
      8,
      false,
      [
        [128, 255],
        [0, 192],
      ],
      [
        [0, 127 / 128],
        [-1, 0.5],
      ],
    ],
    [
      '16-bit',
      16,
      false,
      [
        [16384, -32768],
        [-1, 32767],
      ],
      [
        [0.5, -1],
        [-1 / 32768, 32767 / 32768],
      ],
    ],
    [
      '24-bit',
      24,
      false,
      [
        [4194304, -8388608],
        [-1, 8388607],
      ],
      [
        [0.5, -1],
        [-1 / 8388608, 8388607 / 8388608],
      ],
    ],
    [
      '32-bit',
      32,
      false,
      [
        [1073741824, -2147483648],
        [-1, 2147483647],
      ],
      [
        [0.5, -1],
        [-1 / 2 ** 31, 1 - 2 ** -31],
      ],
    ],
    [
      '32-bit float',
      32,
      true,
      [
        [0.25, -0.75],
        [1.5, -2],
      ],
      [
        [0.25, -0.75],
        [1.5, -2],
      ],
    ],
    [
      '64-bit float',
      64,
      true,
      [
        [0.25, -0.75],
        [2 ** -20, -1],
      ],
      [
        [0.25, -0.75],
        [2 ** -20, -1],
      ],
    ],
  ];
  for (const [name, bits, float, codes, want] of cases) {
    for (const extensible of [false, true]) {
      it(`${name}${extensible ? ', extensible' : ''}, after an odd-sized chunk and a LIST chunk`, () => {
        const extra: [string, Uint8Array][] = [
          ['odd ', new Uint8Array([1, 2, 3])],
          ['LIST', new TextEncoder().encode('INFOISFT\x05\x00\x00\x00test\x00')],
        ];
        const bytes = wavBytes(
          { tag: float ? 3 : 1, channels: 2, rate: 44100, bits, extensible, extra },
          samples(bits, float, codes),
        );
        const d = decodeWav(bytes);
        expect(d.sampleRate).toBe(44100);
        expect(d.channels).toHaveLength(2);
        want.forEach(([l, r], k) => {
          expect(d.channels[0]![k]).toBe(Math.fround(l));
          expect(d.channels[1]![k]).toBe(Math.fround(r));
        });
        const p = join(dir, `read-${bits}-${float}-${extensible}.wav`);
        writeFileSync(p, bytes);
        const reader = openWavReader(p);
        expect(reader.info.frames).toBe(2);
        const l = new Float32Array(2);
        expect(reader.read([l, undefined], 5)).toBe(2);
        expect(Array.from(l)).toEqual(want.map(([x]) => Math.fround(x)));
        reader.close();
      });
    }
  }

  it('RF64 with a ds64 chunk', () => {
    const bytes = wavBytes(
      { tag: 3, channels: 2, rate: 48000, bits: 32, rf64: true },
      samples(32, true, [[0.5, -0.5]]),
    );
    const d = decodeWav(bytes);
    expect(Array.from(d.channels[0]!)).toEqual([0.5]);
    expect(Array.from(d.channels[1]!)).toEqual([-0.5]);
  });
});

describe('bad headers: one clear message each', () => {
  const s16 = samples(16, false, [[1, 2]]);
  it('0 channels, 0 bits, an unknown format, a truncated data chunk, not a WAV at all', () => {
    expect(() => decodeWav(wavBytes({ tag: 1, channels: 0, rate: 48000, bits: 16 }, s16))).toThrow(
      /declares 0 channels/,
    );
    expect(() => decodeWav(wavBytes({ tag: 1, channels: 2, rate: 48000, bits: 0 }, s16))).toThrow(
      /0 bits per sample is not supported for PCM data: use 8, 16, 24, 32/,
    );
    expect(() => decodeWav(wavBytes({ tag: 2, channels: 2, rate: 48000, bits: 16 }, s16))).toThrow(
      /format tag 2 is not supported/,
    );
    expect(() =>
      decodeWav(wavBytes({ tag: 1, channels: 2, rate: 48000, bits: 16, claim: 4000 }, s16)),
    ).toThrow(/claims 4000 bytes but the file holds 4 after the header: the file is truncated/);
    const t = decodeWav(wavBytes({ tag: 1, channels: 2, rate: 48000, bits: 16, claim: 4000 }, s16), {
      allowTruncated: true,
    });
    expect(t.channels[0]!.length).toBe(1);
    expect(() => decodeWav(new Uint8Array([0x7f, 0x45, 0x4c, 0x46, 2, 1, 1, 0, 0, 0, 0, 0]))).toThrow(
      /not a WAV file: it starts with 0x7f454c46/,
    );
  });

  it('a device is refused, not read without end', () => {
    if (!existsSync('/dev/zero')) return;
    expect(() => openWavReader('/dev/zero')).toThrow(/not a regular file/);
  });
});

describe('the block writer', () => {
  const n = 10_000;
  const a = Float32Array.from({ length: n }, (_, k) => Math.sin(k / 7) * 0.9);
  const b = Float32Array.from({ length: n }, (_, k) => Math.cos(k / 5) * 0.9);

  it('written in uneven blocks, read back in uneven blocks: the same as one block', async () => {
    for (const enc of ['uint8', 'int16', 'int24', 'int32', 'float32', 'float64'] as const) {
      const whole = join(dir, `whole-${enc}.wav`);
      await writeWavFile(whole, [a, b], 48000, enc);
      const parts = join(dir, `parts-${enc}.wav`);
      const w = createWavWriter(parts, { channels: 2, sampleRate: 48000, encoding: enc });
      for (let o = 0, m = 1; o < n; o += m, m = (m * 3 + 1) % 5000) {
        const e = Math.min(n, o + m);
        w.write([a.subarray(o, e), b.subarray(o, e)]);
      }
      w.close();
      expect(Buffer.compare(readFileSync(whole), readFileSync(parts)), enc).toBe(0);
      const r = openWavReader(parts);
      const x = new Float32Array(n);
      const y = new Float32Array(n);
      for (let o = 0, m = 7; o < n; o += m, m = (m * 5 + 3) % 3001) r.read([x, y], Math.min(m, n - o), o);
      r.close();
      const lsb = enc.startsWith('float') ? 0 : 2 ** -(Number(enc.replace(/\D/g, '')) - 1);
      for (let k = 0; k < n; k += 97) {
        expect(Math.abs(x[k]! - a[k]!)).toBeLessThanOrEqual(lsb / 2 + 1e-12);
        expect(Math.abs(y[k]! - b[k]!)).toBeLessThanOrEqual(lsb / 2 + 1e-12);
      }
    }
  });

  it('past the RIFF limit the file becomes RF64 and still reads back', async () => {
    const p = join(dir, 'big.wav');
    const w = createWavWriter(p, { channels: 2, sampleRate: 48000, encoding: 'int16', rf64AboveBytes: 1000 });
    w.write([a, b]);
    w.close();
    const bytes = readFileSync(p);
    expect(bytes.toString('latin1', 0, 4)).toBe('RF64');
    expect(bytes.toString('latin1', 12, 16)).toBe('ds64');
    const d = await readWavFile(p);
    expect(d.channels[0]!.length).toBe(n);
    expect(Math.abs(d.channels[1]![1234]! - b[1234]!)).toBeLessThan(2 ** -15);
  });

  it('a disk that fills up: one WRITE_FAILED line, the old file kept, no temporary file left', async () => {
    const p = join(dir, 'keep.wav');
    await writeWavFile(p, [a.subarray(0, 100)], 48000, 'int16');
    const before = readFileSync(p);
    let written = 0;
    const fullDisk = {
      write(_fd: number, _b: Uint8Array, len: number) {
        written += len;
        if (written > 20_000)
          throw Object.assign(new Error('ENOSPC: no space left on device'), { code: 'ENOSPC' });
      },
    };
    const w = createWavWriter(p, { channels: 2, sampleRate: 48000, encoding: 'float32' }, fullDisk);
    let err: unknown;
    try {
      w.write([a, b]);
      w.close();
    } catch (e) {
      err = e;
    }
    expect((err as { code?: string }).code).toBe('WRITE_FAILED');
    expect((err as Error).message).toBe(
      `cannot write ${p}: the disk is full (the previous file, if any, is kept)`,
    );
    expect(Buffer.compare(readFileSync(p), before)).toBe(0);
    expect(readdirSync(dir).filter((f) => f.endsWith('.tmp'))).toEqual([]);
  });
});
