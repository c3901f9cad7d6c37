/**
 * A measuring receiver or spectrum analyzer reading the virtual exciter the way a person or a
 * calibration program would: one scalar level per reading, with the analyzer's floor power-added,
 * Gaussian reading noise in dB, and optional outliers and failed readings. The rehearsal bench for
 * calibration (DESIGN.md §6–7).
 */
import { OrthotoneError } from '../core/errors.js';
import { createRng } from '../core/rng.js';
import type { Trims } from '../core/trims.js';
import { requireFinite, requireRange, stripUndefined } from '../core/validate.js';
import type { VirtualExciter } from './exciter.js';

/** Options of {@link createAnalyzer}. */
export interface AnalyzerOptions {
  /** The analyzer's floor relative to the wanted tone, dBc (default −70): readings never go below it. */
  floorDbc: number;
  /** One standard deviation of the reading noise, dB (default 0.5). */
  noiseDb: number;
  /** Seed of the reading noise. */
  seed: number;
  /** Probability that a reading is an outlier (default 0). */
  outlierRate: number;
  /** Size of an outlier, dB, added with a random sign (default 10). */
  outlierDb: number;
  /** Probability that a reading fails and throws MEASUREMENT_FAILED (default 0). */
  failureRate: number;
}

/** Defaults for {@link AnalyzerOptions} (seed required). */
export const DEFAULT_ANALYZER_OPTIONS = Object.freeze({
  floorDbc: -70,
  noiseDb: 0.5,
  outlierRate: 0,
  outlierDb: 10,
  failureRate: 0,
});

/** A reading analyzer. */
export interface Analyzer {
  /**
   * Unwanted-sideband level relative to the wanted tone, dBc, as the analyzer shows it: the
   * exciter's analytic level ({@link VirtualExciter.response}) power-added to the floor, plus
   * Gaussian reading noise and, with probability `outlierRate`, ±`outlierDb` (reading model of
   * DESIGN.md §6; power addition of incoherent components, common practice, no source). Counts as
   * one reading (also when it fails).
   * @param toneHz tone frequency, Hz, signed (negative = lower sideband).
   * @param trims DESIGN.md §4 units: gainDb dB, phaseDeg degrees, skewSamples samples, dcI/dcQ
   *   full-scale units.
   * @param toneAmplitude peak tone amplitude, full-scale units (default 1 = 0 dBFS).
   * @returns the reading, dBc.
   * @throws {OrthotoneError} MEASUREMENT_FAILED with probability `failureRate` (a simulated failed
   *   reading); INVALID_ARGUMENT from {@link VirtualExciter.response} for a non-finite tone or a trim
   *   out of range (no reading is counted then).
   */
  readSideband(toneHz: number, trims: Partial<Trims>, toneAmplitude?: number): number;
  /**
   * Carrier level relative to the wanted tone, dBc, as the analyzer shows it (same reading model
   * as {@link Analyzer.readSideband}). Counts as one reading.
   * @param toneHz tone frequency, Hz, signed (negative = lower sideband).
   * @param trims DESIGN.md §4 units (dcI/dcQ in full-scale units move the carrier).
   * @param toneAmplitude peak tone amplitude, full-scale units (default 1).
   * @returns the reading, dBc.
   * @throws {OrthotoneError} MEASUREMENT_FAILED with probability `failureRate`; INVALID_ARGUMENT
   *   for a non-finite tone or a trim out of range.
   */
  readCarrier(toneHz: number, trims: Partial<Trims>, toneAmplitude?: number): number;
  /**
   * Both from one setting (counts as two readings: sideband first, then carrier; each with its own
   * noise, outlier and failure draw).
   * @param toneHz tone frequency, Hz, signed.
   * @param trims DESIGN.md §4 units.
   * @param toneAmplitude peak tone amplitude, full-scale units (default 1).
   * @returns `sidebandDbc` and `carrierDbc`, dBc.
   * @throws {OrthotoneError} MEASUREMENT_FAILED when either reading fails (if the sideband reading
   *   fails, the carrier is not read and only one reading is counted); INVALID_ARGUMENT for a
   *   non-finite tone or a trim out of range.
   */
  readBoth(
    toneHz: number,
    trims: Partial<Trims>,
    toneAmplitude?: number,
  ): { sidebandDbc: number; carrierDbc: number };
  /** Readings taken so far (including failed ones). */
  readonly readings: number;
}

