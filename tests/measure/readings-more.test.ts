/**
 * Tone readings at DC and the spread the readings report. DC: a real capture's level D reads D²
 * at 0 Hz (no doubling there, Heinzel, Rüdiger & Schilling 2002 §9). Spread: a tone of power P read
 * over white noise of power F per bin, averaged over K equivalent frames (Welch 1967), has a power
 * spread σ_P = √(2PF + F²)/√K (|A + N|² with complex Gaussian N, E|N|² = F), i.e. 4.343·σ_P/P dB;
 * checked against the spread actually seen over independent noise seeds.
 */
import { describe, expect, it } from 'vitest';
import { createRng } from '../../src/core/rng.js';
import { measureTones } from '../../src/measure/tones.js';

const fs = 48000;

describe('measureTones at 0 Hz', () => {
  it('a DC level D in a real capture reads 20·log10|D| dBFS at 0 Hz, beside a tone', () => {
    for (const d of [0.2, -0.05]) {
      const x = Float64Array.from(
        { length: 4096 },
        (_, n) => d + 0.3 * Math.sin((2 * Math.PI * 3000 * n) / fs),
      );
      const [dc, tone] = measureTones(x, fs, [0, 3000]);
      expect(dc!.levelDbfs).toBeCloseTo(20 * Math.log10(Math.abs(d)), 3);
      expect(Math.abs(dc!.frequencyHz)).toBeLessThan(0.01 * (fs / 4096));
      expect(dc!.frequencyHz).toBeGreaterThanOrEqual(0);
      expect(tone!.levelDbfs).toBeCloseTo(20 * Math.log10(0.3), 3);
    }
  });
  it('I/Q: a carrier exactly at 0 Hz and one 0.3 bin off are both read at their level', () => {
    const bin = fs / 2048;
    for (const off of [0, 0.3 * bin, -0.3 * bin]) {
      const i = Float64Array.from({ length: 2048 }, (_, n) => 0.01 * Math.cos((2 * Math.PI * off * n) / fs));
      const q = Float64Array.from({ length: 2048 }, (_, n) => 0.01 * Math.sin((2 * Math.PI * off * n) / fs));
      const [c] = measureTones({ i, q }, fs, [0]);
      expect(c!.levelDbfs).toBeCloseTo(-40, 3);
      expect(Math.abs(c!.frequencyHz - off)).toBeLessThan(0.01 * bin);
    }
  });
});

describe('measureTones: the reported spread matches the spread seen', () => {
  it('a tone 10 dB and one 30 dB above the floor per bin, over 16 noise seeds', () => {
    const sigma = 1e-3;
    const frameLength = 256;
    const len = 2048;
    // Floor per bin, real capture: 4σ²·NENBW/N sine-peak² (Heinzel 2002), NENBW 2.0044 (Blackman–Harris).
    const floorP = (4 * sigma * sigma * 2.0044) / frameLength;
    for (const aboveDb of [10, 30]) {
      const a = Math.sqrt(floorP * 10 ** (aboveDb / 10));
      const levels: number[] = [];
      const reported: number[] = [];
      for (let seed = 1; seed <= 16; seed++) {
        const rng = createRng(seed);
        const x = Float64Array.from(
          { length: len },
          (_, n) => a * Math.sin((2 * Math.PI * 3000 * n) / fs + seed) + sigma * rng.normal(),
        );
        const [r] = measureTones(x, fs, [3000], { frameLength });
        levels.push(r!.levelDbfs);
        reported.push(r!.uncertaintyDb);
      }
      const mean = levels.reduce((s, v) => s + v, 0) / levels.length;
      const sd = Math.sqrt(levels.reduce((s, v) => s + (v - mean) ** 2, 0) / (levels.length - 1));
      const said = reported.reduce((s, v) => s + v, 0) / reported.length;
      // 16 seeds: the sample standard deviation is within about ±35 % of the true one (χ² with 15
      // degrees of freedom, 95 %); the bound allows a factor 1.6 either way.
      expect(said / sd, `${aboveDb} dB above the floor`).toBeGreaterThan(1 / 1.6);
      expect(said / sd, `${aboveDb} dB above the floor`).toBeLessThan(1.6);
      // The level itself within a few spreads of the tone's.
      expect(Math.abs(mean - 20 * Math.log10(a))).toBeLessThan(3 * sd + 0.05);
    }
  });
});
