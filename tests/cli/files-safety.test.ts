/**
 * Files a user can trust (issue 12 items 2 and 3): no command overwrites one of its inputs or
 * writes two outputs to one file; writes are atomic, so a full disk leaves the old file (or none)
 * and one line, never a truncated file or a stack trace. The full disk is real where the machine
 * allows it (a 64 KiB tmpfs mounted for the test; needs root) — beside the stand-in disk of
 * tests/node/wav-stream.test.ts, which always runs.
 */
import { execFileSync } from 'node:child_process';
import {
  existsSync,
  linkSync,
  mkdirSync,
  mkdtempSync,
  readdirSync,
  readFileSync,
  rmSync,
  writeFileSync,
} from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { designNetwork } from '../../src/design/design-network.js';
import { skipUnless } from '../node/disk.js';
import { cli, writeTestWav } from '../support/cli.js';

const dir = mkdtempSync(join(tmpdir(), 'orthotone-files-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const net = join(dir, 'net.json');
writeFileSync(
  net,
  JSON.stringify(designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'allpass', targetDb: 50 })),
);
const tone = (n: number) =>
  Float32Array.from({ length: n }, (_, k) => 0.5 * Math.sin((2 * Math.PI * 1000 * k) / 48000));
const iq = join(dir, 'iq.wav');
writeTestWav(iq, [tone(4800), tone(4800)], 48000);
const mono = join(dir, 'mono.wav');
writeTestWav(mono, [tone(4800)], 48000);

/** Exit 2, one line, naming the clash; the input unchanged. */
function refusedKeeping(args: string[], kept: string, pattern: RegExp): void {
  const before = readFileSync(kept);
  const r = cli(args);
  expect(r.status, r.stdout + r.stderr).toBe(2);
  expect(r.stderr.trimEnd().split('\n')).toHaveLength(1);
  expect(r.stderr).toMatch(pattern);
  expect(Buffer.compare(readFileSync(kept), before)).toBe(0);
}

describe('an output is never an input, nor another output', () => {
  it('render NET --out NET', () => {
    refusedKeeping(
      ['render', net, '--tone', '1000', '--out', net],
      net,
      /--out .*net\.json is also the input NETWORK/,
    );
  });
  it('render --input IN --out IN, and through a hard link', () => {
    refusedKeeping(['render', '--input', mono, '--out', mono], mono, /is also the input --input/);
    const link = join(dir, 'link.wav');
    linkSync(mono, link);
    refusedKeeping(['render', '--input', mono, '--out', link], mono, /is also the input --input/);
  });
  it('render --vectors equal to --out', () => {
    const out = join(dir, 'v.wav');
    const r = cli(['render', net, '--tone', '1000', '--duration', '0.1', '--out', out, '--vectors', out]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/--vectors .* is also the output --out/);
    expect(existsSync(out)).toBe(false);
  });
  it('measure M --out M', () => {
    refusedKeeping(['measure', iq, '--tones', '1000', '--iq', '--out', iq], iq, /is also the input FILE/);
  });
  it('simulate IN --out IN', () => {
    refusedKeeping(['simulate', iq, '--out', iq], iq, /is also the input IN\.wav/);
  });
});

describe('a full disk', () => {
  const mnt = join(dir, 'small');
  let mounted = false;
  beforeAll(() => {
    mkdirSync(mnt);
    try {
      execFileSync('mount', ['-t', 'tmpfs', '-o', 'size=64k', 'tmpfs', mnt], { stdio: 'ignore' });
      mounted = true;
    } catch {
      mounted = false; // not root or no mount: the stand-in disk test covers the path
    }
  });
  afterAll(() => {
    if (mounted) execFileSync('umount', [mnt]);
  });

  it('render onto a full disk: one line, the old file kept, no temporary or empty file left', (ctx) => {
    skipUnless(mounted, ctx, 'a 64 KiB tmpfs (mount, as root)');
    const out = join(mnt, 'two.wav');
    const ok = cli(['render', net, '--tone', '1000', '--duration', '0.05', '--out', out]);
    expect(ok.status, ok.stderr).toBe(0);
    const before = readFileSync(out);
    // 1 s of float32 stereo is 384 kB: it cannot fit in 64 KiB.
    const r = cli(['render', net, '--tone', '1000', '--duration', '1', '--out', out]);
    expect(r.status).toBe(2);
    expect(r.stderr.trimEnd().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(/two\.wav needs 385\.0 kB but its disk has \d+\.\d kB free/);
    expect(r.stderr).not.toMatch(/\n\s+at /);
    expect(Buffer.compare(readFileSync(out), before)).toBe(0);
    expect(readdirSync(mnt)).toEqual(['two.wav']);
  });

  it('a write the space check cannot foresee (the disk fills while writing): old file kept', (ctx) => {
    skipUnless(mounted, ctx, 'a 64 KiB tmpfs (mount, as root)');
    // Fill most of the disk after the check would pass: analyze writes text, measured only on write.
    const keep = join(mnt, 'two.wav');
    const filler = join(mnt, 'filler');
    writeFileSync(filler, Buffer.alloc(30_000));
    const out = join(mnt, 'table.csv');
    const r = cli(['analyze', net, '--format', 'csv', '--points', '20000', '--out', out]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/^orthotone: cannot write .*table\.csv: the disk is full/);
    expect(existsSync(out)).toBe(false);
    expect(readdirSync(mnt).sort()).toEqual(['filler', 'two.wav']);
    rmSync(filler);
    expect(existsSync(keep)).toBe(true);
  });

  it('start onto a full disk writes its whole set or leaves the old set', (ctx) => {
    skipUnless(mounted, ctx, 'a 64 KiB tmpfs (mount, as root)');
    rmSync(join(mnt, 'two.wav'), { force: true });
    const old = join(mnt, 'network.json');
    writeFileSync(old, 'old set');
    const r = cli(['start', '--out', mnt]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/disk is full.*nothing of the set was replaced/);
    expect(readFileSync(old, 'utf8')).toBe('old set');
    expect(readdirSync(mnt)).toEqual(['network.json']);
  });
});
