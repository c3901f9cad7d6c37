/**
 * The firmware's protocol parser (firmware/protocol.c), compiled with cc: seeded random bytes,
 * noise lines, over-long lines and shuffled protocol words fed byte by byte must never crash it
 * (address and undefined-behaviour sanitizers when the compiler has them), every answer is one
 * printable line within the bound, and a valid command after the noise is answered exactly.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';

let exe: string;
let sanitized = true;

beforeAll(() => {
  exe = join(mkdtempSync(join(tmpdir(), 'ot-fuzz-')), 'fuzz_parser');
  const src = [
    resolve('tests/device/fuzz_parser.c'),
    resolve('firmware/protocol.c'),
    `-I${resolve('firmware')}`,
  ];
  const base = ['-std=c99', '-O1', '-g', '-Wall', '-Wextra', '-o', exe];
  const san = spawnSync('cc', [...base, '-fsanitize=address,undefined', '-fno-sanitize-recover=all', ...src]);
  if (san.status !== 0) {
    sanitized = false; // a compiler without the sanitizer runtimes: still run, a crash still fails
    execFileSync('cc', [...base, ...src]);
  }
});

describe('firmware protocol parser under random input', () => {
  it.each([1, 7, 20261202])(
    'seed %i: no crash, bounded printable answers, still answers after noise',
    (seed) => {
      const r = spawnSync(exe, [String(seed), '4000'], { encoding: 'utf8' });
      expect(r.status, `${r.stderr}\n(sanitizers: ${sanitized})`).toBe(0);
      const out = JSON.parse(r.stdout) as { answers: number; bad: number; lines: number };
      expect(out.bad).toBe(0);
      expect(out.answers).toBeGreaterThan(1000); // the input really reached the dispatcher
    },
  );
});