/**
 * Creates an analyzer reading `exciter`: reading = `10·log10(10^(level/10) + 10^(floor/10))`
 * plus `N(0, noiseDb²)`, plus (rarely) ±`outlierDb`; a failed reading throws.
 * @param exciter the virtual exciter whose analytic response is read.
 * @param options `seed` required; see {@link AnalyzerOptions}.
 * @throws {OrthotoneError} INVALID_ARGUMENT for bad options; readings throw MEASUREMENT_FAILED
 *   with probability `failureRate`.
 * Reference: power addition of a level and a floor (incoherent sum); reading noise model of
 * DESIGN.md §6 (σ in dB).
 * @example
 * ```ts
 * import { createAnalyzer, createVirtualExciter, homebrewBenchDevice } from 'orthotone';
 *
 * const exciter = createVirtualExciter(homebrewBenchDevice(), { sampleRate: 48000, seed: 1 });
 * const analyzer = createAnalyzer(exciter, { seed: 2, noiseDb: 0.2 });
 * const { sidebandDbc, carrierDbc } = analyzer.readBoth(1000, { gainDb: 0.2, phaseDeg: -1 });
 * console.log(sidebandDbc.toFixed(1), carrierDbc.toFixed(1), 'dBc');
 * ```
 */
export function createAnalyzer(
  exciter: VirtualExciter,
  options: Partial<AnalyzerOptions> & { seed: number },
): Analyzer {
  const o = { ...DEFAULT_ANALYZER_OPTIONS, ...stripUndefined(options) } as AnalyzerOptions;
  requireFinite('seed', o.seed);
  requireRange('floorDbc', o.floorDbc, -300, 0, 'dBc');
  requireRange('noiseDb', o.noiseDb, 0, 20, 'dB');
  requireRange('outlierRate', o.outlierRate, 0, 1);
  requireRange('outlierDb', o.outlierDb, 0, 100, 'dB');
  requireRange('failureRate', o.failureRate, 0, 1);
  const rng = createRng(o.seed);
  let readings = 0;
  const floorP = 10 ** (o.floorDbc / 10);
  const read = (levelDbc: number): number => {
    readings++;
    // Fixed draw order per reading (failure, outlier, sign, noise) keeps sequences reproducible.
    const fail = rng.uniform() < o.failureRate;
    const out = rng.uniform() < o.outlierRate;
    const sign = rng.uniform() < 0.5 ? -1 : 1;
    const noise = o.noiseDb * rng.normal();
    if (fail) {
      throw new OrthotoneError(
        'MEASUREMENT_FAILED',
        `reading ${readings} failed (simulated analyzer failure)`,
        readings,
      );
    }
    return 10 * Math.log10(10 ** (levelDbc / 10) + floorP) + noise + (out ? sign * o.outlierDb : 0);
  };
  return {
    readSideband(toneHz, trims, toneAmplitude = 1) {
      return read(exciter.response(toneHz, trims, toneAmplitude).unwantedDbc);
    },
    readCarrier(toneHz, trims, toneAmplitude = 1) {
      return read(exciter.response(toneHz, trims, toneAmplitude).carrierDbc);
    },
    readBoth(toneHz, trims, toneAmplitude = 1) {
      const r = exciter.response(toneHz, trims, toneAmplitude);
      return { sidebandDbc: read(r.unwantedDbc), carrierDbc: read(r.carrierDbc) };
    },
    get readings() {
      return readings;
    },
  };
}
