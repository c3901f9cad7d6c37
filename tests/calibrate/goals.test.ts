// Issue 9's goals on a small number of drawn devices (the full benches are in
// bench/calibrate.bench.mjs): trims of uncertain scale and coupling (src/simulate/trim-mismatch.ts,
// the ranges), exact-scale trims, and exact-scale trims with 5% of readings 10 dB off. The
// figures are true suppression from the virtual exciter's noiseless response at the trims returned.
// Invented bench: homebrew-bench tolerances, starts 30–45 dB, analyzer noise 0.5 dB, floor −70 dBc.
import { describe, expect, it } from 'vitest';
import { pickDevices, runBench, runOne } from './bench-support.js';

const devices = pickDevices(16, 5000);

describe('issue 9 goals on drawn devices (default settings)', () => {
  for (const qty of ['sideband', 'carrier'] as const) {
    it(`${qty}, mismatched trims: median ≥ 78 dB and p90 ≥ 70 dB within 16, never worse than the start, no early floor stop`, async () => {
      for (const seed of [11, 12]) {
        const r = await runBench(qty, devices, { budget: 16, seed, mismatched: true });
        expect(r.median, `seed ${seed}`).toBeGreaterThanOrEqual(78);
        expect(r.p90, `seed ${seed}`).toBeGreaterThanOrEqual(70);
        expect(r.worseThanStart, `seed ${seed}`).toBe(0);
        expect(r.earlyFloorStops, `seed ${seed}`).toBe(0);
      }
    });
  }
  it('sideband, exact-scale trims: median ≥ 80 dB within 10, p90 ≥ 70 dB within 16, median ≥ 75 dB with 5% outliers', async () => {
    const r10 = await runBench('sideband', devices, { budget: 10, seed: 21, mismatched: false });
    const r16 = await runBench('sideband', devices, { budget: 16, seed: 21, mismatched: false });
    const o16 = await runBench('sideband', devices, {
      budget: 16,
      seed: 22,
      mismatched: false,
      outlierRate: 0.05,
    });
    expect(r10.median).toBeGreaterThanOrEqual(80);
    expect(r16.p90).toBeGreaterThanOrEqual(70);
    expect(o16.median).toBeGreaterThanOrEqual(75);
    expect(o16.worseThanStart).toBe(0);
  });
  it('carrier, exact-scale trims: p90 ≥ 70 dB within 16, median ≥ 75 dB with 5% outliers', async () => {
    const r16 = await runBench('carrier', devices, { budget: 16, seed: 23, mismatched: false });
    const o16 = await runBench('carrier', devices, {
      budget: 16,
      seed: 24,
      mismatched: false,
      outlierRate: 0.05,
    });
    expect(r16.p90).toBeGreaterThanOrEqual(70);
    expect(o16.median).toBeGreaterThanOrEqual(75);
    expect(o16.worseThanStart).toBe(0);
  });
});

describe('a start read 10 dB high does not make a flat stretch a floor', () => {
  it('carrier, bench device 72, outliers either way: re-reads the start before a floor stop, ends no worse than it began', async () => {
    // Found by bench/calibrate.bench.mjs (5% of readings 10 dB off either way): the start read
    // −30.3 dBc where the truth was −41.0, and the seeker stopped on "floor" at −40.5 after 9
    // readings, 0.6 dB worse than the start.
    const dev = pickDevices(73)[72]!;
    const r = await runOne('carrier', dev, 16, 5072, null, 0.05);
    expect(r.finalDb).toBeGreaterThanOrEqual(r.startDb - 0.01);
    expect(r.stopReason === 'floor' && r.lastReadDb > -60).toBe(false);
  });
});
