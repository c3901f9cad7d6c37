// Issue 9's bugs in `orthotone calibrate`, each reproduced against the built CLI (npm test builds
// first): profile readings at the trims actually used, --prompt quit / pipe / file / end of input,
// --measure-command failures, --timeout and the child's process group, writability checked before
// the first reading, and the parse rules for typed and printed levels. The readings come from the
// analytic exciter (IRR formula, K. Schmidt, QEX Aug 1994 §2; carrier |d|/A, docs/REFERENCES.md §1).
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { validateProfile } from '../../src/calibrate/profile.js';
import { createRng } from '../../src/core/rng.js';
import { drawAnalyticDevice, trueCarrierDbc, trueSidebandDbc } from '../calibrate/analytic-exciter.js';
import { cli } from '../support/cli.js';

const tmp = () => mkdtempSync(join(tmpdir(), 'ot-cal9-'));

/** Whether a process runs (a zombie, killed but not yet reaped by its new parent, does not). */
const running = (pid: number): boolean => {
  try {
    const stat = readFileSync(`/proc/${pid}/stat`, 'utf8');
    return !/^\d+ \(.*\) [ZX]/.test(stat);
  } catch {
    return false;
  }
};

/** Runs the CLI with `input` written to its stdin through a pipe, all at once, then closed. */
const withInput = (args: string[], input: string) =>
  spawnSync('node', ['dist/cli.js', ...args], { encoding: 'utf8', input });

/** A measure command (shell script) that reads the analytic device and logs the trims it saw. */
function measureScript(dir: string): { cmd: string; log: string } {
  const dev = drawAnalyticDevice(createRng(17));
  const log = join(dir, 'seen.log');
  const js = join(dir, 'measure.mjs');
  writeFileSync(
    js,
    `import { appendFileSync } from 'node:fs';
const dev = ${JSON.stringify(dev)};
const e = process.env;
const t = { gainDb: +e.OT_GAIN_DB, phaseDeg: +e.OT_PHASE_DEG, dcI: +e.OT_DC_I, dcQ: +e.OT_DC_Q };
appendFileSync(${JSON.stringify(log)}, JSON.stringify({ q: e.OT_QUANTITY, t: [e.OT_GAIN_DB, e.OT_PHASE_DEG, e.OT_DC_I, e.OT_DC_Q] }) + '\\n');
const g = dev.gain * 10 ** (t.gainDb / 20), p = dev.phaseRad + (t.phaseDeg * Math.PI) / 180;
const irr = (1 + 2 * g * Math.cos(p) + g * g) / (1 - 2 * g * Math.cos(p) + g * g);
const sb = -10 * Math.log10(irr);
const cr = 20 * Math.log10(Math.hypot(dev.dcI + t.dcI, dev.dcQ + dev.dcGainQ * t.dcQ) / dev.toneAmplitude);
const lv = (x) => 10 * Math.log10(10 ** (x / 10) + 1e-7);
console.log((e.OT_QUANTITY === 'carrier' ? lv(cr) : lv(sb)).toFixed(3));
`,
  );
  return { cmd: `node ${js}`, log };
}

describe('calibrate: profile readings carry the trims in force (issue 9 bug)', () => {
  it('--simulate, --what both: the carrier readings were taken at the sideband result, and say so', () => {
    const dir = tmp();
    const r = cli(['calibrate', '--simulate', '--format', 'json', '--profile', join(dir, 'p.json')]);
    expect(r.status).toBe(0);
    const p = validateProfile(JSON.parse(readFileSync(join(dir, 'p.json'), 'utf8')));
    const carrier = p.readings.filter((x) => x.quantity === 'carrier');
    expect(carrier.length).toBeGreaterThan(3);
    for (const x of carrier) {
      expect(x.trims.gainDb).toBe(p.trims.gainDb);
      expect(x.trims.phaseDeg).toBe(p.trims.phaseDeg);
    }
    expect(p.trims.gainDb).not.toBe(0);
  });
  it('--measure-command: every profile reading carries exactly the trims the command was given', () => {
    const dir = tmp();
    const { cmd, log } = measureScript(dir);
    const r = cli([
      'calibrate',
      '--measure-command',
      cmd,
      '--max-readings',
      '6',
      '--profile',
      join(dir, 'p.json'),
    ]);
    expect(r.status, r.stderr).toBe(0);
    const seen = readFileSync(log, 'utf8')
      .trim()
      .split('\n')
      .map((l) => JSON.parse(l));
    const p = validateProfile(JSON.parse(readFileSync(join(dir, 'p.json'), 'utf8')));
    expect(p.readings).toHaveLength(seen.length);
    p.readings.forEach((x, i) => {
      expect(x.quantity).toBe(seen[i].q);
      expect([x.trims.gainDb, x.trims.phaseDeg, x.trims.dcI, x.trims.dcQ].map(String)).toEqual(seen[i].t);
    });
  });
});

