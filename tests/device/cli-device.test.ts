/**
 * `orthotone device` and `orthotone bridge` as a user runs them (the built CLI), against the
 * compiled virtual device on a real pty. Needs `npm run build`.
 */
import { spawn } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { designNetwork } from '../../src/design/design-network.js';
import { buildFirmware, killAllDevices, type RunningDevice, startDevice } from './virtual-device.js';

let fw: string;
let work: string;
let dev: RunningDevice;
const nvm = () => join(work, 'nvm.bin');
const state = () => join(work, 'state.json');

/** The built CLI, run asynchronously. */
function cli(args: string[]): Promise<{ status: number | null; stdout: string; stderr: string }> {
  return new Promise((resolve) => {
    const p = spawn('node', ['dist/cli.js', ...args], { stdio: ['ignore', 'pipe', 'pipe'] });
    let stdout = '';
    let stderr = '';
    p.stdout.on('data', (b: Buffer) => (stdout += b.toString()));
    p.stderr.on('data', (b: Buffer) => (stderr += b.toString()));
    p.on('close', (status) => resolve({ status, stdout, stderr }));
  });
}

beforeAll(async () => {
  fw = buildFirmware();
  work = mkdtempSync(join(tmpdir(), 'ot-cli-dev-'));
  dev = await startDevice(fw, ['--nvm', nvm(), '--state-file', state()]);
});
afterAll(killAllDevices);

describe('orthotone device', () => {
  it('identifies, sets, reads back, loads a network and stores across a reset', async () => {
    const id = await cli(['device', dev.path, 'identify']);
    expect(id.status, id.stderr).toBe(0);
    expect(id.stdout).toMatch(/link protocol 1/);
    expect(id.stdout).toMatch(/sample rate 48000 Hz, arithmetic q15/);
    const set = await cli(['device', dev.path, 'set', 'gain=0.3', 'dcq=-0.001', '--format', 'json']);
    expect(set.status, set.stderr).toBe(0);
    expect(set.stderr).toMatch(/dummy load/); // the cautions, where output may be transmitted
    const applied = JSON.parse(set.stdout) as { gainDb: number; dcQ: number };
    expect(applied.gainDb).toBeCloseTo(0.3, 3);
    const back = await cli(['device', dev.path, 'trims', '--format', 'json']);
    expect(JSON.parse(back.stdout)).toEqual(applied);
    const netFile = join(work, 'net.json');
    writeFileSync(
      netFile,
      JSON.stringify(
        designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'allpass', targetDb: 50 }),
      ),
    );
    const load = await cli(['device', dev.path, 'load', netFile]);
    expect(load.status, load.stderr).toBe(0);
    expect(load.stdout).toMatch(/loaded the allpass network \(q15, checksum [0-9A-F]{4}\)/);
    expect((await cli(['device', dev.path, 'store'])).status).toBe(0);
    expect((await cli(['device', dev.path, 'set', 'gain=1'])).status).toBe(0); // not stored
    dev.proc.kill('SIGUSR1'); // reset: power-on state comes from the non-volatile memory
    await new Promise((r) => setTimeout(r, 100));
    const after = await cli(['device', dev.path, 'trims', '--format', 'json']);
    expect(JSON.parse(after.stdout)).toEqual(applied);
    expect(JSON.parse(readFileSync(state(), 'utf8')).gainDb).toBe(applied.gainDb);
  });

  it('bad input exits 2 with one line; a missing device exits 1 with one line', async () => {
    const big = await cli(['device', dev.path, 'set', 'gain=9']);
    expect(big.status).toBe(2);
    expect(
      big.stderr
        .trim()
        .split('\n')
        .filter((l) => l.startsWith('orthotone:')),
    ).toEqual(["orthotone: gainDb 9 dB is outside the device's range: use a value from -6 to 6 dB"]);
    const word = await cli(['device', dev.path, 'set', 'volume=3']);
    expect(word.status).toBe(2);
    expect(word.stderr).toMatch(/KEY=VALUE with KEY gain, phase, dci or dcq/);
    const act = await cli(['device', dev.path, 'frobnicate']);
    expect(act.status).toBe(2);
    const gone = await cli(['device', join(work, 'no-such-port'), 'trims']);
    expect(gone.status).toBe(1);
    expect(gone.stderr.trim()).toMatch(/^orthotone: cannot open .*no-such-port: it does not exist/);
    expect(gone.stderr).not.toMatch(/\n\s+at /); // no stack trace
  });
});

describe('orthotone bridge', () => {
  it('listens on 127.0.0.1, prints its address and stops cleanly on SIGTERM', async () => {
    const p = spawn('node', ['dist/cli.js', 'bridge', '--device', dev.path, '--port', '0'], {
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    const line = await new Promise<string>((res) => {
      let out = '';
      p.stdout.on('data', (b: Buffer) => {
        out += b.toString();
        if (out.includes('\n')) res(out);
      });
    });
    expect(line).toMatch(/^bridge: ws:\/\/127\.0\.0\.1:\d+ -> /);
    const code = new Promise<number | null>((res) => p.on('close', (c) => res(c)));
    p.kill('SIGTERM');
    expect(await code).toBe(0);
  });

  it('needs --device', async () => {
    const r = await cli(['bridge']);
    expect(r.status).toBe(2);
    expect(r.stderr.trim()).toBe('orthotone: bridge needs --device PATH (the serial port to serve)');
  });
});
