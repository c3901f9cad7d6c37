/**
 * The device link on real components: the compiled virtual device (firmware/protocol.c and
 * firmware/virtual_device.c, built with make) on a real pseudo-terminal, driven through the
 * `serialport` package. Faults: garbage lines, a device reset (fresh greeting), the device killed
 * and restarted, a stalled device, an unplugged device, another protocol version.
 */
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { isOrthotoneError } from '../../src/core/errors.js';
import { designNetwork } from '../../src/design/design-network.js';
import { type DeviceLink, openDeviceLink } from '../../src/device/link.js';
import { openSerialChannel, serialConnector } from '../../src/node/serial-transport.js';
import { buildFirmware, killAllDevices, startDevice } from './virtual-device.js';

let fw: string;
let work: string;
const links: DeviceLink[] = [];
const open = async (path: string, opts: Parameters<typeof openDeviceLink>[1] = {}) => {
  const l = await openDeviceLink(serialConnector(path), opts);
  links.push(l);
  return l;
};

beforeAll(() => {
  fw = buildFirmware();
  work = mkdtempSync(join(tmpdir(), 'ot-link-'));
});
afterEach(async () => {
  await Promise.all(links.splice(0).map((l) => l.close()));
  await killAllDevices();
});
afterAll(killAllDevices);

const readState = (f: string) => JSON.parse(readFileSync(f, 'utf8')) as Record<string, number>;

