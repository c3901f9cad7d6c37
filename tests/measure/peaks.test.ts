/**
 * strongestPeaks and leakageNear on hand-made spectra: which bins are local maxima (with the wrap of
 * a complex spectrum), their order, the scallop-loss margin (Heinzel, Rüdiger & Schilling 2002 table:
 * Hann 1.4236 dB, Blackman–Harris 0.8256 dB), and the leakage bound's invariants: a peak's own
 * component is left out, distances count modulo the sample rate, a real capture's image at −f leaks
 * too, and leakage of several components adds in amplitude (F. J. Harris, Proc. IEEE 66(1):51, 1978).
 */
import { describe, expect, it } from 'vitest';
import type { WindowName } from '../../src/core/windows.js';
import { leakageNear, strongestPeaks, windowLeakageEnvelope } from '../../src/measure/leakage.js';
import { DEFAULT_SPECTRUM_OPTIONS, planFrames, type Spectrum } from '../../src/measure/spectrum.js';

const fs = 48000;
/** A spectrum of `power` with the plan of `frameLength`-sample frames (bins fs/frameLength apart). */
const spectrum = (power: number[], complex: boolean, window: WindowName, frameLength = 4096): Spectrum => ({
  ...planFrames(frameLength, fs, complex, { ...DEFAULT_SPECTRUM_OPTIONS, window, frameLength }),
  power: Float64Array.from(power),
});
const scallop = (db: number) => 10 ** ((db + 0.5) / 10);

describe('strongestPeaks', () => {
  it('local maxima (plateaus included, empty bins never), strongest first, raised by the scallop loss + 0.5 dB', () => {
    const s = spectrum([5, 1, 0, 3, 3, 2, 7, 1, 0, 0, 4], false, 'hann');
    const bin = s.binHz;
    const m = scallop(1.4236);
    const top3 = strongestPeaks(s, 3);
    expect(top3.map((p) => p.hz)).toEqual([6 * bin, 0, 10 * bin]);
    for (const [j, p] of top3.entries()) expect(p.power / [7, 5, 4][j]!).toBeCloseTo(m, 3);
    // All of them; equal peaks keep their order in frequency.
    expect(strongestPeaks(s, 10).map((p) => Math.round(p.hz / bin))).toEqual([6, 0, 10, 3, 4]);
    expect(strongestPeaks(s, 1).map((p) => Math.round(p.hz / bin))).toEqual([6]);
    expect(strongestPeaks(spectrum([0, 0, 0, 0], false, 'hann'), 4)).toEqual([]);
  });
  it('a complex spectrum wraps: bin 0 neighbours the last bin; a real one does not', () => {
    const vals = [3, 0.5, 0.4, 0.3, 0.2, 0.1, 0.05, 4];
    const c = spectrum(vals, true, 'blackman-harris');
    c.fftSize = 8;
    const peaks = strongestPeaks(c, 4);
    expect(peaks.length).toBe(1);
    expect(peaks[0]!.hz).toBe(-c.binHz); // bin 7 of 8: one bin below 0 Hz
    expect(peaks[0]!.power / 4).toBeCloseTo(scallop(0.8256), 3);
    const r = spectrum(vals, false, 'blackman-harris');
    expect(strongestPeaks(r, 4).map((p) => Math.round(p.hz / r.binHz))).toEqual([7, 0]);
    // Wrapped the other way: the last bin is not a peak when bin 0 is higher.
    const c2 = spectrum([5, 0.5, 0.4, 0.3, 0.2, 0.1, 0.6, 4], true, 'blackman-harris');
    c2.fftSize = 8;
    expect(strongestPeaks(c2, 4).map((p) => p.hz)).toEqual([0]);
  });
});

