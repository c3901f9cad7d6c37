/**
 * parseWavHeader (src/node/wav.ts) on hand-packed headers, good and broken: every refusal names the
 * file and what is wrong. Layout: Microsoft/IBM Multimedia Programming Interface and Data
 * Specifications 1.0 (1991), RIFF WAVE chapter; EBU Tech 3306 (RF64, ds64 chunk).
 */
import { describe, expect, it } from 'vitest';
import { parseWavHeader } from '../../src/node/wav.js';
import { expectOrthotoneError } from '../support/errors.js';

const ascii = (s: string) => Array.from(s, (c) => c.charCodeAt(0));
const u16 = (v: number) => [v & 255, (v >> 8) & 255];
const u32 = (v: number) => [v & 255, (v >>> 8) & 255, (v >>> 16) & 255, (v >>> 24) & 255];
const u64 = (v: number) => [...u32(v % 2 ** 32), ...u32(Math.floor(v / 2 ** 32))];

/** A 16-byte fmt chunk body. */
function fmtBody(tagId: number, channels: number, rate: number, bits: number, align = (channels * bits) / 8) {
  return [...u16(tagId), ...u16(channels), ...u32(rate), ...u32(rate * align), ...u16(align), ...u16(bits)];
}
const chunk = (id: string, body: number[], size = body.length) => [
  ...ascii(id),
  ...u32(size),
  ...body,
  ...(body.length % 2 ? [0] : []),
];
function riff(chunks: number[][], head = 'RIFF') {
  const body = [...ascii('WAVE'), ...chunks.flat()];
  return new Uint8Array([...ascii(head), ...u32(body.length), ...body]);
}
const data = (n: number) => chunk('data', new Array(n).fill(0));

