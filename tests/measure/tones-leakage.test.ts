/**
 * measureTones next to strong tones: a weak tone is read where it is and at its level, and a tone
 * that is absent is not "found" on the strong tone's window leakage (the sidelobes between bins),
 * whatever the frame length. Noise-free captures are the hard case: their spectra have no noise
 * floor, only leakage and rounding.
 *
 * Levels: AES17 (a sine of peak A reads 20·log10 A dBFS) with Heinzel, Rüdiger & Schilling 2002 scaling.
 */
import { describe, expect, it } from 'vitest';
import { analyzeTones, measureTones } from '../../src/measure/tones.js';

const FRAMES: [number, number | undefined][] = [
  [16384, 4096],
  [65536, 8192],
  [24000, 12000],
  [65536, 16384],
  [65536, 32768],
  [48000, undefined],
];

/** A real capture: Σ a·sin(2πft + ph), as Float64 or Float32. */
function real(fs: number, len: number, parts: [number, number, number][], f32: boolean) {
  const x = f32 ? new Float32Array(len) : new Float64Array(len);
  for (let n = 0; n < len; n++) {
    let v = 0;
    for (const [a, hz, ph] of parts) v += a * Math.sin((2 * Math.PI * hz * n) / fs + ph);
    x[n] = v;
  }
  return x;
}

/** A complex capture: Σ a·e^{j(2πft + ph)}. */
function complex(fs: number, len: number, parts: [number, number, number][], f32: boolean) {
  const make = () => (f32 ? new Float32Array(len) : new Float64Array(len));
  const i = make();
  const q = make();
  for (let n = 0; n < len; n++) {
    let re = 0;
    let im = 0;
    for (const [a, hz, ph] of parts) {
      re += a * Math.cos((2 * Math.PI * hz * n) / fs + ph);
      im += a * Math.sin((2 * Math.PI * hz * n) / fs + ph);
    }
    i[n] = re;
    q[n] = im;
  }
  return { i, q };
}

const dbfs = (a: number) => 20 * Math.log10(a); // AES17: a sine of peak a

describe('measureTones: an absent tone near a strong one is read at its nominal frequency', () => {
  for (const [len, frameLength] of FRAMES) {
    for (const f32 of [false, true]) {
      it(`frame ${frameLength ?? 'default'} of ${len}, ${f32 ? 'f32' : 'f64'}`, () => {
        const fs = 48000;
        // 1500 Hz: a whole number of cycles in every power-of-two frame of 32 samples or more.
        const x = real(fs, len, [[0.5, 1500, 0.3]], f32);
        const [strong, absent, absentFar] = measureTones(x, fs, [1500, 1600, 5000], { frameLength });
        expect(strong!.levelDbfs).toBeCloseTo(dbfs(0.5), 2);
        expect(strong!.frequencyHz).toBeCloseTo(1500, 3);
        for (const r of [absent!, absentFar!]) {
          expect(r.refined).toBe(false);
          expect(r.frequencyHz).toBe(r.nominalHz);
          // What is read there is the strong tone's leakage: below its highest sidelobe, −92.0 dB for
          // the Blackman–Harris window (Heinzel, Rüdiger & Schilling 2002).
          expect(r.levelDbfs).toBeLessThan(strong!.levelDbfs - 92);
        }
        // I/Q: a perfect analytic tone has no image at −1500 Hz, and no carrier at 0 Hz.
        const c = complex(fs, len, [[0.5, 1500, 0.3]], f32);
        const [w, img, dc] = measureTones(c, fs, [1500, -1500, 0], { frameLength });
        expect(w!.levelDbfs).toBeCloseTo(dbfs(0.5), 2);
        for (const r of [img!, dc!]) {
          expect(r.refined).toBe(false);
          expect(r.frequencyHz).toBe(r.nominalHz);
          expect(r.levelDbfs).toBeLessThan(w!.levelDbfs - 92); // Heinzel, Rüdiger & Schilling 2002: BH sidelobes −92.0 dB
        }
      });
    }
  }
});

describe('measureTones: weak tones beside a strong one are read where they are (AES17 levels)', () => {
  for (const [len, frameLength] of FRAMES) {
    it(`frame ${frameLength ?? 'default'} of ${len}: −40, −60 and −80 dBc tones off their nominal frequencies`, () => {
      const fs = 48000;
      // The strong tone bin-centred in power-of-two frames; weak tones 0.37 of a 16384-frame bin off
      // the frequencies asked for, 100 to 500 Hz away (34 to 171 bins of a 16384 frame).
      const off = 0.37 * (fs / 16384);
      const parts: [number, number, number][] = [
        [0.5, 1500, 0.1],
        [0.5e-2, 1600 + off, 1.1],
        [0.5e-3, 1250 + off, 2.1],
        [0.5e-4, 2000 + off, 0.6],
      ];
      const x = real(fs, len, parts, false);
      const { readings: rs, spectrum } = analyzeTones(x, fs, [1500, 1600, 1250, 2000], { frameLength });
      parts.forEach(([a, hz], k) => {
        const r = rs[k]!;
        expect(r.refined, `${r.nominalHz} Hz refined`).toBe(true);
        expect(Math.abs(r.levelDbfs - dbfs(a)), `${r.nominalHz} Hz level`).toBeLessThan(0.1);
        // Within 2% of a frame bin; the −80 dBc tone 5%: the strong tone's leakage beside it (about
        // −120 … −130 dB, Heinzel, Rüdiger & Schilling 2002 window figures) pulls its peak by about 0.01–0.04 bin.
        const tol = (a < 1e-3 ? 0.05 : 0.02) * spectrum.resolutionHz;
        expect(Math.abs(r.frequencyHz - hz), `${r.nominalHz} Hz frequency`).toBeLessThan(tol);
      });
    });
  }

  it('I/Q: a −40 dBc image near the strong tone’s mirror and a −60 dBc carrier, both off-nominal', () => {
    const fs = 48000;
    for (const [len, frameLength] of FRAMES) {
      const parts: [number, number, number][] = [
        [0.5, 1500, 0.2],
        [0.5e-2, -1500 + 0.8, 1.3],
        [0.5e-3, 0.4, 0.5],
      ];
      const c = complex(fs, len, parts, true);
      const { readings: rs, spectrum } = analyzeTones(c, fs, [1500, -1500, 0], { frameLength });
      parts.forEach(([a, hz], k) => {
        const r = rs[k]!;
        const what = `frame ${frameLength ?? 'default'}: ${r.nominalHz} Hz`;
        expect(r.refined, `${what} refined`).toBe(true);
        expect(Math.abs(r.levelDbfs - dbfs(a)), `${what} level`).toBeLessThan(0.1);
        expect(Math.abs(r.frequencyHz - hz), `${what} frequency`).toBeLessThan(0.02 * spectrum.resolutionHz);
      });
    }
  });
});
