import { execFileSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { designCorrection, equivalentTrims, fitImbalanceModel } from '../../src/calibrate/multitone.js';
import { createProfile, validateProfile } from '../../src/calibrate/profile.js';
import { profileToCHeader } from '../../src/export/profile-header.js';
import { parseProfileJson, profileToJson } from '../../src/export/profile-json.js';
import { validateCorrection } from '../../src/generate/correction.js';
import { expectOrthotoneError } from '../support/errors.js';

const model = fitImbalanceModel([
  { frequencyHz: 300, gainDb: 0.05, phaseDeg: 0.4, uncertainty: 1e-4, floorDb: -70 },
  { frequencyHz: 1000, gainDb: 0.02, phaseDeg: 0.1, uncertainty: 1e-4, floorDb: -70 },
  { frequencyHz: 3000, gainDb: -0.01, phaseDeg: 0.9, uncertainty: 1e-4, floorDb: -70 },
]);
const correction = designCorrection(model, [300, 3000], 48000, 31);
const profile = createProfile({
  sampleRate: 48000,
  toneHz: 1000,
  tonesHz: [300, 1000, 3000],
  trims: { dcI: 0.0012, dcQ: -0.0004 },
  correction,
  network: { format: 'orthotone-network', version: 1 },
  readings: [
    {
      quantity: 'sideband',
      trims: { gainDb: 0, phaseDeg: 0, skewSamples: 0, dcI: 0, dcQ: 0 },
      levelDb: -41.5,
    },
  ],
  results: { sidebandDb: 71.2, carrierDb: 69.9, readingsUsed: 12, source: 'simulated' },
  created: new Date('2026-01-02T03:04:05Z'),
});

describe('calibration profile', () => {
  it('round-trips through JSON exactly', () => {
    expect(parseProfileJson(profileToJson(profile))).toEqual(profile);
  });
  it('names the bad field on load', () => {
    const bad = (patch: Record<string, unknown>, re: RegExp) =>
      expectOrthotoneError(
        () => validateProfile({ ...JSON.parse(profileToJson(profile)), ...patch }),
        'INVALID_DOCUMENT',
        re,
      );
    bad({ format: 'x' }, /format "x" must be "orthotone-profile"/);
    bad({ version: 2 }, /version 2 is not supported/);
    bad({ toneHz: 30000 }, /toneHz 30000 must be a frequency between 0 and 24000 Hz/);
    bad({ trims: { ...profile.trims, phaseDeg: 90 } }, /phaseDeg 90 degrees is out of range/);
    bad({ correction: { qFromQ: [1, 0], qFromI: [0, 0] } }, /same odd length/);
    expect(() => parseProfileJson('{')).toThrow(/not valid JSON/);
  });
});

describe('correction filter design', () => {
  it('realises the fitted model: each tone sees the trims of its own null', () => {
    // The widely-linear pair must act, at each tone, as the gain/phase trim the model asks for
    // (Anttila, Valkama & Renfors 2008): check the equivalent trims against the model within
    // 0.002 dB and 0.015° across the band (each alone ≥ 75 dB: 10·log10(4/φ²) = 77.6 dB for
    // φ = 0.015°, docs/REFERENCES.md §1), with taps the generator accepts (plain least squares gave an
    // absolute tap sum of 79 here, which it refuses; the ridge keeps it at 12 or less).
    expect(() => validateCorrection(correction, 63)).not.toThrow();
    for (const f of [300, 500, 1000, 2000, 3000]) {
      const eq = equivalentTrims(correction, {}, f, 48000);
      const r = f / model.f0;
      const g = model.gainDb[0] + model.gainDb[1] * r * r + model.gainDb[2] / (r * r);
      const ph = ((model.phase[0] + model.phase[1] * f + model.phase[2] / f) * 180) / Math.PI;
      expect(Math.abs(eq.gainDb - g)).toBeLessThan(0.002);
      expect(Math.abs(eq.phaseDeg - ph)).toBeLessThan(0.015);
    }
  });
  it('a pure delay of Q is read back as that skew (phase slope 2πfτ)', () => {
    const tau = 1.5e-6;
    const tones = [300, 800, 1500, 3000].map((f) => ({
      frequencyHz: f,
      gainDb: 0,
      phaseDeg: (360 * f * tau) % 360,
      uncertainty: 1e-5,
      floorDb: -80,
    }));
    expect(fitImbalanceModel(tones).skewSeconds).toBeCloseTo(tau, 9);
  });
});

describe('profile C header', () => {
  it('compiles and carries the same numbers', () => {
    const h = profileToCHeader(profile, { name: 'bench' });
    expect(h).toMatch(/#define BENCH_CAL_DC_I 0\.00120000/);
    expect(h).toMatch(/BENCH_CAL_CORRECTION_TAPS 31/);
    const dir = mkdtempSync(join(tmpdir(), 'ot-prof-'));
    writeFileSync(join(dir, 'cal.h'), h);
    writeFileSync(
      join(dir, 'main.c'),
      '#include <stdio.h>\n#include "cal.h"\nint main(void){double s=0;for(int k=0;k<BENCH_CAL_CORRECTION_TAPS;k++)s+=bench_cal_q_from_q[k];printf("%.6f %.7f\\n",s,(double)BENCH_CAL_DC_I);return 0;}\n',
    );
    let out: string;
    try {
      execFileSync('cc', ['-std=c99', '-Wall', '-Werror', '-o', join(dir, 'a.out'), join(dir, 'main.c')]);
      out = execFileSync(join(dir, 'a.out')).toString();
    } catch (e) {
      throw new Error(`C compiler needed for this test: ${(e as Error).message}`);
    }
    const [sum, dc] = out.trim().split(' ').map(Number);
    expect(sum).toBeCloseTo(
      correction.qFromQ.reduce((a, b) => a + b, 0),
      5,
    );
    expect(dc).toBeCloseTo(0.0012, 7);
  });
  it('rejects a bad identifier', () => {
    expect(() => profileToCHeader(profile, { name: '9x' })).toThrow(/not a C identifier/);
  });
});
