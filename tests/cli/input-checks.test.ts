/**
 * Input the CLI used to accept silently, and messages that named the wrong thing (issue 12 items 6
 * and 7): each must end in exit status 2 and one line that names the option the user typed.
 */
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { cli } from '../support/cli.js';

const dir = mkdtempSync(join(tmpdir(), 'orthotone-input-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Runs the CLI expecting exit status 2 and exactly one line on stderr; returns that line. */
function refused(args: string[]): string {
  const r = cli(args);
  expect(r.status, r.stderr + r.stdout).toBe(2);
  const lines = r.stderr.trimEnd().split('\n');
  expect(lines, r.stderr).toHaveLength(1);
  expect(r.stderr).not.toMatch(/\n\s+at /);
  return lines[0]!;
}

describe('design options', () => {
  it('--taps alone designs a Hilbert FIR of that length (the size names the network type)', () => {
    const r = cli(['design', '--taps', '63', '--format', 'json']);
    expect(r.status, r.stderr).toBe(0);
    const net = JSON.parse(r.stdout);
    expect(net.kind).toBe('fir');
    expect(net.taps).toHaveLength(63);
  });

  it('--taps with another --method is refused, naming both options', () => {
    expect(refused(['design', '--taps', '63', '--method', 'allpass'])).toMatch(
      /--taps sets the size of a Hilbert FIR but --method is allpass/,
    );
  });

  it('--rate must be a whole number of Hz, so design never writes a file render refuses', () => {
    const out = join(dir, 'frac.json');
    expect(refused(['design', '--rate', '48000.5', '--format', 'json', '--out', out])).toMatch(
      /^orthotone: --rate 48000.5 must be a whole number of Hz/,
    );
    expect(existsSync(out)).toBe(false);
    expect(refused(['design', '--rate', '-48000'])).toMatch(
      /--rate -48000 must be a whole number of Hz from 1000/,
    );
  });

  it('library keys appear as the CLI options the user typed', () => {
    const line = refused(['design', '--target', '250']);
    expect(line).toMatch(/--target 250 dB is out of range/);
    expect(line).not.toMatch(/targetDb/);
  });

  it('an option given twice is refused; an unknown one names the nearest', () => {
    expect(refused(['design', '--taps', '63', '--taps', '65'])).toBe(
      'orthotone: --taps is given twice: give it once',
    );
    expect(refused(['design', '--tagret', '50'])).toMatch(/unknown option --tagret: did you mean --target\?/);
  });
});