describe('device link over a real pseudo-terminal', () => {
  it('greets, sets trims atomically and reads back what the device applies (state file agrees)', async () => {
    const state = join(work, 'state1.json');
    const dev = await startDevice(fw, ['--state-file', state]);
    const link = await open(dev.path);
    expect(link.info.link).toBe(1);
    expect(link.info.sampleRate).toBe(48000);
    expect(link.info.arithmetic).toBe('q15');
    // Q2.14 gain: one code step near unity is 20·log10(1 + 2⁻¹⁴) dB
    expect(link.info.resolution.gainDb).toBeCloseTo(20 * Math.log10(1 + 2 ** -14), 6);
    const applied = await link.setTrims({ gainDb: 0.35, phaseDeg: -1.2, dcI: 0.0012, dcQ: -0.0007 });
    expect(Math.abs(applied.gainDb - 0.35)).toBeLessThan(link.info.resolution.gainDb);
    expect(Math.abs(applied.phaseDeg + 1.2)).toBeLessThan(link.info.resolution.phaseDeg);
    expect(Math.abs(applied.dcI - 0.0012)).toBeLessThanOrEqual(link.info.resolution.dc / 2 + 1e-12);
    expect(await link.readTrims()).toEqual(applied);
    const s = readState(state);
    expect(s.gainDb).toBeCloseTo(applied.gainDb, 8);
    expect(s.dcQ).toBeCloseTo(applied.dcQ, 8);
    // only DC changes; gain and phase keep their applied values
    const again = await link.setTrims({ dcI: 0 });
    expect(again.gainDb).toBe(applied.gainDb);
    expect(again.dcI).toBe(0);
    expect(link.history.filter((r) => r.what === 'trims')).toHaveLength(2);
  });

  it('refuses out-of-range trims on the host and reports the device refusal with its code', async () => {
    const dev = await startDevice(fw);
    const link = await open(dev.path);
    await expect(link.setTrims({ gainDb: 9 })).rejects.toThrow(/gainDb 9 dB is outside the device's range/);
    await expect(link.setSource({ kind: 'tone', toneHz: 30000, amplitude: 0.5 })).rejects.toThrow(
      /DEVICE|RANGE/,
    );
    await link.setSideband('lower');
    await link.setSource({ kind: 'two-tone', toneHz: 700, secondHz: 1900, amplitude: 0.4 });
  });

  it('ignores garbage lines from the device', async () => {
    const dev = await startDevice(fw, ['--garbage-every', '2']);
    const link = await open(dev.path);
    for (let k = 0; k < 6; k++) await link.setTrims({ gainDb: k * 0.1 });
    expect(link.garbageLines).toBeGreaterThanOrEqual(3);
    expect((await link.readTrims()).gainDb).toBeCloseTo(0.5, 3);
  });

  it('meets a device reset (fresh greeting) by greeting and re-applying the trims', async () => {
    const state = join(work, 'state2.json');
    const dev = await startDevice(fw, ['--state-file', state]);
    const link = await open(dev.path);
    await link.setTrims({ gainDb: 0.8, dcQ: 0.01 });
    dev.proc.kill('SIGUSR1'); // power-on state: trims zero
    // the link restores the trims on its own, without waiting for the next command
    await expect.poll(() => readState(state).gainDb, { timeout: 3000 }).toBeCloseTo(0.8, 3);
    const t = await link.readTrims();
    expect(t.gainDb).toBeCloseTo(0.8, 3);
    expect(t.dcQ).toBeCloseTo(0.01, 4);
    expect(link.resets).toBe(1);
    expect(link.history.map((r) => r.what)).toContain('reapply');
    expect(readState(state).gainDb).toBeCloseTo(0.8, 3);
  });

  it('reconnects when the device is killed and restarted under the same link name', async () => {
    const path = join(work, 'dev-restart');
    const dev = await startDevice(fw, ['--link', path]);
    const link = await open(path, {
      reconnectMs: 5000,
      restoreTrims: () => ({ gainDb: 0.25, phaseDeg: 0.5 }),
    });
    await link.setTrims({ gainDb: 0.1 });
    await dev.kill('SIGKILL');
    setTimeout(() => void startDevice(fw, ['--link', path]), 300);
    const t = await link.readTrims();
    expect(t.gainDb).toBeCloseTo(0.25, 3); // the restore policy's trims, re-applied
    expect(t.phaseDeg).toBeCloseTo(0.5, 2);
    expect(link.resets).toBe(1);
  });

  it('times out on a stalled device with a clear error, and carries on when it resumes', async () => {
    const dev = await startDevice(fw);
    const link = await open(dev.path, { timeoutMs: 300 });
    dev.proc.kill('SIGSTOP');
    const e = await link.readTrims().catch((x: unknown) => x);
    expect(isOrthotoneError(e, 'DEVICE_TIMEOUT'), String(e)).toBe(true);
    expect((e as Error).message).toMatch(/did not answer '\d+ trims' within 300 ms/);
    dev.proc.kill('SIGCONT');
    // the late answer to the timed-out command arrives while this one waits: its tag tells them apart
    expect((await link.setTrims({ gainDb: 0.2 })).gainDb).toBeCloseTo(0.2, 3);
    expect(link.staleAnswers).toBeGreaterThanOrEqual(1);
  });

  it('reports an unplugged device clearly and keeps what was applied', async () => {
    const dev = await startDevice(fw);
    const link = await open(dev.path, { reconnectMs: 600, reconnectIntervalMs: 100 });
    await link.setTrims({ gainDb: 0.4 });
    await dev.kill('SIGKILL');
    const e = await link.readTrims().catch((x: unknown) => x);
    expect(isOrthotoneError(e, 'DEVICE_LOST'), String(e)).toBe(true);
    expect((e as Error).message).toMatch(/did not come back within 600 ms/);
    expect(link.appliedTrims?.gainDb).toBeCloseTo(0.4, 3);
    expect(link.history.at(-1)?.what).toBe('lost');
  });

  it('loads a network in the device arithmetic and switches to it without a click', async () => {
    const iq = join(work, 'iq.f32');
    const dev = await startDevice(fw, ['--iq', iq]);
    const link = await open(dev.path);
    await link.setSource({ kind: 'tone', toneHz: 1000, amplitude: 0.5 });
    await new Promise((r) => setTimeout(r, 150));
    const net = designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'allpass', targetDb: 50 });
    const crc = await link.loadNetwork(net); // the device checks the same CRC over the same codes
    expect(crc).toBeGreaterThanOrEqual(0);
    const fir = designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'fir', targetDb: 30 });
    if (fir.kind === 'fir' && fir.taps.length <= link.info.maxTaps) await link.loadNetwork(fir);
    await new Promise((r) => setTimeout(r, 150));
    await dev.kill();
    const b = readFileSync(iq);
    const x = new Float32Array(b.buffer, b.byteOffset, b.length / 4);
    expect(x.length / 2).toBeGreaterThan(48000 * 0.25);
    // A 1 kHz tone at 0.5 moves at most 2·0.5·sin(π·1000/48000) = 0.0654 per sample; a hard switch
    // between networks of different phase would jump by up to 1. The cross-fade keeps steps small.
    let worst = 0;
    for (let k = 2; k < x.length; k++) worst = Math.max(worst, Math.abs(x[k]! - x[k - 2]!));
    expect(worst).toBeLessThan(1.25 * 0.0654);
    expect(link.history.filter((r) => r.what === 'network').length).toBeGreaterThanOrEqual(1);
  });

  it('a network whose checksum does not match is refused and the old one runs on', async () => {
    const dev = await startDevice(fw);
    // raw lines with a wrong checksum, written to the port directly (the link always sends the right one)
    const ch = await openSerialChannel(dev.path);
    let text = '';
    ch.start({ data: (d) => (text += String.fromCharCode(...d)), closed: () => undefined });
    const bodies = ['net begin allpass i=1 q=1 di=0 dq=0', 'net put at=0 v=100,200', 'net end crc=0000'];
    for (const [k, body] of bodies.entries()) await ch.write(new TextEncoder().encode(`${k + 1} ${body}\n`));
    await new Promise((r) => setTimeout(r, 200));
    await ch.close();
    expect(text).toMatch(
      /2 ok net put at=0 n=2\n3 err CHECK checksum does not match; the old network runs on/,
    );
  });

  it('refuses a device that speaks another protocol version', async () => {
    const fw2 = buildFirmware(['-DOTL_VERSION=2']);
    const dev = await startDevice(fw2);
    const e = await open(dev.path).catch((x: unknown) => x);
    expect(isOrthotoneError(e, 'DEVICE_VERSION'), String(e)).toBe(true);
    expect((e as Error).message).toMatch(/version 2, this orthotone speaks version 1/);
  });
});
