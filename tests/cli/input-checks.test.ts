/**
 * Input the CLI used to accept silently, and messages that named the wrong thing (issue 12 items 6
 * and 7): each must end in exit status 2 and one line that names the option the user typed.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { cli, writeTestWav } from '../support/cli.js';

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

describe('bad samples and broken pipes', () => {
  it('measure of a capture holding NaN or Inf: exit 2 naming the sample', () => {
    for (const [bad, shown] of [
      [Number.NaN, 'NaN'],
      [Number.POSITIVE_INFINITY, 'Infinity'],
    ] as const) {
      const x = Float32Array.from(
        { length: 48000 },
        (_, k) => 0.5 * Math.sin((2 * Math.PI * 1000 * k) / 48000),
      );
      x[31234] = bad;
      const p = join(dir, `bad-${shown}.wav`);
      writeTestWav(p, [x, x], 48000);
      const line = refused(['measure', p, '--tones', '1000', '--iq']);
      expect(line).toMatch(new RegExp(`holds a non-finite sample \\(${shown}\\) at frame 31234, channel 0`));
    }
  });

  it('a command piped into head ends quietly (no EPIPE stack trace)', () => {
    const net = join(dir, 'pipe.json');
    const d = cli(['design', '--method', 'allpass', '--target', '50', '--format', 'json', '--out', net]);
    expect(d.status, d.stderr).toBe(0);
    const r = spawnSync(
      'sh',
      ['-c', `node dist/cli.js analyze ${net} --format csv --points 200000 | head -n 2`],
      {
        encoding: 'utf8',
      },
    );
    expect(r.stdout.split('\n').length).toBe(3);
    expect(r.stderr).toBe('');
  });
});

describe('silently accepted input, now refused with the option named', () => {
  const net = join(dir, 'n.json');
  const tone = (n: number, a = 0.5) =>
    Float32Array.from({ length: n }, (_, k) => a * Math.sin((2 * Math.PI * 1000 * k) / 48000));
  it('render: --duration too short for one sample, 0, --two-tone F,F, an input holding Inf', () => {
    expect(
      cli(['design', '--method', 'allpass', '--target', '50', '--format', 'json', '--out', net]).status,
    ).toBe(0);
    const out = join(dir, 'r.wav');
    expect(refused(['render', net, '--tone', '1000', '--duration', '1e-9', '--out', out])).toMatch(
      /--duration 1e-9 s is shorter than one sample at 48000 Hz/,
    );
    expect(refused(['render', net, '--tone', '1000', '--duration', '0', '--out', out])).toMatch(
      /--duration 0 s must be more than 0 and at most 3600 s/,
    );
    expect(refused(['render', net, '--two-tone', '1000,1000', '--out', out])).toMatch(
      /--two-tone 1000,1000 is one tone twice/,
    );
    const x = tone(4800);
    x[17] = Number.POSITIVE_INFINITY;
    const bad = join(dir, 'inf.wav');
    writeTestWav(bad, [x], 48000);
    expect(refused(['render', net, '--input', bad, '--out', out])).toMatch(
      /--input .*inf\.wav holds a non-finite sample \(Infinity\) at frame 17, channel 0: the file is damaged/,
    );
    expect(existsSync(out)).toBe(false);
  });

  it('measure: --tones "" and 0 Hz, a 3-channel file as I/Q, a truncated file', () => {
    const p = join(dir, 'm.wav');
    writeTestWav(p, [tone(48000), tone(48000)], 48000);
    expect(refused(['measure', p, '--tones', '', '--iq'])).toMatch(/--tones needs frequencies in Hz/);
    expect(refused(['measure', p, '--tones', '0'])).toMatch(
      /--tones 0 Hz must lie above 0 Hz and below Nyquist 24000 Hz/,
    );
    expect(refused(['measure', p, '--tone', '0', '--iq'])).toMatch(/--tone 0 Hz must lie above 0 Hz/);
    const three = join(dir, 'three.wav');
    writeTestWav(three, [tone(4800), tone(4800), tone(4800)], 48000);
    expect(refused(['measure', three, '--tones', '1000', '--iq'])).toMatch(
      /--iq needs an I\/Q file of exactly two channels .* has 3 channels/,
    );
    const cut = join(dir, 'cut.wav');
    writeFileSync(cut, readFileSync(p).subarray(0, 10_000));
    expect(refused(['measure', cut, '--tones', '1000', '--iq'])).toMatch(/the file is truncated/);
  });

  it('measure: a suppression beyond what the capture can read is shown as such, not as a figure', () => {
    const n = 48000;
    const i = Float32Array.from({ length: n }, (_, k) => 0.5 * Math.cos((2 * Math.PI * 1000 * k) / 48000));
    const q = Float32Array.from({ length: n }, (_, k) => 0.5 * Math.sin((2 * Math.PI * 1000 * k) / 48000));
    const p = join(dir, 'clean.wav');
    writeTestWav(p, [i, q], 48000);
    const r = cli(['measure', p, '--tone', '1000', '--iq']);
    expect(r.status, r.stderr).toBe(0);
    const json = JSON.parse(cli(['measure', p, '--tone', '1000', '--iq', '--format', 'json']).stdout);
    expect(json.carrierSuppressionDb).toBeGreaterThan(json.carrierMeasurableDb);
    expect(r.stdout).toMatch(
      new RegExp(
        `carrier suppression\\s+more than ${json.carrierMeasurableDb.toFixed(1)} dB \\(the carrier is below the floor`,
      ),
    );
  });

  it('seeds: -1, 1.5 and 1e30 refused', () => {
    const p = join(dir, 's.wav');
    writeTestWav(p, [tone(4800), tone(4800)], 48000);
    for (const s of ['-1', '1.5', '1e30']) {
      expect(refused(['simulate', p, '--out', join(dir, 'so.wav'), '--device-seed', s])).toMatch(
        new RegExp(
          `--device-seed ${String(Number(s)).replace('+', '\\+')} must be a whole number from 0 to 4294967295`,
        ),
      );
    }
    expect(refused(['render', '--noise', '--seed', '-1', '--out', join(dir, 'x.wav')])).toMatch(
      /--seed -1 must be/,
    );
  });
});
