/**
 * Every command that applies trims takes `--profile FILE` (issue 13): render applies a profile's
 * trims, sideband and correction (a trim given on the command line wins), simulate applies them to
 * its I/Q input before the virtual exciter; render --tones plays the across-the-band signal.
 * Machine output stays clean: with --format json stdout parses as JSON and the cautions are on stderr.
 * Checks against docs/REFERENCES.md §1 (image rejection of a phase error alone: 1° → 41.183 dB).
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createProfile } from '../../src/calibrate/profile.js';
import { imageRejectionDb } from '../../src/core/units.js';
import { profileToJson } from '../../src/export/profile-json.js';
import { kaiserHilbertNetwork } from '../generate/reference-networks.js';

const cli = join(__dirname, '../../dist/cli.js');
const dir = mkdtempSync(join(tmpdir(), 'orthotone-profile-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
beforeAll(() => {
  if (!existsSync(cli))
    execFileSync('npm', ['run', 'build'], { cwd: join(__dirname, '../..'), stdio: 'ignore' });
});

function run(args: string[]) {
  const r = spawnSync(process.execPath, [cli, ...args], { encoding: 'utf8' });
  return { code: r.status, out: r.stdout, err: r.stderr };
}

const netFile = join(dir, 'fir.json');
writeFileSync(netFile, JSON.stringify(kaiserHilbertNetwork(511, 12, [2000, 22000], 48000)));
const profile = join(dir, 'profile.json');
writeFileSync(
  profile,
  profileToJson(createProfile({ sampleRate: 48000, toneHz: 9000, trims: { phaseDeg: 1 } })),
);

describe('--profile and --tones', () => {
  it('render applies the profile trims; a trim option given beside it wins', () => {
    const r = run([
      'render',
      netFile,
      '--tone',
      '9000',
      '--duration',
      '0.5',
      '--profile',
      profile,
      '--out',
      join(dir, 'a.wav'),
      '--format',
      'json',
    ]);
    expect(r.code, r.err).toBe(0);
    const json = JSON.parse(r.out);
    expect(json.trims.phaseDeg).toBe(1);
    expect(Math.abs(-json.realised.tones[0].unwantedDbc - imageRejectionDb(1, Math.PI / 180))).toBeLessThan(
      0.05,
    );
    expect(r.err).toMatch(/dummy load/);
    const o = run([
      'render',
      netFile,
      '--tone',
      '9000',
      '--duration',
      '0.5',
      '--profile',
      profile,
      '--phase-deg',
      '0',
      '--out',
      join(dir, 'b.wav'),
      '--format',
      'json',
    ]);
    expect(JSON.parse(o.out).trims.phaseDeg).toBe(0);
  });

  it('render refuses a profile made at another sample rate, naming --profile', () => {
    const p44 = join(dir, 'p44.json');
    writeFileSync(p44, profileToJson(createProfile({ sampleRate: 44100, toneHz: 1000, trims: {} })));
    const r = run(['render', netFile, '--tone', '9000', '--profile', p44, '--out', join(dir, 'c.wav')]);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/--profile .*44100 Hz.*48000 Hz/);
  });

  it('render --tones writes K tones, each 20·log10(K) dB below the sum peak', () => {
    const r = run([
      'render',
      netFile,
      '--tones',
      '4000,9000,15000',
      '--level',
      '-6',
      '--duration',
      '0.5',
      '--out',
      join(dir, 't.wav'),
      '--format',
      'json',
    ]);
    expect(r.code, r.err).toBe(0);
    const json = JSON.parse(r.out);
    expect(json.signal.kind).toBe('multitone');
    expect(json.realised.tones).toHaveLength(3);
    for (const t of json.realised.tones) expect(t.wantedDbfs).toBeCloseTo(-6 - 20 * Math.log10(3), 1);
  });

  it('simulate applies the profile trims to its input before the exciter', () => {
    const plain = join(dir, 'plain.wav');
    expect(run(['render', netFile, '--tone', '9000', '--duration', '0.3', '--out', plain]).code).toBe(0);
    const a = run(['simulate', plain, '--out', join(dir, 's0.wav'), '--format', 'json']);
    const b = run([
      'simulate',
      plain,
      '--out',
      join(dir, 's1.wav'),
      '--format',
      'json',
      '--profile',
      profile,
    ]);
    expect(a.code, a.err).toBe(0);
    expect(b.code, b.err).toBe(0);
    const ja = JSON.parse(a.out);
    const jb = JSON.parse(b.out);
    expect(ja.trims).toBeNull();
    expect(jb.trims.phaseDeg).toBe(1);
    // The prediction follows the trims: a 1° phase trim changes the predicted sideband figure.
    expect(jb.predicted[0].sidebandDb).not.toBeCloseTo(ja.predicted[0].sidebandDb, 1);
  });
});
