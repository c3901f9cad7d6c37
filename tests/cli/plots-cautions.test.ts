/**
 * issue 13, the command line: `--plot FILE.svg` on analyze, design and calibrate writes a plain SVG
 * whose title carries a figure computed from the same data the command prints; the transmitting
 * cautions appear once per command (start and calibrate printed them twice), and on stderr when
 * stdout carries JSON. (The pictures themselves are checked in Chromium in
 * tests/browser/svg-plot.test.ts.)
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { TRANSMIT_CAUTIONS } from '../../src/core/cautions.js';

const dir = mkdtempSync(join(tmpdir(), 'orthotone-plots-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const cli = (args: string[]) => spawnSync('node', ['dist/cli.js', ...args], { encoding: 'utf8' });
const count = (text: string, what: string): number => text.split(what).length - 1;

describe('--plot and the cautions', () => {
  it('design and analyze draw the response; the title names the worst figure the table shows', () => {
    const net = join(dir, 'net.json');
    const d = cli([
      'design',
      '--method',
      'allpass',
      '--target',
      '60',
      '--format',
      'json',
      '--out',
      net,
      '--plot',
      join(dir, 'design.svg'),
    ]);
    expect(d.status, d.stderr).toBe(0);
    const svg = readFileSync(join(dir, 'design.svg'), 'utf8');
    expect(svg.startsWith('<svg')).toBe(true);
    const worst = JSON.parse(readFileSync(net, 'utf8')).predicted.worstSuppressionDb as number;
    expect(svg).toContain(`worst ${worst.toFixed(1)} dB`);
    const a = cli(['analyze', net, '--plot', join(dir, 'analyze.svg')]);
    expect(a.status, a.stderr).toBe(0);
    expect(readFileSync(join(dir, 'analyze.svg'), 'utf8')).toContain('opposite-sideband suppression (dB)');
    // The plot may not overwrite the input.
    const same = cli(['analyze', net, '--plot', net]);
    expect(same.status).toBe(2);
    expect(same.stderr).toMatch(/--plot/);
  });

  it('calibrate draws its convergence and prints the cautions once', () => {
    const plot = join(dir, 'conv.svg');
    const r = cli(['calibrate', '--simulate', '--what', 'sideband', '--max-readings', '20', '--plot', plot]);
    expect(r.status, r.stderr).toBe(0);
    const svg = readFileSync(plot, 'utf8');
    expect(svg).toContain('sideband: best so far (dBc)');
    for (const c of TRANSMIT_CAUTIONS) expect(count(r.stdout + r.stderr, c)).toBe(1);
  });

  it('calibrate --format json keeps stdout JSON and puts the cautions on stderr', () => {
    const r = cli([
      'calibrate',
      '--simulate',
      '--what',
      'sideband',
      '--max-readings',
      '12',
      '--format',
      'json',
    ]);
    expect(r.status, r.stderr).toBe(0);
    expect(() => JSON.parse(r.stdout)).not.toThrow();
    for (const c of TRANSMIT_CAUTIONS) expect(count(r.stderr, c)).toBe(1);
  });

  it('start prints the cautions once', () => {
    const r = cli(['start', '--out', join(dir, 'start')]);
    expect(r.status, r.stderr).toBe(0);
    for (const c of TRANSMIT_CAUTIONS) expect(count(r.stdout, c)).toBe(1);
  });
});
