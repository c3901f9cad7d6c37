/**
 * `orthotone analyze` and the network file checks (issue 12 item 1): every figure shown is computed
 * from the coefficients; stored `predicted` / `cost` figures that disagree are reported; a document
 * lacking them is analysed, not crashed on; bad documents and outputs that would destroy the input
 * are refused with one line.
 */
import { mkdtempSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { designNetwork } from '../../src/design/design-network.js';
import { cli } from '../support/cli.js';
import { ownWorstDb } from '../support/network-response.js';

const dir = mkdtempSync(join(tmpdir(), 'orthotone-analyze-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const good = designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'allpass', targetDb: 60 });

function file(name: string, doc: unknown): string {
  const p = join(dir, name);
  writeFileSync(p, typeof doc === 'string' ? doc : JSON.stringify(doc));
  return p;
}

const headline = (table: string): number => Number(/worst suppression\s+([\d.-]+) dB/.exec(table)![1]);

describe('orthotone analyze: figures from the coefficients', () => {
  it('a hand-rounded coefficient: table and JSON show the same computed figure, and the disagreement', () => {
    if (good.kind !== 'allpass') throw new Error('expected an all-pass pair');
    const edited = structuredClone(good);
    const s = edited.branches.q.sections[0]!;
    s.a = Math.round(s.a * 100) / 100;
    const p = file('rounded.json', edited);
    const own = ownWorstDb(edited, 4000);
    const t = cli(['analyze', p]);
    expect(t.status, t.stderr).toBe(0);
    // Computed, by the tests' own evaluator (tests/support/network-response.ts), not the stored value.
    expect(Math.abs(headline(t.stdout) - own)).toBeLessThan(0.05);
    expect(Math.abs(headline(t.stdout) - good.predicted.worstSuppressionDb)).toBeGreaterThan(5);
    expect(t.stdout).toMatch(
      new RegExp(
        `worst suppression: stored says ${good.predicted.worstSuppressionDb.toFixed(2)} dB, computed`,
      ),
    );
    const j = cli(['analyze', p, '--format', 'json']);
    expect(j.status).toBe(0);
    const doc = JSON.parse(j.stdout);
    expect(doc.storedFiguresAgree).toBe(false);
    expect(doc.worst.suppressionDb.toFixed(2)).toBe(headline(t.stdout).toFixed(2));
    expect(j.stderr).toMatch(/^WARNING: .*stored figures disagree/);
  });

  it('an all-zero FIR: 0 dB suppression (Q silent: |1 + 0|/|1 − 0|), whatever the file stores', () => {
    const taps = new Array(63).fill(0);
    const p = file('zero.json', {
      format: 'orthotone-network',
      version: 1,
      kind: 'fir',
      sampleRate: 48000,
      band: [300, 3000],
      taps,
      predicted: { worstSuppressionDb: 60.22, maxPhaseErrorDeg: 0.1, maxGainErrorDb: 0.01 },
      cost: { multipliesPerSample: 16, latencySamples: 31 },
      design: {},
    });
    const t = cli(['analyze', p]);
    expect(t.status, t.stderr).toBe(0);
    expect(Math.abs(headline(t.stdout))).toBeLessThan(0.01);
    expect(t.stdout).toMatch(/stored says 60\.22 dB/);
  });

  it('a document without predicted fields is analysed, not a TypeError', () => {
    const { predicted: _p, cost: _c, ...bare } = good;
    const p = file('bare.json', { ...bare, predicted: { worstSuppressionDb: 61 } });
    const t = cli(['analyze', p]);
    expect(t.status, t.stderr).toBe(0);
    expect(t.stderr).not.toMatch(/TypeError/);
    expect(t.stdout).toMatch(/no valid predicted\.maxGainErrorDb/);
    expect(t.stdout).toMatch(/no valid cost\.latencySamples/);
    expect(Math.abs(headline(t.stdout) - ownWorstDb(good, 4000))).toBeLessThan(0.05);
  });

  it('render shows the computed figure, not the 999 dB the file claims, and warns', () => {
    const p = file('claims.json', { ...good, predicted: { ...good.predicted, worstSuppressionDb: 999 } });
    const r = cli(['render', p, '--tone', '1000', '--duration', '0.1', '--out', join(dir, 'claims.wav')]);
    expect(r.status, r.stderr).toBe(0);
    const shown = Number(/worst suppression ([\d.]+) dB over the band \(computed/.exec(r.stdout)![1]);
    expect(Math.abs(shown - ownWorstDb(good, 4000))).toBeLessThan(0.05);
    expect(r.stdout).not.toMatch(/999/);
    expect(r.stderr).toMatch(/worst suppression: stored says 999\.00 dB, computed from the coefficients/);
  });

  it('a file that agrees shows no warning', () => {
    const t = cli(['analyze', file('good.json', good)]);
    expect(t.status).toBe(0);
    expect(t.stdout).not.toMatch(/WARNING/);
  });
});

describe('orthotone analyze: refused documents and outputs', () => {
  const one = (args: string[]): string => {
    const r = cli(args);
    expect(r.status, r.stdout + r.stderr).toBe(2);
    expect(r.stderr.trimEnd().split('\n')).toHaveLength(1);
    return r.stderr;
  };

  it('--out equal to the input is refused and the input kept', () => {
    const p = file('keep.json', good);
    const before = readFileSync(p, 'utf8');
    expect(one(['analyze', p, '--out', p])).toMatch(/--out .* is also the input FILE/);
    expect(readFileSync(p, 'utf8')).toBe(before);
  });

  it('a reversed band, a version written as text, a binary file, /dev/zero', () => {
    expect(one(['analyze', file('rev.json', { ...good, band: [3000, 300] })])).toMatch(
      /band lower edge 3000 Hz must be below the upper edge 300 Hz/,
    );
    expect(one(['analyze', file('ver.json', { ...good, version: '1' })])).toMatch(
      /version "1" is not supported: this library reads version 1 \(the number 1\)/,
    );
    const bin = join(dir, 'bin.json');
    writeFileSync(bin, Buffer.from([0x7b, 0x01, 0x02, 0xff, 0x1b, 0x5b, 0x32, 0x4a]));
    const m = one(['analyze', bin]);
    // Printable ASCII only: no raw byte of the file reaches the terminal.
    expect([...m.trimEnd()].every((c) => c >= ' ' && c <= '~')).toBe(true);
    expect(m).toMatch(/not valid JSON/);
    if (statSync('/dev/zero', { throwIfNoEntry: false }))
      expect(one(['analyze', '/dev/zero'])).toMatch(/\/dev\/zero is larger than 16 MiB/);
  });
});
