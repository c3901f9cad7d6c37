import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { isOrthotoneError } from '../../src/core/errors.js';
import { createRng } from '../../src/core/rng.js';
import { decodeWav, encodeWav, readIqWavFile, toMono, writeIqWavFile } from '../../src/node/wav.js';

const dir = mkdtempSync(join(tmpdir(), 'orthotone-wav-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function noise(n: number, seed: number, amp = 0.9): Float32Array {
  const r = createRng(seed);
  const x = new Float32Array(n);
  for (let k = 0; k < n; k++) x[k] = amp * (2 * r.uniform() - 1);
  return x;
}

/** Reads the RIFF/WAVE header fields by hand (Microsoft RIFF WAVE layout), independent of wavefile. */
function header(bytes: Uint8Array) {
  const dv = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const tag = (o: number) => String.fromCharCode(...bytes.subarray(o, o + 4));
  expect(tag(0)).toBe('RIFF');
  expect(tag(8)).toBe('WAVE');
  let o = 12;
  let fmt: { format: number; channels: number; rate: number; bits: number } | null = null;
  let data = -1;
  while (o + 8 <= bytes.length) {
    const id = tag(o);
    const size = dv.getUint32(o + 4, true);
    if (id === 'fmt ') {
      fmt = {
        format: dv.getUint16(o + 8, true),
        channels: dv.getUint16(o + 10, true),
        rate: dv.getUint32(o + 12, true),
        bits: dv.getUint16(o + 22, true),
      };
    }
    if (id === 'data') {
      data = o + 8;
      break;
    }
    o += 8 + size + (size % 2);
  }
  return { fmt: fmt!, data, dv };
}

describe('WAV through wavefile', () => {
  const i = noise(4801, 1);
  const q = noise(4801, 2);
  it('float32 round trip is lossless; header says IEEE float, stereo, 48 kHz, left I right Q', async () => {
    const path = join(dir, 'iq-f32.wav');
    const rep = await writeIqWavFile(path, i, q, 48000, 'float32');
    expect(rep.clippedSamples).toBe(0);
    const bytes = new Uint8Array(readFileSync(path));
    const h = header(bytes);
    expect(h.fmt).toEqual({ format: 3, channels: 2, rate: 48000, bits: 32 });
    // interleaved: first frame is I[0], Q[0]
    expect(h.dv.getFloat32(h.data, true)).toBe(i[0]);
    expect(h.dv.getFloat32(h.data + 4, true)).toBe(q[0]);
    const back = await readIqWavFile(path);
    expect(back.sampleRate).toBe(48000);
    expect(Array.from(back.i)).toEqual(Array.from(i));
    expect(Array.from(back.q)).toEqual(Array.from(q));
  });
  for (const [enc, bits] of [
    ['int16', 16],
    ['int24', 24],
  ] as const) {
    it(`${enc} round trip is within one LSB (2^-${bits - 1}); PCM header`, () => {
      const edge = Float32Array.from([1, -1, 0, 0.5, -0.5, 1 - 2 ** -(bits - 1)]);
      const rep = encodeWav([i, q], 44100, enc);
      const h = header(rep.bytes);
      expect(h.fmt).toEqual({ format: 1, channels: 2, rate: 44100, bits });
      const d = decodeWav(rep.bytes);
      let worst = 0;
      for (let k = 0; k < i.length; k++) {
        worst = Math.max(worst, Math.abs(d.channels[0]![k]! - i[k]!), Math.abs(d.channels[1]![k]! - q[k]!));
      }
      expect(worst).toBeLessThanOrEqual(2 ** -(bits - 1));
      expect(worst).toBeGreaterThan(0);
      const e = decodeWav(encodeWav([edge], 8000, enc).bytes).channels[0]!;
      for (let k = 0; k < edge.length; k++)
        expect(Math.abs(e[k]! - edge[k]!)).toBeLessThanOrEqual(2 ** -(bits - 1));
      expect(e[1]).toBe(-1);
    });
  }
  it('integer files never clip silently: samples beyond full scale are counted', () => {
    const x = Float32Array.from([0.5, 1.2, -1.5, 1, -1, 0.99]);
    const r = encodeWav([x], 48000, 'int16');
    expect(r.clippedSamples).toBe(2);
    expect(r.overFullScale).toBe(2);
    expect(r.peak).toBeCloseTo(1.5, 6);
    const f = encodeWav([x], 48000, 'float32');
    expect(f.clippedSamples).toBe(0);
    expect(f.overFullScale).toBe(2);
    expect(decodeWav(f.bytes).channels[0]![2]).toBe(-1.5);
  });
  it('bad input: typed errors', async () => {
    expect(() => encodeWav([new Float32Array(3), new Float32Array(4)], 48000, 'int16')).toThrow(
      /different lengths/,
    );
    expect(() => encodeWav([new Float32Array(3)], 48000, 'int12' as 'int16')).toThrow(/encoding "int12"/);
    expect(() => encodeWav([new Float32Array(3)], 44100.5, 'int16')).toThrow(/whole number/);
    try {
      decodeWav(new Uint8Array([1, 2, 3, 4]));
      expect.unreachable();
    } catch (e) {
      expect(isOrthotoneError(e, 'INVALID_ARGUMENT')).toBe(true);
    }
    const mono = join(dir, 'mono.wav');
    const { writeWavFile } = await import('../../src/node/wav.js');
    await writeWavFile(mono, [i], 48000, 'int16');
    await expect(readIqWavFile(mono)).rejects.toThrow(/has 1 channel: an I\/Q file has exactly two/);
  });
  it('toMono averages channels', () => {
    const d = decodeWav(
      encodeWav([Float32Array.from([0.5, 1]), Float32Array.from([0.25, 0])], 8000, 'float32').bytes,
    );
    expect(Array.from(toMono(d))).toEqual([0.375, 0.5]);
  });
});
