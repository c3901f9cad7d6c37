// Runs the built CLI (npm test builds first) as a user would.
import { spawn } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { validateProfile } from '../../src/calibrate/profile.js';
import { TRANSMIT_CAUTIONS } from '../../src/core/cautions.js';
import { createRng } from '../../src/core/rng.js';
import { type Trims, ZERO_TRIMS } from '../../src/core/trims.js';
import { designNetwork } from '../../src/design/design-network.js';
import { networkToJson } from '../../src/export/network-json.js';
import { createVirtualExciter } from '../../src/simulate/exciter.js';
import { homebrewBenchDevice } from '../../src/simulate/model.js';
import { drawAnalyticDevice, trueCarrierDbc, trueSidebandDbc } from '../calibrate/analytic-exciter.js';
import { cli } from '../support/cli.js';

describe('orthotone calibrate --simulate', () => {
  it('nulls both on the virtual hand-built exciter within budget and writes a valid profile and header', () => {
    const dir = mkdtempSync(join(tmpdir(), 'ot-cal-'));
    const r = cli([
      'calibrate',
      '--simulate',
      '--seed',
      '3',
      '--format',
      'json',
      '--profile',
      join(dir, 'p.json'),
      '--header',
      join(dir, 'p.h'),
    ]);
    expect(r.status).toBe(0);
    const out = JSON.parse(r.stdout);
    for (const run of out.runs) {
      expect(run.readings).toBeLessThanOrEqual(16);
      expect(run.trueStartDb).toBeLessThan(46);
      expect(run.trueEndDb).toBeGreaterThan(65);
    }
    const p = validateProfile(JSON.parse(readFileSync(join(dir, 'p.json'), 'utf8')));
    expect(p.trims).toEqual(out.trims);
    expect(p.results.source).toBe('simulated');
    expect(readFileSync(join(dir, 'p.h'), 'utf8')).toMatch(/#define OT_CAL_GAIN_DB/);
  });
  it('--steps: every setting asked for and the result lie on the hardware grid, and the nulls still deepen', () => {
    const dir = mkdtempSync(join(tmpdir(), 'ot-cal-'));
    const steps = { gainDb: 0.05, phaseDeg: 0.1, dcI: 0.001, dcQ: 0.001 };
    const r = cli([
      'calibrate',
      '--simulate',
      '--steps',
      'gainDb=0.05,phaseDeg=0.1,dcI=0.001,dcQ=0.001',
      '--format',
      'json',
      '--profile',
      join(dir, 'p.json'),
    ]);
    expect(r.status).toBe(0);
    const out = JSON.parse(r.stdout);
    const onGrid = (x: number, step: number) => Math.abs(x / step - Math.round(x / step)) < 1e-6;
    const p = validateProfile(JSON.parse(readFileSync(join(dir, 'p.json'), 'utf8')));
    for (const t of [out.trims, ...p.readings.map((x) => x.trims)]) {
      for (const [k, step] of Object.entries(steps)) expect(onGrid(t[k], step), `${k} ${t[k]}`).toBe(true);
    }
    // A 0.05 dB / 0.1° grid can leave up to 0.025 dB and 0.05° of error: at least about 57 dB
    // (image-rejection formula, docs/REFERENCES.md §1); the carrier grid of 0.001 FS is finer than its null.
    for (const run of out.runs) expect(run.trueEndDb).toBeGreaterThan(run.trueStartDb + 10);
    expect(cli(['calibrate', '--simulate', '--steps', 'gain=0.1']).stderr).toMatch(
      /--steps "gain=0.1" must be/,
    );
  });
  it('prints the convergence table, the result and the cautions', () => {
    const r = cli(['calibrate', '--simulate', '--what', 'sideband', '--tolerance', 'resistorPct=1']);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/== sideband null: gain and phase trims ==/);
    expect(r.stdout).toMatch(/#\s+reading\s+setting\s+read dB\s+used in fit/);
    expect(r.stdout).toMatch(/true end dB/);
    for (const c of TRANSMIT_CAUTIONS) expect(r.stdout).toContain(c);
  });
  it('reports DC that cannot reach the output (ac-coupled preset) as TRIM_INACTIVE', () => {
    const r = cli([
      'calibrate',
      '--simulate',
      '--what',
      'carrier',
      '--preset',
      'ac-coupled',
      '--max-readings',
      '20',
    ]);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/note \[TRIM_INACTIVE\]: dcI does not move the carrier reading/);
    expect(r.stdout).toMatch(/stop: trim-inactive/);
  });
  it('refuses a missing or doubled mode with a usage error', () => {
    expect(cli(['calibrate']).status).toBe(2);
    const r = cli(['calibrate', '--simulate', '--prompt']);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/exactly one of --simulate, --prompt or --measure-command/);
  });
});