describe('parseWavHeader', () => {
  it('reads a plain PCM header: rate, channels, depth, frames and data offset', () => {
    const b = riff([chunk('fmt ', fmtBody(1, 2, 48000, 16)), data(40)]);
    const h = parseWavHeader(b, b.length, 'x.wav');
    expect(h).toEqual({
      sampleRate: 48000,
      channels: 2,
      bitsPerSample: 16,
      float: false,
      bitDepth: '16',
      blockAlign: 4,
      frames: 10,
      dataOffset: 44,
      rf64: false,
    });
  });
  it('reads float and RF64 headers (the ds64 chunk gives the data size)', () => {
    const f = riff([chunk('fmt ', fmtBody(3, 1, 8000, 64)), data(16)]);
    expect(parseWavHeader(f, f.length)).toMatchObject({ float: true, bitDepth: '64', frames: 2 });
    const f32 = riff([chunk('fmt ', fmtBody(3, 1, 8000, 32)), data(16)]);
    expect(parseWavHeader(f32, f32.length)).toMatchObject({ float: true, bitDepth: '32f', frames: 4 });
    const ds64 = chunk('ds64', [...u64(0), ...u64(24), ...u64(0), ...u32(0)]);
    const r = riff(
      [ds64, chunk('fmt ', fmtBody(1, 1, 8000, 16)), chunk('data', new Array(24).fill(0), 0xffffffff)],
      'RF64',
    );
    expect(parseWavHeader(r, r.length)).toMatchObject({ rf64: true, frames: 12 });
    const noDs = riff(
      [chunk('fmt ', fmtBody(1, 1, 8000, 16)), chunk('data', new Array(24).fill(0), 0xffffffff)],
      'RF64',
    );
    expectOrthotoneError(
      () => parseWavHeader(noDs, noDs.length, 'r.wav'),
      'INVALID_ARGUMENT',
      /^r\.wav: an RF64 file without its ds64 chunk$/,
    );
  });
  it('refuses what is not a WAV file, naming the file and what it starts with', () => {
    expectOrthotoneError(
      () => parseWavHeader(new Uint8Array(5), 5, 'a.wav'),
      'INVALID_ARGUMENT',
      /^a\.wav is not a WAV file: it has only 5 bytes$/,
    );
    const txt = new Uint8Array(ascii('hello world, not audio'));
    expectOrthotoneError(
      () => parseWavHeader(txt, txt.length, 'b.wav'),
      'INVALID_ARGUMENT',
      /^b\.wav is not a WAV file: it starts with "hell", not "RIFF" … "WAVE"$/,
    );
    const bin = new Uint8Array([0, 1, 2, 255, ...new Array(12).fill(0)]);
    const e = expectOrthotoneError(() => parseWavHeader(bin, bin.length, 'c.wav'), 'INVALID_ARGUMENT');
    expect(e.message).toContain('it starts with 0x000102ff'); // binary bytes shown as hex, not raw
    const avi = riff([], 'RIFF');
    avi.set(ascii('AVI '), 8);
    expectOrthotoneError(
      () => parseWavHeader(avi, avi.length, 'd.wav'),
      'INVALID_ARGUMENT',
      /not "RIFF" … "WAVE"/,
    );
  });
  it('refuses broken fmt and data chunks with the reason', () => {
    const cases: [number[][], RegExp][] = [
      [
        [chunk('fmt ', fmtBody(1, 1, 8000, 16).slice(0, 14))],
        /^f\.wav: its fmt chunk has 14 bytes, fewer than the 16 a WAV format needs$/,
      ],
      [
        [chunk('fmt ', [...fmtBody(0xfffe, 1, 8000, 16), 0, 0])],
        /^f\.wav: its extensible fmt chunk has 18 bytes, fewer than 40$/,
      ],
      [
        [data(8), chunk('fmt ', fmtBody(1, 1, 8000, 16))],
        /^f\.wav: the data chunk comes before any fmt chunk/,
      ],
      [
        [chunk('fmt ', fmtBody(1, 0, 8000, 16, 2)), data(8)],
        /^f\.wav: its fmt chunk declares 0 channels: the file holds no audio$/,
      ],
      [
        [chunk('fmt ', fmtBody(1, 1, 0, 16)), data(8)],
        /^f\.wav: its fmt chunk declares a sample rate of 0 Hz$/,
      ],
      [
        [chunk('fmt ', fmtBody(2, 1, 8000, 16)), data(8)],
        /^f\.wav: WAV format tag 2 is not supported: use PCM \(1\) or IEEE float \(3\)/,
      ],
      [
        [chunk('fmt ', fmtBody(1, 1, 8000, 12, 2)), data(8)],
        /^f\.wav: 12 bits per sample is not supported for PCM data: use 8, 16, 24, 32$/,
      ],
      [
        [chunk('fmt ', fmtBody(3, 1, 8000, 16)), data(8)],
        /^f\.wav: 16 bits per sample is not supported for float data: use 32, 64$/,
      ],
      [
        [chunk('fmt ', fmtBody(1, 2, 8000, 16, 6)), data(12)],
        /^f\.wav: block align 6 does not match 2 channel\(s\) of 16 bits \(4\)$/,
      ],
      [[chunk('fmt ', fmtBody(1, 1, 8000, 16))], /^f\.wav: no data chunk found: the file holds no samples$/],
      [[chunk('LIST', ascii('INFO'))], /^f\.wav: no fmt chunk found: not a readable WAV file$/],
    ];
    for (const [chunks, re] of cases) {
      const b = riff(chunks);
      expectOrthotoneError(() => parseWavHeader(b, b.length, 'f.wav'), 'INVALID_ARGUMENT', re);
    }
  });
  it('a block align of 0 is taken as the computed one', () => {
    const b = riff([chunk('fmt ', fmtBody(1, 2, 8000, 24, 0)), data(12)]);
    expect(parseWavHeader(b, b.length)).toMatchObject({ blockAlign: 6, frames: 2 });
  });
  it('a data chunk claiming more than the file holds: refused, or read as far as it goes when allowed', () => {
    const b = riff([chunk('fmt ', fmtBody(1, 1, 8000, 16)), chunk('data', new Array(10).fill(0), 1000)]);
    expectOrthotoneError(
      () => parseWavHeader(b, b.length, 't.wav'),
      'INVALID_ARGUMENT',
      /^t\.wav: its data chunk claims 1000 bytes but the file holds 10 after the header: the file is truncated/,
    );
    expect(parseWavHeader(b, b.length, 't.wav', { allowTruncated: true })).toMatchObject({ frames: 5 });
    // A file size below the data offset holds no frames at all.
    expect(parseWavHeader(b, 20, 't.wav', { allowTruncated: true })).toMatchObject({ frames: 0 });
  });
  it('a header cut before the data chunk, in a longer file, says how far it looked', () => {
    const b = riff([chunk('fmt ', fmtBody(1, 1, 8000, 16)), chunk('junk', new Array(30).fill(0))]);
    const cut = b.subarray(0, b.length - 10);
    expectOrthotoneError(
      () => parseWavHeader(cut, b.length + 100, 'h.wav'),
      'INVALID_ARGUMENT',
      /^h\.wav: no data chunk found within the first 1048576 bytes: the file holds no samples$/,
    );
  });

  it('names "the file" when no name is given', () => {
    expectOrthotoneError(
      () => parseWavHeader(new Uint8Array(4), 4),
      'INVALID_ARGUMENT',
      /^the file is not a WAV file: it has only 4 bytes$/,
    );
  });
  it('shows exactly the four bytes of a binary start, and refuses big-endian RIFX', () => {
    const bin = new Uint8Array([0, 1, 2, 255, ...new Array(12).fill(7)]);
    expectOrthotoneError(
      () => parseWavHeader(bin, bin.length, 'c.wav'),
      'INVALID_ARGUMENT',
      /^c\.wav is not a WAV file: it starts with 0x000102ff, not "RIFF" … "WAVE"$/,
    );
    // RIFX is RIFF with big-endian fields (not read here): refused, not misread.
    const rifx = riff([chunk('fmt ', fmtBody(1, 1, 8000, 16)), data(4)], 'RIFX');
    expectOrthotoneError(
      () => parseWavHeader(rifx, rifx.length, 'x.wav'),
      'INVALID_ARGUMENT',
      /^x\.wav is not a WAV file: it starts with "RIFX"/,
    );
  });
  it('an empty recording (a data chunk of 0 bytes ending the file) has 0 frames', () => {
    const b = riff([chunk('fmt ', fmtBody(1, 2, 44100, 16)), data(0)]);
    expect(b.length).toBe(44); // the canonical 44-byte header and nothing else
    expect(parseWavHeader(b, b.length)).toMatchObject({ frames: 0, dataOffset: 44 });
  });
  it('reads a file of more than 10 000 chunks (RIFF sets no limit on their number)', () => {
    const many = Array.from({ length: 10_001 }, () => chunk('JUNK', []));
    const b = riff([...many, chunk('fmt ', fmtBody(1, 1, 8000, 16)), data(6)]);
    expect(parseWavHeader(b, b.length)).toMatchObject({ frames: 3, dataOffset: b.length - 6 });
  });
  it('a ds64 chunk too short for its three sizes is not used: the RF64 file is refused', () => {
    // EBU Tech 3306: ds64 holds riffSize, dataSize and sampleCount (8 bytes each) before its table.
    const short = chunk('ds64', [...u64(36), ...u64(24)]);
    const r = riff(
      [short, chunk('fmt ', fmtBody(1, 1, 8000, 16)), chunk('data', new Array(24).fill(0), 0xffffffff)],
      'RF64',
    );
    expectOrthotoneError(
      () => parseWavHeader(r, r.length, 'r.wav'),
      'INVALID_ARGUMENT',
      /^r\.wav: an RF64 file without its ds64 chunk$/,
    );
  });
  it('a plain RIFF file with an unknown data length (size field 0xFFFFFFFF) is truncated, not RF64', () => {
    const b = riff([chunk('fmt ', fmtBody(1, 1, 8000, 16)), chunk('data', new Array(8).fill(0), 0xffffffff)]);
    expectOrthotoneError(
      () => parseWavHeader(b, b.length, 's.wav'),
      'INVALID_ARGUMENT',
      /^s\.wav: its data chunk claims 4294967295 bytes but the file holds 8 after the header/,
    );
    expect(parseWavHeader(b, b.length, 's.wav', { allowTruncated: true })).toMatchObject({
      frames: 4,
      rf64: false,
    });
  });
  it('a header that ends inside the ds64 or fmt chunk is refused with a message, never a crash', () => {
    const ds64 = chunk('ds64', [...u64(0), ...u64(24), ...u64(12), ...u32(0)]);
    const rf = riff(
      [ds64, chunk('fmt ', fmtBody(1, 1, 8000, 16)), chunk('data', new Array(24).fill(0), 0xffffffff)],
      'RF64',
    );
    // Cut 10 bytes into the ds64 payload: its sizes are not all there.
    expectOrthotoneError(
      () => parseWavHeader(rf.subarray(0, 12 + 8 + 10), rf.length, 'd.wav'),
      'INVALID_ARGUMENT',
      /^d\.wav: no fmt chunk found: not a readable WAV file$/,
    );
    const pcm = riff([chunk('fmt ', fmtBody(1, 1, 8000, 16)), data(8)]);
    // Cut 10 bytes into the 16-byte fmt payload.
    expectOrthotoneError(
      () => parseWavHeader(pcm.subarray(0, 12 + 8 + 10), pcm.length, 'f.wav'),
      'INVALID_ARGUMENT',
      /^f\.wav: no fmt chunk found: not a readable WAV file$/,
    );
  });
  it('says "within the first … bytes" only when the header was cut short of a longer file', () => {
    const fmt = chunk('fmt ', fmtBody(1, 1, 8000, 16));
    const b = riff([fmt, chunk('LIST', ascii('INFO')), data(8)]);
    const listEnd = 12 + fmt.length + 12;
    // The header ends exactly where the data chunk begins, in a longer file.
    expectOrthotoneError(
      () => parseWavHeader(b.subarray(0, listEnd), b.length, 'h.wav'),
      'INVALID_ARGUMENT',
      /^h\.wav: no data chunk found within the first 1048576 bytes: the file holds no samples$/,
    );
    // The whole file, ending in 4 stray bytes after the fmt chunk: no data chunk, and nothing unread.
    const stray = new Uint8Array([...riff([fmt]), 1, 2, 3, 4]);
    expectOrthotoneError(
      () => parseWavHeader(stray, stray.length, 'h.wav'),
      'INVALID_ARGUMENT',
      /^h\.wav: no data chunk found: the file holds no samples$/,
    );
  });
});
