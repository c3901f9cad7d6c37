/**
 * The regression cases of sideband-frames.test.ts, few and short, for the mutation runs (that sweep
 * is far too slow per mutant): power-of-two frames that hold a whole number of cycles of the tone, so
 * a noise-free spectrum's floor reads as rounding noise between the tone's leakage zeros. A pure
 * phase error with no carrier once read the unwanted tone at −1502.6 Hz, 2.6 dB too deep.
 *
 * Suppression against the closed form of K. Schmidt, "Phase-Shift Network Analysis and
 * Optimization", QEX Aug 1994 §2: I = cos ωt, Q = g·sin(ωt + φ) gives
 * IRR = (1 + 2g·cosφ + g²) / (1 − 2g·cosφ + g²).
 */
import { describe, expect, it } from 'vitest';
import { measureSideband } from '../../src/measure/sideband.js';

const deg = Math.PI / 180;
const irrDb = (g: number, phi: number): number =>
  10 * Math.log10((1 + 2 * g * Math.cos(phi) + g * g) / (1 - 2 * g * Math.cos(phi) + g * g));

/** I = A·cos(ωt + θ) + dI, Q = g·A·sin(ωt + θ + φ) + dQ, A = 0.5 (Schmidt's model). */
function iq(
  fs: number,
  len: number,
  hz: number,
  gainDb: number,
  phaseDeg: number,
  dI: number,
  dQ: number,
  f32: boolean,
) {
  const make = () => (f32 ? new Float32Array(len) : new Float64Array(len));
  const i = make();
  const q = make();
  const g = 10 ** (gainDb / 20);
  for (let n = 0; n < len; n++) {
    const w = (2 * Math.PI * hz * n) / fs + 0.61;
    i[n] = 0.5 * Math.cos(w) + dI;
    q[n] = g * 0.5 * Math.sin(w + phaseDeg * deg) + dQ;
  }
  return { i, q };
}

describe('measureSideband: whole-cycle tones in power-of-two frames (K. Schmidt, QEX Aug 1994 §2)', () => {
  const fs = 48000;
  // The default frame of a 16384-sample float32 capture: the case that misread before the fix (the
  // sweep in sideband-frames.test.ts covers the other frame lengths).
  for (const [len, frameLength, f32] of [[16384, undefined, true]] as const) {
    it(`3° phase error, no carrier, 1500 Hz, frame ${frameLength ?? 'default'} of ${len}, ${f32 ? 'f32' : 'f64'}`, () => {
      const { i, q } = iq(fs, len, 1500, 0, 3, 0, 0, f32);
      const r = measureSideband(i, q, fs, { toneHz: 1500, frameLength });
      const res = fs / (frameLength ?? len);
      expect(irrDb(1, 3 * deg)).toBeCloseTo(31.639, 3); // Schmidt's formula, 3°
      expect(Math.abs(r.sidebandSuppressionDb - 31.639)).toBeLessThan(0.05);
      expect(Math.abs(r.wanted.frequencyHz - 1500)).toBeLessThan(0.02 * res);
      expect(Math.abs(r.unwanted.frequencyHz + 1500)).toBeLessThan(0.02 * res);
      // No carrier: read where it would be, and far below the tones.
      expect(Math.abs(r.carrier.frequencyHz)).toBeLessThan(0.02 * res);
      expect(r.carrierDbc).toBeLessThan(-100);
      expect(r.frequencyErrorHz).toBeCloseTo(0, 2);
    });
  }
  it('0.5 dB gain error with a carrier dI = 0.001A, dQ = 0.0005A, 8 kHz, 1800 Hz, frame 2048 of 8192', () => {
    const fs8 = 8000;
    const { i, q } = iq(fs8, 8192, 1800, 0.5, 0, 0.0005, 0.00025, false);
    const r = measureSideband(i, q, fs8, { toneHz: 1800, frameLength: 2048 });
    expect(Math.abs(r.sidebandSuppressionDb - irrDb(10 ** (0.5 / 20), 0))).toBeLessThan(0.05);
    expect(irrDb(10 ** (0.5 / 20), 0)).toBeCloseTo(30.82, 2); // Schmidt's formula, 0.5 dB
    // Carrier: |dI + j·dQ| / A = 0.001118 → −59.031 dB below a tone of amplitude A (model of
    // K. Schmidt, QEX Aug 1994); the wanted tone's amplitude is A·(1 + g)/2 for a pure gain error.
    const g = 10 ** (0.5 / 20);
    const want = 20 * Math.log10(Math.hypot(0.0005, 0.00025) / (0.5 * ((1 + g) / 2)));
    expect(Math.abs(r.carrierDbc - want)).toBeLessThan(0.05);
    expect(Math.abs(r.carrier.frequencyHz)).toBeLessThan(0.02 * (fs8 / 2048));
  });
});
