/**
 * The block WAV reader (openWavReader, readWavFile, decodeWav) on files packed by hand
 * (tests/node/riff.ts, from the RIFF WAVE layout of Microsoft/IBM 1991): exactly the frames asked
 * for go exactly where asked, whatever follows the data chunk; seek; the size limit of a whole
 * read; a file cut short while it is read; no descriptor left open (Linux /proc/self/fd).
 */
import {
  closeSync,
  existsSync,
  mkdtempSync,
  openSync,
  rmSync,
  statSync,
  truncateSync,
  writeFileSync,
  writeSync,
} from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { decodeWav, MAX_DECODED_SAMPLES, openWavReader, readWavFile } from '../../src/node/wav.js';
import { expectOrthotoneError } from '../support/errors.js';
import { descriptorsUnder, needDescriptors } from './disk.js';
import { chunk, fmtBody, riff, sampleBytes } from './riff.js';

const dir = mkdtempSync(join(tmpdir(), 'orthotone-wav-reader-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Full-scale values exact in every format (multiples of 1/8), frame k: L = V[k % 6], R = V[(k + 3) % 6]. */
const V = [0.5, -0.25, 0.125, -1, 0.75, -0.5];
const frame = (k: number) => [V[k % 6]!, V[(k + 3) % 6]!];
/** A LIST chunk after the data chunk: its bytes must never be read as samples. */
const trailer = chunk(
  'LIST',
  Array.from('INFOICMT\x08\x00\x00\x00trailer!', (c) => c.charCodeAt(0)),
);

function stereoFile(name: string, bits: number, float: boolean, frames: number): string {
  const data = sampleBytes(
    bits,
    float,
    Array.from({ length: frames }, (_, k) => frame(k)),
  );
  const p = join(dir, name);
  writeFileSync(
    p,
    riff([chunk('fmt ', fmtBody(float ? 3 : 1, 2, 8000, bits)), chunk('data', data), trailer]),
  );
  return p;
}

const formats: [string, number, boolean][] = [
  ['8-bit', 8, false],
  ['16-bit', 16, false],
  ['24-bit', 24, false],
  ['32-bit', 32, false],
  ['32-bit float', 32, true],
  ['64-bit float', 64, true],
];

/**
 * A sparse file (no disk space used): a 44-byte header, then 2^28 + 2 bytes of 8-bit stereo, one
 * frame more than MAX_DECODED_SAMPLES samples.
 */
function hugeFile(): string {
  const p = join(dir, 'huge.wav');
  if (existsSync(p)) return p;
  const bytes = MAX_DECODED_SAMPLES + 2;
  const head = riff([chunk('fmt ', fmtBody(1, 2, 8000, 8)), chunk('data', [], bytes)]);
  writeFileSync(p, head);
  truncateSync(p, head.length + bytes);
  return p;
}

describe('read() puts exactly the frames asked for where asked', () => {
  for (const [name, bits, float] of formats) {
    it(`${name}: only out[c][at … at + n − 1] is written; extra arrays and the LIST chunk after the data are left alone`, () => {
      const r = openWavReader(stereoFile(`f${bits}${float}.wav`, bits, float, 5));
      const l = new Float32Array(10).fill(9);
      const rr = new Float32Array(10).fill(9);
      const extra = new Float32Array(10).fill(9);
      expect(r.read([l, rr, extra], 3, 2)).toBe(3);
      expect(Array.from(l)).toEqual([9, 9, 0.5, -0.25, 0.125, 9, 9, 9, 9, 9]);
      expect(Array.from(rr)).toEqual([9, 9, -1, 0.75, -0.5, 9, 9, 9, 9, 9]);
      expect(Array.from(extra)).toEqual(new Array(10).fill(9));
      // Asking for more than is left gives the last two frames, then nothing.
      expect(r.read([l, undefined], 8, 0)).toBe(2);
      expect(Array.from(l.subarray(0, 3))).toEqual([-1, 0.75, 0.5]); // l[2] kept from before
      expect(r.read([l, rr], 8, 0)).toBe(0);
      r.close();
    });
  }
  it('a read longer than one block (4096 frames) stops at the end of the data chunk', () => {
    const n = 6000;
    const r = openWavReader(stereoFile('long.wav', 16, false, n));
    const l = new Float32Array(n + 20).fill(9);
    const rr = new Float32Array(n + 20).fill(9);
    expect(r.read([l, rr], n + 20, 10)).toBe(n);
    for (const k of [0, 1, 4095, 4096, 4097, n - 1]) {
      expect([l[10 + k], rr[10 + k]]).toEqual(frame(k));
    }
    expect(Array.from(l.subarray(0, 10))).toEqual(new Array(10).fill(9));
    expect(Array.from(l.subarray(10 + n))).toEqual(new Array(10).fill(9));
    r.close();
  });
  it('an output array too short for the frames is refused with both lengths', () => {
    const r = openWavReader(stereoFile('short.wav', 16, false, 6));
    expectOrthotoneError(
      () => r.read([new Float32Array(3)], 5),
      'INVALID_ARGUMENT',
      /^read: an output array holds 3 samples, 5 needed$/,
    );
    expectOrthotoneError(
      () => r.read([undefined, new Float32Array(6)], 5, 2),
      'INVALID_ARGUMENT',
      /^read: an output array holds 6 samples, 7 needed$/,
    );
    r.close();
  });
});

describe('seek', () => {
  it('moves to any frame from 0 to the end; refuses others with the range', () => {
    const r = openWavReader(stereoFile('seek.wav', 24, false, 12));
    const l = new Float32Array(2);
    r.seek(7);
    expect(r.read([l], 2)).toBe(2);
    expect(Array.from(l)).toEqual([frame(7)[0], frame(8)[0]]);
    r.seek(12);
    expect(r.read([l], 2)).toBe(0);
    r.seek(0);
    expect(r.read([l], 1)).toBe(1);
    expect(l[0]).toBe(0.5);
    for (const bad of [-1, 13, 2.5, Number.NaN]) {
      expectOrthotoneError(
        () => r.seek(bad),
        'INVALID_ARGUMENT',
        new RegExp(`^frame ${bad} is outside the file: use 0 to 12$`),
      );
    }
    r.close();
  });
});

describe('files that change or are too large', () => {
  it('a file cut short while it is read: the frames still there, then 0, never a hang', () => {
    const p = stereoFile('cut.wav', 16, false, 6000);
    const r = openWavReader(p);
    expect(r.info.frames).toBe(6000);
    // Another program truncates it to its header plus 1000 frames and half of one more.
    truncateSync(p, 44 + 1000 * 4 + 2);
    const l = new Float32Array(6000);
    expect(r.read([l], 6000)).toBe(1000);
    expect(l[999]).toBe(frame(999)[0]);
    expect(r.read([l], 6000)).toBe(0);
    r.close();
  });
  it('a data chunk beyond the first MiB of the file is refused, naming the limit', () => {
    const p = join(dir, 'far.wav');
    // fmt, a JUNK chunk of 1 100 000 bytes (left as a hole in a sparse file), then the data chunk.
    const head = riff([chunk('fmt ', fmtBody(1, 1, 8000, 16)), chunk('JUNK', [], 1_100_000)]);
    writeFileSync(p, head);
    const fd = openSync(p, 'r+');
    writeSync(fd, new Uint8Array(chunk('data', [0, 0, 1, 0])), 0, 12, head.length + 1_100_000);
    closeSync(fd);
    expectOrthotoneError(
      () => openWavReader(p),
      'INVALID_ARGUMENT',
      new RegExp(`^${p}: no data chunk found within the first 1048576 bytes: the file holds no samples$`),
    );
  });
  it('readWavFile refuses more samples than it reads into memory at once, and names the fix', async () => {
    const p = hugeFile();
    const frames = MAX_DECODED_SAMPLES / 2 + 1;
    expect(statSync(p).size).toBe(44 + 2 ** 28 + 2);
    await expect(readWavFile(p)).rejects.toThrow(
      `${p} holds 134217729 frames of 2 channel(s), more than the 268435456 samples read into memory at once: read it in blocks with openWavReader`,
    );
    // The block reader opens it.
    const r = openWavReader(p);
    expect(r.info.frames).toBe(frames);
    r.close();
  });
  it('decodeWav names "the WAV data" in its refusals', () => {
    expectOrthotoneError(
      () => decodeWav(new Uint8Array(3)),
      'INVALID_ARGUMENT',
      /^the WAV data is not a WAV file: it has only 3 bytes$/,
    );
  });
});

describe('descriptors (Linux /proc/self/fd)', () => {
  it('none left open after close (twice is harmless), a refused file, or a whole-file read', async (ctx) => {
    needDescriptors(ctx);
    const p = stereoFile('fd.wav', 16, false, 4);
    const r = openWavReader(p);
    r.close();
    // A second close must not close a descriptor the process has opened since.
    const other = openSync(p, 'r');
    r.close();
    expect(descriptorsUnder(dir)).toEqual([p]);
    closeSync(other);
    const bad = join(dir, 'bad.wav');
    writeFileSync(bad, 'not a wav file at all');
    expect(() => openWavReader(bad)).toThrow(/not a WAV file/);
    expect((await readWavFile(p)).channels[1]![3]).toBe(frame(3)[1]);
    await expect(readWavFile(hugeFile())).rejects.toThrow(/read it in blocks/);
    expect(descriptorsUnder(dir)).toEqual([]);
  });
});
