// Runs the built CLI (npm test builds first) as a user would.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { validateNetwork } from '../../src/design/network.js';
import { cli } from '../support/cli.js';
import { ownSweep } from '../support/network-response.js';

/**
 * Worst suppression over [lo, hi] by a plain dense sweep of the document's coefficients, with the
 * tests' own evaluator (tests/support/network-response.ts, no code shared with src/design).
 */
function sweepWorst(doc: unknown, lo: number, hi: number): number {
  return ownSweep(validateNetwork(doc), 4000, 'log', [lo, hi]).worstSuppressionDb;
}

describe('orthotone design', () => {
  it.each([
    [48000, '300:3000', 60],
    [48000, '300:3000', 70],
    [8000, '200:3400', 50],
    [96000, '100:10000', 80],
  ])(
    'rate %d, band %s, all-pass target %d dB: the JSON document meets it and predicts honestly',
    (rate, band, target) => {
      const r = cli([
        'design',
        '--rate',
        String(rate),
        '--band',
        band,
        '--method',
        'allpass',
        '--target',
        String(target),
        '--format',
        'json',
      ]);
      expect(r.status).toBe(0);
      const doc = JSON.parse(r.stdout);
      const [lo, hi] = band.split(':').map(Number) as [number, number];
      const worst = sweepWorst(doc, lo, hi);
      expect(worst).toBeGreaterThanOrEqual(target - 0.01);
      expect(Math.abs(doc.predicted.worstSuppressionDb - worst)).toBeLessThan(0.1);
      // No more sections than the optimum needs: one section fewer misses the target.
      const n = doc.branches.i.sections.length + doc.branches.q.sections.length;
      const fewer = cli([
        'design',
        '--rate',
        String(rate),
        '--band',
        band,
        '--method',
        'allpass',
        '--sections',
        String(n - 1),
        '--format',
        'json',
      ]);
      expect(fewer.status).toBe(0);
      expect(sweepWorst(JSON.parse(fewer.stdout), lo, hi)).toBeLessThan(target);
    },
  );

  it('--coefficients q15: the Q15 values in the document and header meet the target', () => {
    const r = cli([
      'design',
      '--method',
      'allpass',
      '--target',
      '60',
      '--coefficients',
      'q15',
      '--format',
      'json',
    ]);
    expect(r.status).toBe(0);
    const doc = JSON.parse(r.stdout);
    expect(sweepWorst(doc, 300, 3000)).toBeGreaterThanOrEqual(60);
    const a = [...doc.branches.i.sections, ...doc.branches.q.sections].map((s: { a: number }) => s.a);
    for (const x of a) expect(Number.isInteger(x * 32768)).toBe(true);
    expect(cli(['design', '--coefficients', 'q7']).stderr).toMatch(/--coefficients "q7" must be/);
  });

  it('writes a C header and CSV to files, and a readable table by default', () => {
    const dir = mkdtempSync(join(tmpdir(), 'orthotone-cli-'));
    expect(cli(['design', '--format', 'c', '--out', join(dir, 'n.h')]).status).toBe(0);
    expect(readFileSync(join(dir, 'n.h'), 'utf8')).toMatch(/#ifndef OT_NETWORK_H/);
    expect(
      cli(['design', '--method', 'fir', '--target', '40', '--format', 'csv', '--out', join(dir, 'n.csv')])
        .status,
    ).toBe(0);
    expect(readFileSync(join(dir, 'n.csv'), 'utf8')).toMatch(/^index,offset,tap\n/);
    const table = cli(['design']).stdout;
    expect(table).toMatch(/worst suppression\s+\d+\.\d\d dB/);
    expect(table).toMatch(/why this network/);
  });

  it('exits 2 with one line naming the bad value', () => {
    for (const args of [
      ['design', '--band', '300:30000'],
      ['design', '--band', '3000:300'],
      ['design', '--rate', 'abc'],
      ['design', '--method', 'iir'],
      ['design', '--nonsense'],
      ['design', '--method', 'allpass', '--target', '400'],
      ['analyze', '/nonexistent.json'],
      ['design', '--out', '/nonexistent-folder/net.json'],
      ['render', '--tone', '1000', '--duration', '0.1', '--out', '/nonexistent-folder/t.wav'],
    ]) {
      const r = cli(args);
      expect(r.status, args.join(' ')).toBe(2);
      expect(r.stderr.trim().split('\n')).toHaveLength(1);
    }
    expect(cli(['design', '--band', '300:30000']).stderr).toMatch(/30000 Hz must be below Nyquist 24000 Hz/);
    expect(cli(['design', '--out', '/nonexistent-folder/net.json']).stderr).toMatch(
      /cannot write \/nonexistent-folder\/net.json: its folder \/nonexistent-folder does not exist/,
    );
  });

  it('has --help on every command it knows', () => {
    expect(cli(['--help']).stdout).toMatch(/dummy load/);
    for (const c of ['design', 'analyze']) {
      const r = cli([c, '--help']);
      expect(r.status).toBe(0);
      expect(r.stdout).toMatch(/^usage: orthotone /);
    }
  });
});

describe('orthotone analyze', () => {
  it('evaluates a file written by design, JSON agreeing with the document', () => {
    const dir = mkdtempSync(join(tmpdir(), 'orthotone-cli-'));
    const file = join(dir, 'n.json');
    execFileSync('node', ['dist/cli.js', 'design', '--target', '60', '--format', 'json', '--out', file]);
    const doc = JSON.parse(readFileSync(file, 'utf8'));
    const a = JSON.parse(cli(['analyze', file, '--format', 'json']).stdout);
    expect(Math.abs(a.worst.suppressionDb - doc.predicted.worstSuppressionDb)).toBeLessThan(0.1);
    expect(a.points.length).toBe(2000);
    expect(cli(['analyze', file]).stdout).toMatch(/outside the design band/);
  });
});
