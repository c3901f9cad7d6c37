/**
 * Window leakage bounds, checked against the window's transform summed directly from its samples
 * (Σ w[n]·e^{−j2πνn/N}, no closed form) and against the published highest sidelobes of Heinzel 2002
 * (Heinzel, Rüdiger & Schilling 2002).
 */
import { describe, expect, it } from 'vitest';
import { createWindow, WINDOW_COEFFICIENTS, WINDOW_NAMES } from '../../src/core/windows.js';
import {
  ENVELOPE_MONOTONE_BEYOND_BINS,
  leakageNear,
  strongestPeaks,
  windowLeakageEnvelope,
} from '../../src/measure/leakage.js';
import { computeSpectrum } from '../../src/measure/spectrum.js';

/** |Σ w[n]·e^{−j2πνn/N}|² / (Σw)², summed directly. */
function directPower(w: Float64Array, nu: number): number {
  const n = w.length;
  let re = 0;
  let im = 0;
  let s = 0;
  for (let k = 0; k < n; k++) {
    re += w[k]! * Math.cos((2 * Math.PI * nu * k) / n);
    im -= w[k]! * Math.sin((2 * Math.PI * nu * k) / n);
    s += w[k]!;
  }
  return (re * re + im * im) / (s * s);
}

// Heinzel, Rüdiger & Schilling 2002, highest sidelobes (rectangular −13.3 dB, from the same table).
const SIDELOBE_DB = { rectangular: -13.3, hann: -31.5, 'blackman-harris': -92.0, flattop: -95.0 } as const;

describe('windowLeakageEnvelope', () => {
  for (const name of WINDOW_NAMES) {
    it(`${name}: bounds the transform outside the main lobe and touches its sidelobe peaks`, () => {
      const n = 256;
      const w = createWindow(name, n);
      const terms = WINDOW_COEFFICIENTS[name].length;
      let highest = 0;
      let highestNu = 0;
      for (let nu = terms; nu <= n / 2; nu += 1 / 16) {
        const p = directPower(w, nu);
        const e = windowLeakageEnvelope(name, n, nu);
        expect(e, `ν = ${nu}`).toBeGreaterThanOrEqual(p * (1 - 1e-6) - 1e-30);
        // At half-integers |sin πν| = 1: the envelope is the transform itself.
        if (nu >= terms + 1 && (nu * 2) % 2 === 1) {
          expect(Math.abs(10 * Math.log10(e / p)), `ν = ${nu}`).toBeLessThan(0.01);
        }
        if (p > highest) {
          highest = p;
          highestNu = nu;
        }
        // Symmetric and periodic in ν.
        expect(windowLeakageEnvelope(name, n, -nu)).toBeCloseTo(e, 12);
        expect(windowLeakageEnvelope(name, n, nu + n)).toBeCloseTo(e, 12);
      }
      // The envelope at the highest sidelobe is at most 1 dB above it.
      expect(10 * Math.log10(windowLeakageEnvelope(name, n, highestNu) / highest)).toBeLessThan(1);
      // Within the main lobe the bound is the whole tone.
      expect(windowLeakageEnvelope(name, n, terms - 0.5)).toBe(1);
    });
    it(`${name}: the envelope's highest sidelobe is the published one (Heinzel, Rüdiger & Schilling 2002)`, () => {
      // N = 4096 (Heinzel's figures are large-N values), scanned over the first 64 bins at 1/16 bin:
      // the direct scan and the envelope at its peak both within 0.1 dB of the printed figure.
      const n = 4096;
      const w = createWindow(name, n);
      const terms = WINDOW_COEFFICIENTS[name].length;
      let highest = 0;
      let highestNu = 0;
      for (let nu = terms + 1 / 16; nu <= 64; nu += 1 / 16) {
        const p = directPower(w, nu);
        if (p > highest) {
          highest = p;
          highestNu = nu;
        }
      }
      expect(Math.abs(10 * Math.log10(highest) - SIDELOBE_DB[name])).toBeLessThan(0.1);
      const e = windowLeakageEnvelope(name, n, highestNu);
      expect(e).toBeGreaterThanOrEqual(highest * (1 - 1e-9));
      expect(10 * Math.log10(e) - SIDELOBE_DB[name]).toBeLessThan(1);
    });
  }
});

describe('ENVELOPE_MONOTONE_BEYOND_BINS', () => {
  for (const name of WINDOW_NAMES) {
    it(`${name}: the envelope never rises beyond ${ENVELOPE_MONOTONE_BEYOND_BINS[name]} bins, up to N/2`, () => {
      for (const n of [64, 256, 1000, 4096, 12000, 65536]) {
        let prev = Number.POSITIVE_INFINITY;
        let rise = '';
        const from = ENVELOPE_MONOTONE_BEYOND_BINS[name];
        const step = n > 4096 ? 1 / 8 : 1 / 32;
        for (let v = from; v <= Math.min(n / 2, 4096) && !rise; v += step) {
          const e = windowLeakageEnvelope(name, n, v);
          if (e > prev * (1 + 1e-12)) rise = `N = ${n}: rises at ν = ${v}`;
          prev = e;
        }
        expect(rise).toBe('');
      }
    });
  }
});

describe('leakageNear', () => {
  it('bounds the power a bin-centred strong tone leaks between the bins, where the FFT bins read zero', () => {
    const fs = 48000;
    const n = 8192;
    // 1500 Hz: 256 cycles in 8192 samples, so every other FFT bin sits on a zero of its leakage.
    const x = Float64Array.from({ length: n }, (_, k) => 0.5 * Math.sin((2 * Math.PI * 1500 * k) / fs + 0.2));
    const s = computeSpectrum(x, fs, { frameLength: n });
    const peaks = strongestPeaks(s, 16);
    expect(peaks[0]!.hz).toBe(1500);
    // The strongest peak bounds the tone's power (0.25: peak amplitude 0.5 squared) by at most the
    // scallop loss and 0.5 dB (Heinzel, Rüdiger & Schilling 2002: Blackman–Harris scallop 0.8256 dB).
    expect(peaks[0]!.power).toBeGreaterThanOrEqual(0.25);
    expect(peaks[0]!.power).toBeLessThan(0.25 * 10 ** ((0.8256 + 0.5 + 1e-3) / 10));
    const w = createWindow('blackman-harris', n);
    const res = fs / n;
    for (const centre of [1600, 1500 + 4.5 * res, 3000, 0, 20000]) {
      const span = 2 * res;
      const bound = leakageNear(s, peaks, centre, span, span + s.binHz);
      let worst = 0;
      // Real capture: the tone at +1500 Hz and its image at −1500 Hz both leak (Heinzel 2002 §10).
      for (let f = centre - span; f <= centre + span; f += res / 8) {
        const p =
          0.25 *
          (Math.sqrt(directPower(w, (f - 1500) / res)) + Math.sqrt(directPower(w, (f + 1500) / res))) ** 2;
        worst = Math.max(worst, p);
        const k = Math.round(f / s.binHz);
        if (Math.abs(k * s.binHz - f) < 1e-9 && Math.abs(f - 1500) > 4 * res) {
          expect(s.power[Math.abs(k)]!).toBeLessThan(1e-20); // the bins: numerically zero
        }
      }
      expect(bound, `near ${centre} Hz`).toBeGreaterThanOrEqual(worst);
      expect(worst, `near ${centre} Hz`).toBeGreaterThan(1e-20); // but between them: leakage
    }
  });
});
