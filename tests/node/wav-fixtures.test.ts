/**
 * The WAV reader against files from independent writers: Python's `wave` module, `scipy.io.wavfile`
 * (Debian python3-scipy 1.10.1) and hand-packed RIFF chunks, made by tests/fixtures/wav/gen_wav.py
 * (command and versions in tests/fixtures/wav/README.md and inside manifest.json). Each file holds
 * sine tones of known peak amplitude; the reader must give back the stored codes exactly (first
 * samples), the amplitude within one LSB and no DC (the 8-bit files are offset binary).
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { decodeWav, readWavFile } from '../../src/node/wav.js';

interface FixtureChannel {
  amplitude: number;
  hz: number;
  phase: number;
  head: number[];
}
interface FixtureCase {
  file: string;
  writer: string;
  format: 'pcm' | 'float';
  bits: number;
  sampleRate: number;
  frames: number;
  channels: FixtureChannel[];
}

const dir = join(import.meta.dirname, '../fixtures/wav');
const manifest = JSON.parse(readFileSync(join(dir, 'manifest.json'), 'utf8')) as {
  scipy: string;
  cases: FixtureCase[];
};

/** Peak amplitude of a tone on an exact DFT bin: 2|X(f)|/N (Heinzel 2002, rectangular window). */
function toneAmplitude(x: ArrayLike<number>, hz: number, rate: number): number {
  let re = 0;
  let im = 0;
  for (let n = 0; n < x.length; n++) {
    const w = (2 * Math.PI * hz * n) / rate;
    re += x[n]! * Math.cos(w);
    im -= x[n]! * Math.sin(w);
  }
  return (2 * Math.hypot(re, im)) / x.length;
}

function mean(x: ArrayLike<number>): number {
  let s = 0;
  for (let n = 0; n < x.length; n++) s += x[n]!;
  return s / x.length;
}

describe(`WAV reader against independently written files (scipy ${manifest.scipy}, Python wave)`, () => {
  it('covers every layout the issue names', () => {
    const kinds = manifest.cases.map((c) => `${c.format}${c.bits}:${c.file}`);
    for (const k of [
      'pcm8:',
      'pcm16:',
      'pcm24:',
      'pcm32:',
      'float32:',
      'float64:',
      ':ext-',
      'odd-chunk',
      'list',
    ])
      expect(kinds.some((s) => s.includes(k))).toBe(true);
  });
  for (const c of manifest.cases) {
    it(`${c.file} (${c.writer}, ${c.format} ${c.bits}-bit, ${c.channels.length} ch)`, async () => {
      const d = await readWavFile(join(dir, c.file));
      expect(d.sampleRate).toBe(c.sampleRate);
      expect(d.channels.length).toBe(c.channels.length);
      // One LSB of the stored format, but no finer than the float32 the reader returns.
      const lsb = Math.max(c.format === 'float' ? 0 : 2 ** -(c.bits - 1), 1e-7);
      c.channels.forEach((ch, k) => {
        const x = d.channels[k]!;
        expect(x.length).toBe(c.frames);
        for (let n = 0; n < ch.head.length; n++)
          expect(Math.abs(x[n]! - ch.head[n]!)).toBeLessThanOrEqual(1e-7);
        const a = toneAmplitude(x, ch.hz, c.sampleRate);
        expect(Math.abs(a - ch.amplitude)).toBeLessThanOrEqual(lsb);
        expect(Math.abs(mean(x))).toBeLessThanOrEqual(lsb);
      });
    });
  }
  it('decodeWav gives the same as readWavFile for the bytes', async () => {
    const c = manifest.cases.find((x) => x.bits === 8)!;
    const d = decodeWav(new Uint8Array(readFileSync(join(dir, c.file))));
    const f = await readWavFile(join(dir, c.file));
    expect(Array.from(d.channels[0]!)).toEqual(Array.from(f.channels[0]!));
  });
});