describe('calibrate --prompt: quit, pipes, files and end of input (issue 9 bugs)', () => {
  it('answers from a file, all before the first question, are all used; end of input keeps the best, writes the profile and exits 3', () => {
    const dir = tmp();
    const dev = drawAnalyticDevice(createRng(23));
    // A person who read the analyzer at the start only: the same level for every question.
    const answers = `${trueSidebandDbc(dev, { gainDb: 0, phaseDeg: 0 }).toFixed(2)}\n`.repeat(4);
    writeFileSync(join(dir, 'answers.txt'), answers);
    const r = spawnSync(
      'sh',
      [
        '-c',
        `node dist/cli.js calibrate --prompt --profile ${join(dir, 'p.json')} < ${join(dir, 'answers.txt')}`,
      ],
      { encoding: 'utf8' },
    );
    expect(r.status).toBe(3);
    expect(r.stdout.match(/\[sideband reading \d+/g)).toHaveLength(5);
    expect(r.stdout).toMatch(/end of input/);
    expect(r.stdout).toMatch(/cut short \(input ended\): sideband and carrier nulls unfinished/);
    const p = validateProfile(JSON.parse(readFileSync(join(dir, 'p.json'), 'utf8')));
    expect(p.readings).toHaveLength(4);
    expect(p.note).toMatch(/unfinished/);
  });
  it('quit in the sideband null: exit 3, no NaN, the profile written with what was read', () => {
    const dir = tmp();
    const r = withInput(['calibrate', '--prompt', '--profile', join(dir, 'p.json')], '-40\n-35\nquit\n');
    expect(r.status).toBe(3);
    expect(r.stdout).not.toMatch(/NaN/);
    expect(r.stderr).toBe('');
    expect(r.stdout).toMatch(/cut short \(quit\)/);
    const p = validateProfile(JSON.parse(readFileSync(join(dir, 'p.json'), 'utf8')));
    expect(p.readings.map((x) => x.levelDb)).toEqual([-40, -35]);
    expect(p.results.carrierDb).toBeUndefined();
  });
  it('refuses 0x10, 12abc, 999 dB and 5000 dB with a clear message, and confirms a first level ≥ 0 dB', () => {
    const r = withInput(
      ['calibrate', '--prompt', '--what', 'sideband'],
      '0x10\n12abc\n999\n5000 dB\n44\n-44\nquit\n',
    );
    expect(r.stdout).toMatch(/"0x10" is not a decimal number/);
    expect(r.stdout).toMatch(/"12abc" is not a decimal number/);
    expect(r.stdout).toMatch(/999 dB lies outside/);
    expect(r.stdout).toMatch(/5000 dB lies outside/);
    expect(r.stdout).toMatch(
      /\+44 dB reads as at or above the wanted tone; a suppression of 44 dB is a level of -44/,
    );
    // -44 replaced 44: the next setting is a probe from a start read at −44.
    expect(r.stdout).toMatch(/best so far: .*\(-44\.0 dB\)/);
  });
});

describe('calibrate --measure-command failures, --timeout and Ctrl-C (issue 9 bugs)', () => {
  for (const [what, cmd, msg] of [
    ['exit 3', 'exit 3', /exited with status 3: it must exit 0 and print one level/],
    ['not found', 'no-such-analyzer-command-9', /command not found .*check its name and PATH/],
    ['prints nothing', 'true', /printed nothing/],
    ['NaN', 'echo NaN', /"NaN" is not a decimal number/],
    ['garbage', 'echo level=-40x', /is not a decimal number/],
    ['1e999', 'echo 1e999', /is not a decimal number/],
  ] as const) {
    it(`${what}: names the command and the fix, keeps the start, writes the profile, exits 3`, () => {
      const dir = tmp();
      const r = cli(['calibrate', '--measure-command', cmd, '--profile', join(dir, 'p.json')]);
      expect(r.status).toBe(3);
      expect(r.stdout).toMatch(
        new RegExp(`--measure-command '${cmd.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}'`),
      );
      expect(r.stdout).toMatch(msg);
      expect(r.stdout).toMatch(/cut short \(readings kept failing\)/);
      expect(r.stdout).not.toMatch(/NaN dB/);
      const p = validateProfile(JSON.parse(readFileSync(join(dir, 'p.json'), 'utf8')));
      expect(p.trims.gainDb).toBe(0);
    });
  }
  it('--timeout ends a hung reading and kills the command with its children', () => {
    const dir = tmp();
    const pidFile = join(dir, 'child.pid');
    const t0 = Date.now();
    const r = cli([
      'calibrate',
      '--what',
      'sideband',
      '--timeout',
      '0.5',
      '--measure-command',
      `sleep 30 & echo $! >> ${pidFile}; wait`,
    ]);
    expect(Date.now() - t0).toBeLessThan(10_000);
    expect(r.status).toBe(3);
    expect(r.stdout).toMatch(/took longer than 0.5 s/);
    for (const pid of readFileSync(pidFile, 'utf8').trim().split('\n').map(Number)) {
      expect(running(pid), `sleep ${pid} still running`).toBe(false);
    }
  });
  it('Ctrl-C during a reading kills the command group, keeps the best, writes the profile, exits 130', async () => {
    const dir = tmp();
    const pidFile = join(dir, 'child.pid');
    const child = spawn('node', [
      'dist/cli.js',
      'calibrate',
      '--what',
      'sideband',
      '--profile',
      join(dir, 'p.json'),
      '--measure-command',
      `sleep 30 & echo $! >> ${pidFile}; wait`,
    ]);
    let out = '';
    child.stdout.on('data', (d) => {
      out += d;
    });
    const done = new Promise<number>((res) => child.on('close', (c) => res(c ?? -1)));
    for (let i = 0; i < 100 && !existsSync(pidFile); i++) await new Promise((r) => setTimeout(r, 50));
    child.kill('SIGINT');
    expect(await done).toBe(130);
    expect(out).toMatch(/cut short \(interrupted \(Ctrl-C\)\)/);
    expect(existsSync(join(dir, 'p.json'))).toBe(true);
    await new Promise((r) => setTimeout(r, 300));
    for (const pid of readFileSync(pidFile, 'utf8').trim().split('\n').map(Number)) {
      expect(running(pid), `sleep ${pid} still running`).toBe(false);
    }
  });
});

describe('calibrate: outputs and seeds checked before the first reading', () => {
  it('a --profile or --header in a missing folder is refused before any question is asked', () => {
    for (const opt of ['--profile', '--header']) {
      const r = withInput(['calibrate', '--prompt', opt, '/no/such/folder/p.out'], '-40\n');
      expect(r.status).toBe(2);
      expect(r.stderr).toMatch(new RegExp(`${opt} /no/such/folder/p.out: cannot write into`));
      expect(r.stdout).not.toMatch(/reading 1/);
    }
  });
  it('--network n.json --profile n.json is refused', () => {
    const dir = tmp();
    writeFileSync(join(dir, 'n.json'), '{}');
    const r = cli([
      'calibrate',
      '--simulate',
      '--network',
      join(dir, 'n.json'),
      '--profile',
      join(dir, 'n.json'),
    ]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/--profile .* is also the input --network/);
  });
  it('--device-seed −1, 1.5 and 1e30 are refused', () => {
    for (const s of ['-1', '1.5', '1e30']) {
      const r = cli(['calibrate', '--simulate', `--device-seed=${s}`]);
      expect(r.status, s).toBe(2);
      expect(r.stderr).toMatch(/--device-seed .* must be a whole number from 0 to 4294967295/);
    }
  });
  it('--session and --resume continue a typed session where it was cut short', () => {
    const dir = tmp();
    const dev = drawAnalyticDevice(createRng(31));
    const s = join(dir, 's.json');
    const first = withInput(
      ['calibrate', '--prompt', '--what', 'carrier', '--session', s],
      `${trueCarrierDbc(dev, { dcI: 0, dcQ: 0 }).toFixed(2)}\nquit\n`,
    );
    expect(first.status).toBe(3);
    const r = withInput(['calibrate', '--prompt', '--what', 'carrier', '--resume', s], 'quit\n');
    expect(r.stdout).toMatch(/resumed 1 reading\(s\)/);
    expect(r.stdout).toMatch(/\[carrier reading 2 /);
  });
});

describe('calibrate --what band (issue 9 item 5)', () => {
  it('--simulate on a skewed codec: a correction the profile carries, and the band deepens', () => {
    const dir = tmp();
    const r = cli([
      'calibrate',
      '--simulate',
      '--what',
      'band',
      '--tolerance',
      'skewSeconds=2e-6,couplingHighPassHz=20,antiImagingLowPassHz=20000,cornerPct=10',
      '--max-readings',
      '24',
      '--format',
      'json',
      '--profile',
      join(dir, 'p.json'),
    ]);
    expect(r.status, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.readings).toBeLessThanOrEqual(24);
    expect(out.trueWorstAfterDb).toBeGreaterThan(out.trueWorstBeforeDb + 15);
    const p = validateProfile(JSON.parse(readFileSync(join(dir, 'p.json'), 'utf8')));
    expect(p.correction?.qFromQ).toHaveLength(31);
    expect(p.tonesHz).toEqual(out.tonesHz);
    expect(p.readings.every((x) => x.quantity.startsWith('tone:'))).toBe(true);
  });
  it('--measure-command gets the tones and prints one level per tone; too few tones is refused', () => {
    const bad = cli(['calibrate', '--simulate', '--what', 'band', '--tones', '1000']);
    expect(bad.status).toBe(2);
    expect(bad.stderr).toMatch(/--tones 1000 must list at least 2 tones/);
    const r = cli([
      'calibrate',
      '--what',
      'band',
      '--measure-command',
      'echo "$OT_QUANTITY $OT_TONES_HZ" >&2; echo -40 -41',
    ]);
    expect(r.status).toBe(2);
    expect(r.stdout).toMatch(/is not 5 levels/);
  });
});
