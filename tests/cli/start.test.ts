// Runs the built CLI (npm test builds first) as a new user would: `orthotone start`.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { validateProfile } from '../../src/calibrate/profile.js';
import { TRANSMIT_CAUTIONS } from '../../src/core/cautions.js';
import { validateNetwork } from '../../src/design/network.js';
import { decodeWav } from '../../src/node/wav.js';

describe('orthotone start', () => {
  it('designs, calibrates the virtual bench from about 34/44 dB, and writes the files', () => {
    const dir = mkdtempSync(join(tmpdir(), 'ot-start-'));
    const r = spawnSync('node', ['dist/cli.js', 'start', '--out', dir], { encoding: 'utf8' });
    expect(r.status).toBe(0);
    // The bench device starts near the hand-built figures (common practice, no source): 34 and 44 dB.
    const carrier = /carrier suppression\s+([\d.]+) dB\s+([\d.]+) dB/.exec(r.stdout)!;
    const sideband = /unwanted sideband suppression\s+([\d.]+) dB\s+([\d.]+) dB/.exec(r.stdout)!;
    expect(Math.abs(+carrier[1]! - 34)).toBeLessThan(1.5);
    expect(Math.abs(+sideband[1]! - 44)).toBeLessThan(1.5);
    expect(+carrier[2]!).toBeGreaterThan(65);
    expect(+sideband[2]!).toBeGreaterThan(65);
    expect(r.stdout).toMatch(/readings used\s+\d+/);
    for (const c of TRANSMIT_CAUTIONS) expect(r.stdout).toContain(c);
    const net = validateNetwork(JSON.parse(readFileSync(join(dir, 'network.json'), 'utf8')));
    expect(net.sampleRate).toBe(48000);
    expect(net.band).toEqual([300, 3000]);
    const p = validateProfile(JSON.parse(readFileSync(join(dir, 'profile.json'), 'utf8')));
    expect(p.network).toEqual(net);
    expect(readFileSync(join(dir, 'calibration.h'), 'utf8')).toMatch(/OT_CAL_DC_Q/);
    expect(readFileSync(join(dir, 'network.h'), 'utf8')).toMatch(/#ifndef/);
    const wav = decodeWav(new Uint8Array(readFileSync(join(dir, 'two-tone-iq.wav'))));
    expect(wav.channels).toHaveLength(2);
    expect(wav.sampleRate).toBe(48000);
  });
});
