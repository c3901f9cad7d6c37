/**
 * src/node/files.ts helpers tested directly (the CLI tests reach them only through child processes):
 * write-error messages per errno code, temporary names, the free-space check, the piecewise text
 * writer and the all-or-nothing file set. Errno codes and rename semantics: IEEE Std 1003.1
 * (`rename()`, `<errno.h>`).
 */
import {
  existsSync,
  mkdirSync,
  mkdtempSync,
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
  it('passes a size the disk holds and refuses one it cannot, naming the option, sizes and fix', () => {
    const s = statfsSync(dir);
    const free = s.bavail * s.bsize;
    expect(() => checkFreeSpace(join(dir, 'a.wav'), 1000, '--out')).not.toThrow();
    expect(() => checkFreeSpace(join(dir, 'a.wav'), free, '--out')).not.toThrow();
    const e = expectOrthotoneError(
      () => checkFreeSpace(join(dir, 'a.wav'), free + 1, '--out'),
      'WRITE_FAILED',
    );
    expect(e.message).toContain(`--out ${join(dir, 'a.wav')} needs `);
    expect(e.message).toContain('free: shorten the file, choose a smaller encoding, or free space');
  });
  it('prints sizes in kB, MB or GB by magnitude', () => {
    const s = statfsSync(dir);
    const free = s.bavail * s.bsize;
    const msg = (bytes: number) => {
      try {
        checkFreeSpace(join(dir, 'b.wav'), bytes, '--vectors');
      } catch (e) {
        return (e as Error).message;
      }
      return '';
    };
    const huge = msg(free + 5e12);
    expect(huge).toMatch(/needs \d+\.\d\d GB but its disk has/);
    // The free figure in the unit its magnitude calls for.
    const unit = free >= 1e9 ? 'GB' : free >= 1e6 ? 'MB' : 'kB';
    expect(huge).toMatch(new RegExp(`has \\d+\\.\\d+ ${unit} free`));
  });
  it('leaves a missing folder to the open that follows (no error here)', () => {
    expect(() => checkFreeSpace(join(dir, 'no-such-folder', 'x', 'y.wav'), 1e30, '--out')).not.toThrow();
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
