/**
 * src/node/files.ts helpers tested directly (the CLI tests reach them only through child processes):
 * write-error messages per errno code, temporary names, the free-space check, the piecewise text
 * writer and the all-or-nothing file set. Errno codes and rename semantics: IEEE Std 1003.1
 * (`rename()`, `<errno.h>`).
 */
import {
  closeSync,
  existsSync,
  fstatSync,
  mkdirSync,
  mkdtempSync,
  openSync,
  readdirSync,
  readFileSync,
  rmSync,
  statfsSync,
  symlinkSync,
  writeFileSync,
} from 'node:fs';
import { tmpdir } from 'node:os';
import { basename, dirname, join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { isOrthotoneError } from '../../src/core/errors.js';
import {
  assertDistinctFiles,
  checkFreeSpace,
  createTextWriter,
  describeWriteError,
  temporaryPathFor,
  writeFileAtomic,
  writeFileSet,
} from '../../src/node/files.js';
import { expectOrthotoneError } from '../support/errors.js';
import { canListDescriptors, descriptorsUnder, needDescriptors, useSmallDisk } from './disk.js';

const dir = mkdtempSync(join(tmpdir(), 'orthotone-files-unit-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const err = (code: string | undefined, message?: string) =>
  Object.assign(new Error(message ?? 'raw'), { code });

describe('describeWriteError', () => {
  it('names the file and the cause for each errno code, and falls back to the message', () => {
    const p = '/data/out/x.wav';
    expect(describeWriteError(err('ENOSPC'), p)).toBe(
      'cannot write /data/out/x.wav: the disk is full (the previous file, if any, is kept)',
    );
    expect(describeWriteError(err('EACCES'), p)).toBe('cannot write /data/out/x.wav: permission denied');
    expect(describeWriteError(err('EPERM'), p)).toBe('cannot write /data/out/x.wav: permission denied');
    expect(describeWriteError(err('ENOENT'), p)).toBe(
      'cannot write /data/out/x.wav: its folder /data/out does not exist',
    );
    expect(describeWriteError(err('EISDIR'), p)).toBe('cannot write /data/out/x.wav: it is a folder');
    expect(describeWriteError(err('EROFS'), p)).toBe(
      'cannot write /data/out/x.wav: the file system is read-only',
    );
    expect(describeWriteError(err('EIO', 'i/o error'), p)).toBe('cannot write /data/out/x.wav: i/o error');
    expect(describeWriteError('plain string', p)).toBe('cannot write /data/out/x.wav: plain string');
  });
});

describe('temporaryPathFor', () => {
  it('is a hidden file in the same folder, unique per call', () => {
    const a = temporaryPathFor('/some/dir/out.wav');
    const b = temporaryPathFor('/some/dir/out.wav');
    expect(dirname(a)).toBe('/some/dir');
    expect(basename(a)).toMatch(new RegExp(`^\\.out\\.wav\\.${process.pid}\\.[0-9a-f]{8}\\.tmp$`));
    expect(a).not.toBe(b);
  });
});

describe('checkFreeSpace', () => {
  /** A stand-in disk with the given statfs figures, recording the folder it was asked about. */
  const disk = (bavail: number, bsize: number) => {
    const asked: string[] = [];
    const statfs = (d: string) => {
      asked.push(d);
      return { bavail, bsize };
    };
    return { asked, statfs };
  };
  const refusal = (bytes: number, bavail: number, bsize: number): string => {
    try {
      checkFreeSpace('/data/out/x.wav', bytes, '--out', disk(bavail, bsize).statfs);
    } catch (e) {
      expect(isOrthotoneError(e, 'WRITE_FAILED')).toBe(true);
      return (e as Error).message;
    }
    return '';
  };

  it('on the real disk: passes a small file, refuses one larger than the disk, naming the option and fix', () => {
    const s = statfsSync(dir);
    const free = s.bavail * s.bsize;
    expect(() => checkFreeSpace(join(dir, 'a.wav'), 1000, '--out')).not.toThrow();
    // Far beyond the free space, so other writers on this machine cannot change the outcome.
    const e = expectOrthotoneError(
      () => checkFreeSpace(join(dir, 'a.wav'), 2 * free + 5e12, '--out'),
      'WRITE_FAILED',
    );
    expect(e.message).toMatch(
      new RegExp(
        `^--out ${join(dir, 'a.wav')} needs \\d+\\.\\d\\d GB but its disk has \\d+\\.\\d+ [kMG]B free: `,
      ),
    );
    expect(e.message).toContain('free: shorten the file, choose a smaller encoding, or free space');
  });
  it("asks about the destination's own folder, resolved from the working directory", () => {
    const d = disk(1, 1);
    checkFreeSpace('/data/out/x.wav', 1, '--out', d.statfs);
    checkFreeSpace('rel/y.csv', 1, '--vectors', d.statfs);
    expect(d.asked).toEqual(['/data/out', join(process.cwd(), 'rel')]);
  });
  it('free space is available blocks × block size: a file of exactly that size fits, one byte more does not', () => {
    // 250 blocks of 4096 bytes: 1 024 000 bytes free.
    expect(refusal(1_024_000, 250, 4096)).toBe('');
    expect(refusal(1_024_001, 250, 4096)).toBe(
      '--out /data/out/x.wav needs 1.02 MB but its disk has 1.02 MB free: shorten the file, choose a smaller encoding, or free space',
    );
  });
  it('prints each size in kB below 1 MB, MB below 1 GB, GB from 1 GB up (SI units, 1 kB = 1000 bytes)', () => {
    const free = (msg: string) => /has (.*) free:/.exec(msg)?.[1];
    const needs = (msg: string) => /needs (.*) but/.exec(msg)?.[1];
    expect(free(refusal(1e12, 2048, 1))).toBe('2.0 kB');
    expect(free(refusal(1e12, 999_900, 1))).toBe('999.9 kB');
    expect(free(refusal(1e12, 1_000_000, 1))).toBe('1.00 MB');
    expect(free(refusal(1e12, 999_990_000, 1))).toBe('999.99 MB');
    expect(free(refusal(1e12, 1_000_000_000, 1))).toBe('1.00 GB');
    expect(free(refusal(1e12, 2_500_000, 4096))).toBe('10.24 GB');
    expect(needs(refusal(385_000, 64, 1024))).toBe('385.0 kB');
    expect(needs(refusal(1e6, 64, 1024))).toBe('1.00 MB');
    expect(needs(refusal(1e9, 64, 1024))).toBe('1.00 GB');
    expect(needs(refusal(1.5e9, 64, 1024))).toBe('1.50 GB');
  });
  it('leaves a folder it cannot ask about to the open that follows (no error here)', () => {
    expect(() => checkFreeSpace(join(dir, 'no-such-folder', 'x', 'y.wav'), 1e30, '--out')).not.toThrow();
    const broken = () => {
      throw Object.assign(new Error('ENOENT: no such file or directory'), { code: 'ENOENT' });
    };
    expect(() => checkFreeSpace('/nowhere/y.wav', 1e30, '--out', broken)).not.toThrow();
  });
});

describe('createTextWriter', () => {
  it('writes pieces to a temporary file and renames it into place on close', () => {
    const p = join(dir, 'vectors.csv');
    writeFileSync(p, 'old');
    const w = createTextWriter(p);
    w.write('a,b\n');
    w.write('1,é\n');
    expect(readFileSync(p, 'utf8')).toBe('old'); // not replaced before close
    const tmp = readdirSync(dir).filter((n) => n.startsWith('.vectors.csv.'));
    expect(tmp).toHaveLength(1);
    w.close();
    expect(readFileSync(p, 'utf8')).toBe('a,b\n1,é\n');
    expect(readdirSync(dir).filter((n) => n.startsWith('.vectors.csv.'))).toEqual([]);
  });
  it('abort keeps the old file and removes the temporary one; a second abort does nothing', () => {
    const p = join(dir, 'kept.csv');
    writeFileSync(p, 'old');
    const w = createTextWriter(p);
    w.write('new');
    w.abort();
    w.abort();
    expect(readFileSync(p, 'utf8')).toBe('old');
    expect(readdirSync(dir).filter((n) => n.startsWith('.kept.csv.'))).toEqual([]);
  });
  it('refuses a missing folder with WRITE_FAILED naming it', () => {
    const p = join(dir, 'missing', 'x.csv');
    expectOrthotoneError(() => createTextWriter(p), 'WRITE_FAILED', /its folder .*missing does not exist/);
  });
  it('a failing write or close removes the temporary file and says WRITE_FAILED', () => {
    const p = join(dir, 'closed.csv');
    const w = createTextWriter(p);
    w.abort(); // closes the descriptor: the next write fails inside the writer
    expectOrthotoneError(() => w.write('x'), 'WRITE_FAILED', /cannot write .*closed\.csv/);
    expect(existsSync(p)).toBe(false);
    const w2 = createTextWriter(join(dir, 'closed2.csv'));
    w2.abort();
    expectOrthotoneError(() => w2.close(), 'WRITE_FAILED');
    expect(readdirSync(dir).filter((n) => n.startsWith('.closed'))).toEqual([]);
  });
});

describe('writeFileSet', () => {
  it('writes every file of the set and leaves no temporary file', () => {
    const d = join(dir, 'set1');
    mkdirSync(d);
    writeFileSet(d, [
      ['a.json', new TextEncoder().encode('{"a":1}')],
      ['b.h', new TextEncoder().encode('#define B 2\n')],
    ]);
    expect(readFileSync(join(d, 'a.json'), 'utf8')).toBe('{"a":1}');
    expect(readFileSync(join(d, 'b.h'), 'utf8')).toBe('#define B 2\n');
    expect(readdirSync(d).sort()).toEqual(['a.json', 'b.h']);
  });
  it('replaces nothing when one file fails, names it, and removes the staged ones', () => {
    const d = join(dir, 'set2');
    mkdirSync(d);
    writeFileSync(join(d, 'a.json'), 'old a');
    // The second name is a folder path that does not exist: its temporary file cannot be created.
    const e = expectOrthotoneError(
      () =>
        writeFileSet(d, [
          ['a.json', new TextEncoder().encode('new a')],
          ['nope/b.h', new TextEncoder().encode('b')],
        ]),
      'WRITE_FAILED',
      /nothing of the set was replaced/,
    );
    expect(e.message).toContain(join(d, 'nope/b.h'));
    expect(readFileSync(join(d, 'a.json'), 'utf8')).toBe('old a');
    expect(readdirSync(d)).toEqual(['a.json']);
  });
  it('when a rename fails, cleans the staged files and names the folder', () => {
    const d = join(dir, 'set3');
    mkdirSync(d);
    mkdirSync(join(d, 'taken')); // renaming a file over a folder fails (EISDIR)
    expectOrthotoneError(
      () => writeFileSet(d, [['taken', new TextEncoder().encode('x')]]),
      'WRITE_FAILED',
      new RegExp(`cannot write ${d}`),
    );
    expect(readdirSync(d)).toEqual(['taken']);
  });
});

describe('writeFileAtomic and assertDistinctFiles, the cases the CLI tests do not reach', () => {
  it('writes text as UTF-8 bytes, whatever its characters', () => {
    const p = join(dir, 'utf8.txt');
    const text = 'gain 0.1 dB · phase 1° € \u{1F4E1}';
    writeFileAtomic(p, text);
    expect(readFileSync(p)).toEqual(Buffer.from(text, 'utf8'));
    expect(readFileSync(p, 'utf8')).toBe(text);
  });
  it('two outputs that do not exist yet are the same file through a linked folder', () => {
    const real = join(dir, 'real-out');
    mkdirSync(real);
    const link = join(dir, 'link-out');
    symlinkSync(real, link);
    expectOrthotoneError(
      () =>
        assertDistinctFiles(
          [],
          [
            ['--out', join(real, 'x.wav')],
            ['--vectors', join(link, 'x.wav')],
          ],
        ),
      'OUTPUT_IS_INPUT',
      new RegExp(
        `^--vectors ${join(link, 'x.wav')} is also the output --out ${join(real, 'x.wav')}: writing it would destroy it; choose another file for --vectors$`,
      ),
    );
    expect(() =>
      assertDistinctFiles(
        [],
        [
          ['--out', join(real, 'x.wav')],
          ['--vectors', join(link, 'y.csv')],
        ],
      ),
    ).not.toThrow();
  });
  it('outputs in a folder that does not exist are compared by path', () => {
    const missing = join(dir, 'nowhere');
    expectOrthotoneError(
      () =>
        assertDistinctFiles(
          [],
          [
            ['--profile', join(missing, 'p.json')],
            ['--header', join(missing, 'p.json')],
          ],
        ),
      'OUTPUT_IS_INPUT',
      /--header .* is also the output --profile/,
    );
    expect(() =>
      assertDistinctFiles(
        [],
        [
          ['--profile', join(missing, 'p.json')],
          ['--header', join(missing, 'p.h')],
        ],
      ),
    ).not.toThrow();
  });
  it('skips undefined entries and stdout ("-"), and tells apart same names in different missing folders', () => {
    expect(() =>
      assertDistinctFiles(
        [['--input', undefined]],
        [
          ['--out', '-'],
          ['--vectors', '-'],
          ['--header', undefined],
          ['--profile', undefined],
        ],
      ),
    ).not.toThrow();
    expect(() =>
      assertDistinctFiles(
        [],
        [
          ['--profile', join(dir, 'missing-a', 'p.json')],
          ['--header', join(dir, 'missing-b', 'p.json')],
        ],
      ),
    ).not.toThrow();
  });
});

describe('no descriptor left open, no temporary file left (Linux /proc/self/fd, proc(5))', () => {
  const folder = join(dir, 'fds');
  mkdirSync(folder);
  const leftovers = () => readdirSync(folder).filter((n) => n.endsWith('.tmp'));

  it('after writeFileAtomic, a text writer closed or aborted, and a file set', (ctx) => {
    needDescriptors(ctx);
    writeFileAtomic(join(folder, 'a.bin'), new Uint8Array([1, 2, 3]));
    const w = createTextWriter(join(folder, 'b.csv'));
    w.write('x,y\n');
    w.close();
    const gone = createTextWriter(join(folder, 'c.csv'));
    gone.write('never kept');
    gone.abort();
    writeFileSet(folder, [['d.json', new TextEncoder().encode('{}')]]);
    expect(descriptorsUnder(folder)).toEqual([]);
    expect(leftovers()).toEqual([]);
    expect(readdirSync(folder).sort()).toEqual(['a.bin', 'b.csv', 'd.json']);
  });
  it('a second abort does not close a descriptor the process has opened since', (ctx) => {
    needDescriptors(ctx);
    const w = createTextWriter(join(folder, 'e.csv'));
    w.abort();
    // The lowest free number is reused: this is very likely the aborted writer's old descriptor.
    const other = openSync(join(folder, 'a.bin'), 'r');
    w.abort();
    expect(fstatSync(other).size).toBe(3);
    closeSync(other);
  });
  it('a rename onto a folder fails: the temporary file beside it is removed', () => {
    const target = join(folder, 'sub');
    mkdirSync(target);
    expectOrthotoneError(() => writeFileAtomic(target, 'x'), 'WRITE_FAILED', /cannot write .*sub/);
    expect(leftovers()).toEqual([]);
  });
});

describe('assertDistinctFiles between files that all exist', () => {
  it('an old output (to be replaced) that is not the input passes; the input itself does not', () => {
    const d = join(dir, 'exist');
    mkdirSync(d);
    for (const n of ['in.wav', 'out.wav', 'v.csv']) writeFileSync(join(d, n), n);
    expect(() =>
      assertDistinctFiles(
        [['input', join(d, 'in.wav')]],
        [
          ['--out', join(d, 'out.wav')],
          ['--vectors', join(d, 'v.csv')],
        ],
      ),
    ).not.toThrow();
    expectOrthotoneError(
      () => assertDistinctFiles([['input', join(d, 'in.wav')]], [['--out', join(d, 'in.wav')]]),
      'OUTPUT_IS_INPUT',
    );
  });
});

describe('a disk that fills up while writing (a real 64 KiB tmpfs; needs root)', () => {
  /** The small disk's folder, or the test is skipped (not root; fails under .ci/run). */
  const smallDisk = useSmallDisk(() => dir);
  const big = new Uint8Array(100_000).fill(65);
  const full = (p: string) => `cannot write ${p}: the disk is full (the previous file, if any, is kept)`;

  it('writeFileAtomic: WRITE_FAILED "disk is full", the old file kept, nothing else left or open', (ctx) => {
    const mnt = smallDisk(ctx);
    const p = join(mnt, 'keep.bin');
    writeFileAtomic(p, 'old');
    const e = expectOrthotoneError(() => writeFileAtomic(p, big), 'WRITE_FAILED');
    expect(e.message).toBe(full(p));
    expect(readFileSync(p, 'utf8')).toBe('old');
    expect(readdirSync(mnt)).toEqual(['keep.bin']);
    if (canListDescriptors) expect(descriptorsUnder(mnt)).toEqual([]);
  });
  it('createTextWriter: the failing write removes the temporary file and closes it', (ctx) => {
    const mnt = smallDisk(ctx);
    const p = join(mnt, 'table.csv');
    const w = createTextWriter(p);
    w.write('a,b\n');
    const e = expectOrthotoneError(() => w.write('x'.repeat(100_000)), 'WRITE_FAILED');
    expect(e.message).toBe(full(p));
    expect(readdirSync(mnt)).toEqual(['keep.bin']);
    if (canListDescriptors) expect(descriptorsUnder(mnt)).toEqual([]);
  });
  it('writeFileSet: the second file does not fit, so the first is not replaced either', (ctx) => {
    const mnt = smallDisk(ctx);
    writeFileAtomic(join(mnt, 'a.json'), 'old a');
    const e = expectOrthotoneError(
      () =>
        writeFileSet(mnt, [
          ['a.json', new TextEncoder().encode('new a')],
          ['b.h', big],
        ]),
      'WRITE_FAILED',
    );
    expect(e.message).toBe(`${full(join(mnt, 'b.h'))}; nothing of the set was replaced`);
    expect(readFileSync(join(mnt, 'a.json'), 'utf8')).toBe('old a');
    expect(readdirSync(mnt).sort()).toEqual(['a.json', 'keep.bin']);
    if (canListDescriptors) expect(descriptorsUnder(mnt)).toEqual([]);
  });
});