describe('orthotone calibrate: the sample rate and the network the profile was made with', () => {
  const profileOf = (args: string[]) => {
    const dir = mkdtempSync(join(tmpdir(), 'ot-cal-rate-'));
    const file = join(dir, 'p.json');
    const r = cli([
      'calibrate',
      '--simulate',
      '--what',
      'sideband',
      '--max-readings',
      '8',
      '--profile',
      file,
      ...args,
    ]);
    return {
      r,
      profile: r.status === 0 ? validateProfile(JSON.parse(readFileSync(file, 'utf8'))) : undefined,
    };
  };
  it('--rate sets the profile sample rate (no network: network null)', () => {
    const { r, profile } = profileOf(['--rate', '44100']);
    expect(r.status).toBe(0);
    expect(profile!.sampleRate).toBe(44100);
    expect(profile!.network).toBeNull();
  });
  it('--network FILE: the rate comes from the network document, which the profile carries', () => {
    const dir = mkdtempSync(join(tmpdir(), 'ot-cal-net-'));
    const netFile = join(dir, 'net.json');
    const net = designNetwork({ sampleRate: 96000, band: [300, 3000], method: 'allpass', targetDb: 50 });
    writeFileSync(netFile, networkToJson(net));
    const { r, profile } = profileOf(['--network', netFile]);
    expect(r.status).toBe(0);
    expect(profile!.sampleRate).toBe(96000);
    expect(profile!.network).toEqual(JSON.parse(networkToJson(net)));
    // The same rate given twice is accepted; a different one is refused, naming both.
    expect(profileOf(['--network', netFile, '--rate', '96000']).r.status).toBe(0);
    const clash = profileOf(['--network', netFile, '--rate', '48000']).r;
    expect(clash.status).toBe(2);
    expect(clash.stderr).toMatch(/--rate 48000 Hz .*96000 Hz/);
  });
  it('refuses a bad rate, a tone above Nyquist, and an unreadable or invalid network file', () => {
    const bad = (args: string[], re: RegExp) => {
      const r = cli(['calibrate', '--simulate', '--what', 'sideband', ...args]);
      expect(r.status).toBe(2);
      expect(r.stderr).toMatch(re);
    };
    bad(['--rate', 'fast'], /--rate "fast" is not a number/);
    bad(['--rate', '500'], /sampleRate 500/);
    bad(['--rate', '8000', '--tone', '5000'], /--tone 5000 Hz must lie below .*4000 Hz/);
    bad(['--network', '/nonexistent/net.json'], /cannot read \/nonexistent\/net.json/);
    const dir = mkdtempSync(join(tmpdir(), 'ot-cal-bad-'));
    writeFileSync(join(dir, 'x.json'), '{"format":"something-else"}');
    bad(['--network', join(dir, 'x.json')], /network/);
  });
});

describe('orthotone calibrate --measure-command', () => {
  it('reads levels printed by a command given the trims in the environment', () => {
    // The command computes the exact IRR formula (Schmidt, QEX 1994) for a fixed imperfect path.
    const cmd =
      'node -e "const g=1.012*10**(+process.env.OT_GAIN_DB/20),p=0.021+process.env.OT_PHASE_DEG*Math.PI/180;const c=2*g*Math.cos(p);console.log((-10*Math.log10((1+c+g*g)/(1-c+g*g))).toFixed(3))"';
    const r = cli([
      'calibrate',
      '--measure-command',
      cmd,
      '--what',
      'sideband',
      '--format',
      'json',
      '--noise',
      '0.1',
    ]);
    expect(r.status).toBe(0);
    const out = JSON.parse(r.stdout);
    const g = 1.012 * 10 ** (out.trims.gainDb / 20);
    const p = 0.021 + (out.trims.phaseDeg * Math.PI) / 180;
    // Readings are noiseless here and unbounded below: the null is found to better than 80 dB.
    expect(
      10 * Math.log10((1 + 2 * g * Math.cos(p) + g * g) / (1 - 2 * g * Math.cos(p) + g * g)),
    ).toBeGreaterThan(80);
  });
});

