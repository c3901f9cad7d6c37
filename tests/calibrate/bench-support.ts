/**
 * The calibration benches of issue 9 on the virtual exciter (src/simulate), shared by the unit tests
 * that assert the goals on a few devices and by the experiments behind bench/calibrate.bench.mjs
 * (which runs the same benches, at full size, against the built package). Invented devices: the
 * homebrew-bench tolerances, filtered to starts 30–45 dB down on both nulls; a noisy analyzer
 * (0.5 dB, floor −70 dBc); trims exact or mismatched (src/simulate/trim-mismatch.ts).
 */
import { calibrateCarrier } from '../../src/calibrate/carrier.js';
import { calibrateSideband } from '../../src/calibrate/sideband.js';
import type { TrimCalibrationResult } from '../../src/calibrate/trim-calibration.js';
import { createRng } from '../../src/core/rng.js';
import { type Trims, ZERO_TRIMS } from '../../src/core/trims.js';
import { createAnalyzer } from '../../src/simulate/analyzer.js';
import { createVirtualExciter, type VirtualExciter } from '../../src/simulate/exciter.js';
import { drawDevice, TOLERANCE_PRESETS } from '../../src/simulate/model.js';
import {
  applyTrimMismatch,
  drawTrimMismatch,
  EXACT_TRIMS,
  type TrimMismatch,
} from '../../src/simulate/trim-mismatch.js';

export const FS = 48000;
export const TONE_HZ = 1000;
export const AMPLITUDE = 0.5;
export const FLOOR = -70;
export const NOISE = 0.5;

export interface BenchDevice {
  seed: number;
  ex: VirtualExciter;
}

/** `n` devices from the homebrew-bench tolerances with both starts 30–45 dB down, from `first` on. */
export function pickDevices(n: number, first = 1): BenchDevice[] {
  const out: BenchDevice[] = [];
  for (let seed = first; out.length < n && seed < first + 100_000; seed++) {
    const ex = createVirtualExciter(drawDevice(TOLERANCE_PRESETS['homebrew-bench']!, seed), {
      sampleRate: FS,
      seed,
    });
    const r = ex.response(TONE_HZ, {}, AMPLITUDE);
    if (-r.unwantedDbc >= 30 && -r.unwantedDbc <= 45 && -r.carrierDbc >= 30 && -r.carrierDbc <= 45) {
      out.push({ seed, ex });
    }
  }
  return out;
}

export interface BenchRun {
  startDb: number;
  finalDb: number;
  stopReason: string;
  lastReadDb: number;
  readings: number;
}

/**
 * One calibration on one device: `mismatch` (null = exact trims) between the trims asked for and
 * those acting, analyzer noise, floor and outliers (`outlierRate` of readings `outlierDb` off,
 * either sign). Returns true suppression at the start and at the result (drift as at the end).
 */
export async function runOne(
  qty: 'sideband' | 'carrier',
  dev: BenchDevice,
  budget: number,
  seed: number,
  mismatch: TrimMismatch | null,
  outlierRate = 0,
): Promise<BenchRun> {
  const m = mismatch ?? EXACT_TRIMS;
  const an = createAnalyzer(dev.ex, { seed, floorDbc: FLOOR, noiseDb: NOISE, outlierRate, outlierDb: 10 });
  let k = 0;
  const acting = (t: Partial<Trims>) => applyTrimMismatch(m, t, k);
  const truth = (t: Partial<Trims>) => {
    const r = dev.ex.response(TONE_HZ, acting(t), AMPLITUDE);
    return -(qty === 'sideband' ? r.unwantedDbc : r.carrierDbc);
  };
  const startDb = truth(ZERO_TRIMS);
  const measure = (t: Trims): number => {
    const a = acting(t);
    k++;
    return qty === 'sideband'
      ? an.readSideband(TONE_HZ, a, AMPLITUDE)
      : an.readCarrier(TONE_HZ, a, AMPLITUDE);
  };
  const r: TrimCalibrationResult =
    qty === 'sideband'
      ? await calibrateSideband({ measure, maxReadings: budget })
      : await calibrateCarrier({ measure, maxReadings: budget });
  const ok = r.history.filter((h) => Number.isFinite(h.levelDb));
  return {
    startDb,
    finalDb: truth(r.trims),
    stopReason: r.stopReason,
    lastReadDb: ok.length > 0 ? ok[ok.length - 1]!.levelDb : Number.NaN,
    readings: r.readings,
  };
}

/** Nearest-rank quantile (q in 0…1). */
export function quantile(xs: readonly number[], q: number): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.max(0, Math.round(q * (s.length - 1))))]!;
}

export interface BenchSummary {
  median: number;
  p90: number;
  worst: number;
  worseThanStart: number;
  /** `floor` stops while the analyzer floor lay ≥ 10 dB below the last reading. */
  earlyFloorStops: number;
  runs: number;
}

/**
 * Runs a bench: `devices` devices, each with its own drawn mismatch (when `mismatched`), analyzer
 * seeds from `seed`.
 */
export async function runBench(
  qty: 'sideband' | 'carrier',
  devices: readonly BenchDevice[],
  opts: { budget: number; seed: number; mismatched: boolean; outlierRate?: number },
): Promise<BenchSummary> {
  const rng = createRng(opts.seed);
  const finals: number[] = [];
  let worse = 0;
  let early = 0;
  for (const [i, dev] of devices.entries()) {
    const m = opts.mismatched ? drawTrimMismatch(rng) : null;
    const r = await runOne(qty, dev, opts.budget, opts.seed * 1000 + i, m, opts.outlierRate ?? 0);
    finals.push(r.finalDb);
    if (r.finalDb < r.startDb - 0.01) worse++;
    if (r.stopReason === 'floor' && FLOOR <= r.lastReadDb - 10) early++;
  }
  return {
    median: quantile(finals, 0.5),
    p90: quantile(finals, 0.1),
    worst: quantile(finals, 0),
    worseThanStart: worse,
    earlyFloorStops: early,
    runs: finals.length,
  };
}
