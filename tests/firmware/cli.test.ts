/**
 * The firmware workflow through the built command, as a firmware author runs it: design a network,
 * write a kit, build it with make, render test vectors in the kit's arithmetic, feed the vectors'
 * input to host-check, and port-check the capture (bit-exact; then a damaged capture is caught).
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { cli } from '../support/cli.js';

const dir = mkdtempSync(join(tmpdir(), 'ortho-fw-cli-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function kitRoundTrip(arithmetic: 'q15' | 'q31', trims: string[]): void {
  const net = join(dir, `net-${arithmetic}.json`);
  let r = cli(['design', '--arithmetic', arithmetic, '--format', 'json', '--out', net]);
  expect(r.status, r.stderr).toBe(0);
  const kit = join(dir, `kit-${arithmetic}`);
  r = cli(['firmware', net, '--arithmetic', arithmetic, '--out', kit, '--max-skew', '2']);
  expect(r.status, r.stderr).toBe(0);
  expect(r.stdout).toMatch(new RegExp(`wrote .*kit-${arithmetic}: ${arithmetic} kit`));
  expect(readFileSync(join(kit, 'README.md'), 'utf8')).toMatch(/Word lengths and headroom/);
  execFileSync('make', ['-s', '-C', kit, 'host-check'], { stdio: 'pipe' });
  const vec = join(dir, `v-${arithmetic}.csv`);
  r = cli([
    'render',
    net,
    '--arithmetic',
    arithmetic,
    '--max-skew',
    '2',
    '--two-tone',
    '700,1900',
    '--duration',
    '0.5',
    '--out',
    join(dir, `o-${arithmetic}.wav`),
    '--vectors',
    vec,
    ...trims,
  ]);
  expect(r.status, r.stderr).toBe(0);
  const input = readFileSync(vec, 'utf8')
    .trim()
    .split('\n')
    .slice(1)
    .map((l) => l.split(',')[1])
    .join('\n');
  const hc = spawnSync(
    join(kit, 'host-check'),
    trims.map((t) => (t === '--skew' ? '--skew-samples' : t)),
    {
      input: `${input}\n`,
      encoding: 'utf8',
    },
  );
  expect(hc.status, hc.stderr).toBe(0);
  const cap = join(dir, `cap-${arithmetic}.txt`);
  writeFileSync(cap, hc.stdout);
  r = cli(['port-check', vec, cap]);
  expect(r.stdout, r.stderr).toMatch(/^bit-exact: all 24000 samples match/);
  expect(r.status).toBe(0);
  // One sample off by one LSB is found, with its place and size.
  const lines = hc.stdout.trimEnd().split('\n');
  const [a, b] = lines[1234]!.split(' ');
  const lsb = arithmetic === 'q15' ? 2 ** -15 : 2 ** -31;
  lines[1234] = `${a} ${Number(b) + lsb}`;
  writeFileSync(cap, `${lines.join('\n')}\n`);
  r = cli(['port-check', vec, cap, '--format', 'json']);
  expect(r.status).toBe(1);
  const rep = JSON.parse(r.stdout);
  expect(rep.bitExact).toBe(false);
  expect(rep.mismatches).toBe(1);
  expect(rep.firstMismatch.n).toBe(1234);
  expect(rep.largestError.channel).toBe('q');
  expect(rep.largestError.error).toBeCloseTo(lsb, 12);
}

describe('orthotone firmware, render --arithmetic, port-check', () => {
  it('q15 kit: vectors, host-check and port-check agree bit for bit; a one-LSB error is reported', () => {
    kitRoundTrip('q15', ['--gain-db', '0.3', '--phase-deg', '-1.1', '--dc-i', '0.004', '--skew', '0.6']);
  });
  it('q31 kit: the same, through round-trip digits (Q31 does not fit float32)', () => {
    kitRoundTrip('q31', ['--gain-db', '-0.2', '--dc-q', '-0.01']);
  });
  it('design --format c warns on the wrote line when Q15 misses the target, and names --coefficients', () => {
    const out = join(dir, 'net.h');
    const r = cli(['design', '--method', 'allpass', '--target', '60', '--format', 'c', '--out', out]);
    expect(r.status).toBe(0);
    expect(r.stderr).toMatch(
      /wrote .*net\.h .*warning: after rounding, Q15 59\.\d\d dB miss the 60 dB target: .*--coefficients q15/,
    );
    const ok = cli([
      'design',
      '--method',
      'allpass',
      '--target',
      '60',
      '--coefficients',
      'q15',
      '--format',
      'c',
      '--out',
      out,
    ]);
    expect(ok.stderr).not.toMatch(/warning/);
  });
  it('analyze --arithmetic q15 reports image rejection, noise floor, headroom and limit cycles', () => {
    const net = join(dir, 'a.json');
    cli(['design', '--method', 'allpass', '--target', '60', '--format', 'json', '--out', net]);
    const r = cli(['analyze', net, '--arithmetic', 'q15']);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/image rejection\s+59\.\d\d dB worst/);
    expect(r.stdout).toMatch(/noise floor\s+-98\.1 dBFS/);
    expect(r.stdout).toMatch(/no limit cycle/);
    const bad = cli(['firmware', net, '--arithmetic', 'q16', '--out', join(dir, 'x')]);
    expect(bad.status).toBe(2);
    expect(bad.stderr).toMatch(/--arithmetic "q16" must be float, q31 or q15/);
    expect(existsSync(join(dir, 'x'))).toBe(false);
  });
});