describe('orthotone calibrate --prompt', () => {
  it('asks for each reading, accepts retry and undo, and finishes with the null', async () => {
    const dev = drawAnalyticDevice(createRng(77));
    const rng = createRng(78);
    const child = spawn('node', ['dist/cli.js', 'calibrate', '--prompt', '--max-readings', '14']);
    let buf = '';
    let all = '';
    let answered = 0;
    let lastSetting = '';
    const done = new Promise<number>((resolve) => child.on('close', (code) => resolve(code ?? -1)));
    child.stdout.on('data', (d: Buffer) => {
      buf += d.toString();
      all += d.toString();
      for (;;) {
        const k = buf.indexOf('(retry | undo | quit): ');
        if (k < 0) break;
        const chunk = buf.slice(0, k);
        buf = buf.slice(k + 1);
        const m =
          /set (gain ([-+\d.]+) dB, phase ([-+\d.]+)°|dcI ([-+\d.]+), dcQ ([-+\d.]+))\s*\n[^\n]*$/.exec(
            chunk,
          );
        if (!m) continue;
        answered++;
        lastSetting = m[0];
        let level: number;
        if (m[2] !== undefined) level = trueSidebandDbc(dev, { gainDb: +m[2], phaseDeg: +m[3]! });
        else level = trueCarrierDbc(dev, { dcI: +m[4]!, dcQ: +m[5]! });
        level = 10 * Math.log10(10 ** (level / 10) + 1e-7) + 0.3 * rng.normal();
        if (answered === 3) child.stdin.write('retry\n');
        else if (answered === 5) child.stdin.write('-10\n');
        else if (answered === 6) child.stdin.write('undo\n');
        else child.stdin.write(`${level.toFixed(2)}\n`);
      }
    });
    const code = await done;
    expect(code).toBe(0);
    expect(answered).toBeGreaterThan(10);
    expect(lastSetting).toMatch(/set /);
    expect(all).toMatch(/dropped reading 4/);
    expect(all).toMatch(/result \(levels as read/);
    expect(all).toMatch(/stop: (floor|budget|target)/);
  });
});

describe('orthotone calibrate --prompt --together (both levels off one analyzer display)', () => {
  it('asks for both levels per step, accepts retry, a bad line and undo, and nulls both', async () => {
    // The person's analyzer reads the virtual hand-built exciter (invented bench of our own) at a
    // 1 kHz tone of half full scale: its noiseless response, a −70 dBc floor power-added, and
    // 0.3 dB of seeded reading noise.
    const ex = createVirtualExciter(homebrewBenchDevice(), { sampleRate: 48000, seed: 5 });
    const rng = createRng(79);
    const floor = 1e-7;
    const read = (t: Trims) => {
      const r = ex.response(1000, t, 0.5);
      const f = (dbc: number) => 10 * Math.log10(10 ** (dbc / 10) + floor) + 0.3 * rng.normal();
      return [f(r.unwantedDbc), f(r.carrierDbc)] as const;
    };
    const dir = mkdtempSync(join(tmpdir(), 'ot-cal-both-'));
    const child = spawn('node', [
      'dist/cli.js',
      'calibrate',
      '--prompt',
      '--together',
      '--max-readings',
      '16',
      '--profile',
      join(dir, 'p.json'),
    ]);
    let buf = '';
    let all = '';
    let asked = 0;
    const done = new Promise<number>((resolve) => child.on('close', (code) => resolve(code ?? -1)));
    const setting = /set gain ([-+\d.]+) dB, phase ([-+\d.]+)°, dcI ([-+\d.]+), dcQ ([-+\d.]+)\s*\n[^\n]*$/;
    child.stdout.on('data', (d: Buffer) => {
      buf += d.toString();
      all += d.toString();
      for (;;) {
        const k = buf.indexOf('(retry | undo | quit): ');
        if (k < 0) break;
        const chunk = buf.slice(0, k);
        buf = buf.slice(k + 1);
        const m = setting.exec(chunk);
        asked++;
        if (!m) {
          // Asked again after retry or a line that was not two levels: the setting is unchanged.
          child.stdin.write(`${lastAnswer}\n`);
          continue;
        }
        const t: Trims = { ...ZERO_TRIMS, gainDb: +m[1]!, phaseDeg: +m[2]!, dcI: +m[3]!, dcQ: +m[4]! };
        const [sb, cr] = read(t);
        lastAnswer = `${sb.toFixed(2)} ${cr.toFixed(2)}`;
        if (asked === 3) child.stdin.write('retry\n');
        else if (asked === 5)
          child.stdin.write('-43.5\n'); // one number only: asked again
        else if (asked === 8)
          child.stdin.write('-10 dBc, -10 dBc\n'); // a slip, undone next
        else if (asked === 9) child.stdin.write('undo\n');
        else child.stdin.write(`${sb.toFixed(2)} dBc ${cr.toFixed(2)}\n`);
      }
    });
    let lastAnswer = '';
    const code = await done;
    expect(code).toBe(0);
    expect(all).toMatch(/sideband and carrier levels at 1000 Hz/);
    expect(all).toMatch(/is not two levels/);
    expect(all).toMatch(/dropped reading \d+/);
    expect(all).toMatch(/== sideband and carrier nulls together/);
    const p = validateProfile(JSON.parse(readFileSync(join(dir, 'p.json'), 'utf8')));
    expect(p.results.readingsUsed).toBeLessThanOrEqual(16);
    // The slip (−10, −10) was undone: no kept reading says −10.
    expect(p.readings.some((r) => r.levelDb === -10)).toBe(false);
    const after = ex.response(1000, p.trims, 0.5);
    // From about 44 dB sideband and 34 dB carrier (common practice, no source) to deep nulls.
    expect(-after.unwantedDbc).toBeGreaterThan(60);
    expect(-after.carrierDbc).toBeGreaterThan(60);
  });
  it('--together with --simulate reads both per step within one budget; refused with --what sideband', () => {
    const r = cli(['calibrate', '--simulate', '--together', '--format', 'json', '--max-readings', '16']);
    expect(r.status).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.profile.results.readingsUsed).toBeLessThanOrEqual(16);
    for (const run of out.runs) expect(run.trueEndDb).toBeGreaterThan(60);
    const bad = cli(['calibrate', '--simulate', '--together', '--what', 'sideband']);
    expect(bad.status).toBe(2);
    expect(bad.stderr).toMatch(/--together .* --what both/);
  });
});
