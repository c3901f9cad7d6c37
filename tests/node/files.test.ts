import { linkSync, mkdtempSync, readdirSync, readFileSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { assertDistinctFiles, writeFileAtomic } from '../../src/node/files.js';
import { expectOrthotoneError } from '../support/errors.js';

const dir = () => mkdtempSync(join(tmpdir(), 'ot-files-'));

describe('writeFileAtomic', () => {
  it('writes text and bytes and leaves no temporary file behind', () => {
    const d = dir();
    writeFileAtomic(join(d, 'a.txt'), 'hello');
    writeFileAtomic(join(d, 'b.bin'), new Uint8Array([1, 2, 3]));
    expect(readFileSync(join(d, 'a.txt'), 'utf8')).toBe('hello');
    expect([...readFileSync(join(d, 'b.bin'))]).toEqual([1, 2, 3]);
    expect(readdirSync(d).sort()).toEqual(['a.txt', 'b.bin']);
  });

  it('keeps the old file and names the folder when the write fails', () => {
    const d = dir();
    writeFileSync(join(d, 'keep.txt'), 'old');
    expectOrthotoneError(
      () => writeFileAtomic(join(d, 'missing', 'x.txt'), 'new'),
      'WRITE_FAILED',
      /does not exist/,
    );
    // a folder in the way of the rename: the write fails and the folder's neighbour is untouched
    expectOrthotoneError(() => writeFileAtomic(d, 'new'), 'WRITE_FAILED', /cannot write/);
    expect(readFileSync(join(d, 'keep.txt'), 'utf8')).toBe('old');
    expect(readdirSync(d)).toEqual(['keep.txt']);
  });
});

describe('assertDistinctFiles', () => {
  it('refuses an output that is an input by name, hard link or symbolic link, and two equal outputs', () => {
    const d = dir();
    const input = join(d, 'in.wav');
    writeFileSync(input, 'x');
    linkSync(input, join(d, 'hard.wav'));
    symlinkSync(input, join(d, 'soft.wav'));
    for (const out of [input, join(d, '.', 'in.wav'), join(d, 'hard.wav'), join(d, 'soft.wav')]) {
      expectOrthotoneError(
        () => assertDistinctFiles([['input', input]], [['--out', out]]),
        'OUTPUT_IS_INPUT',
        /--out .* is also the input input/,
      );
    }
    expectOrthotoneError(
      () =>
        assertDistinctFiles(
          [],
          [
            ['--profile', join(d, 'p')],
            ['--header', join(d, 'p')],
          ],
        ),
      'OUTPUT_IS_INPUT',
      /--header .* is also the output --profile/,
    );
  });

  it('accepts distinct files, missing outputs and stdout', () => {
    const d = dir();
    writeFileSync(join(d, 'in.wav'), 'x');
    expect(() =>
      assertDistinctFiles(
        [['input', join(d, 'in.wav')]],
        [
          ['--out', join(d, 'out.wav')],
          ['--vectors', join(d, 'v.csv')],
          ['--json', '-'],
          ['--x', undefined],
        ],
      ),
    ).not.toThrow();
  });
});