describe('leakageNear', () => {
  const n = 4096;
  const res = fs / n;
  it('leaves out the component being read; within the main lobe the whole power leaks', () => {
    const s = spectrum([], true, 'blackman-harris', n);
    expect(leakageNear(s, [{ hz: 1000, power: 1 }], 1000 + 0.5 * res, 0, res)).toBe(0);
    // 3 bins away, inside the 4-bin main lobe: the bound is the whole power.
    expect(leakageNear(s, [{ hz: 1000, power: 0.3 }], 1000 + 3 * res, 0, res)).toBeCloseTo(0.3, 12);
    // 60 bins away: the envelope at 60 bins less the slack, far below the power.
    const far = leakageNear(s, [{ hz: 1000, power: 0.3 }], 1000 + 60 * res, 0, res);
    expect(far).toBeGreaterThan(0);
    expect(far).toBeLessThan(0.3 * 10 ** (-92 / 10)); // Blackman–Harris sidelobes −92 dB
  });
  it('bounds the window transform over the span it is asked for, and not by much more', () => {
    // A unit tone `d` bins away, read anywhere within ±span: the largest |W|² there is at most the
    // bound, and the bound is at most 0.5 dB above the envelope's largest value over span ± half a bin.
    const s = spectrum([], true, 'blackman-harris', n);
    for (const d of [6, 13.3, 30, 45.5, 300]) {
      for (const spanBins of [0, 1, 2.5]) {
        const b = leakageNear(s, [{ hz: 0, power: 1 }], d * res, spanBins * res, 0.5 * res);
        let env = 0;
        const slack = spanBins + s.binHz / 2 / res;
        for (let u = d - slack; u <= d + slack + 1e-9; u += 1 / 64)
          env = Math.max(env, windowLeakageEnvelope('blackman-harris', n, u));
        expect(b, `${d} bins, ±${spanBins}`).toBeGreaterThanOrEqual(env * (1 - 1e-9));
        expect(10 * Math.log10(b / env), `${d} bins, ±${spanBins}`).toBeLessThan(0.5);
      }
    }
  });
  it('distances count modulo the sample rate; leakage of two components adds in amplitude', () => {
    const s = spectrum([], true, 'blackman-harris', n);
    const one = leakageNear(s, [{ hz: 1000, power: 1 }], -1000, 2 * res, res);
    // 23000 Hz and −23000 Hz are 2000 Hz apart around the circle, as 1000 and −1000 Hz are.
    expect(leakageNear(s, [{ hz: 23000, power: 1 }], -23000, 2 * res, res)).toBeCloseTo(one, 15);
    expect(leakageNear(s, [{ hz: 1000 + fs, power: 1 }], -1000, 2 * res, res)).toBeCloseTo(one, 15);
    // Two equal components at the same distance on either side: amplitudes add, 4× the power.
    const two = leakageNear(
      s,
      [
        { hz: 1000, power: 1 },
        { hz: -3000, power: 1 },
      ],
      -1000,
      2 * res,
      res,
    );
    expect(two / one).toBeCloseTo(4, 10);
  });
  it("a real capture's components leak from their image at −f as well", () => {
    const c = spectrum([], true, 'hann', n);
    const r = spectrum([], false, 'hann', n);
    const peak = [{ hz: 3000, power: 1 }];
    // At 0 Hz the tone and its image are equally far: amplitudes add, 4× the complex bound.
    expect(leakageNear(r, peak, 0, 0, 0) / leakageNear(c, peak, 0, 0, 0)).toBeCloseTo(4, 10);
    // Far from 0 Hz the image's share is small but present.
    const rr = leakageNear(r, peak, 2000, 0, 0);
    const cc = leakageNear(c, peak, 2000, 0, 0);
    expect(rr).toBeGreaterThan(cc);
    expect(rr).toBeLessThan(cc * 1.5);
    // A peak at DC has no separate image.
    const dc = [{ hz: 0, power: 1 }];
    expect(leakageNear(r, dc, 2000, 0, 0)).toBe(leakageNear(c, dc, 2000, 0, 0));
  });
});

describe('windowLeakageEnvelope at the main-lobe edge', () => {
  it('is 1 only inside the main lobe (|ν| < number of cosine terms)', () => {
    for (const [w, terms] of [
      ['hann', 2],
      ['blackman-harris', 4],
      ['flattop', 5],
    ] as const) {
      expect(windowLeakageEnvelope(w, 1024, terms - 1e-6)).toBe(1);
      expect(windowLeakageEnvelope(w, 1024, terms)).toBeLessThan(1);
      expect(windowLeakageEnvelope(w, 1024, -terms)).toBeLessThan(1);
      // Periodic in ν with period N: just below N is the main lobe of the next period.
      expect(windowLeakageEnvelope(w, 1024, 1024 - 0.5)).toBe(1);
      expect(windowLeakageEnvelope(w, 1024, 1024 - terms)).toBeLessThan(1);
      // Half-way round (ν = N/2) and beyond it the envelope mirrors: ν and N − ν are the same offset.
      expect(windowLeakageEnvelope(w, 1024, 600)).toBeCloseTo(windowLeakageEnvelope(w, 1024, 424), 15);
    }
  });
});
