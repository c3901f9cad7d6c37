/**
 * A measuring receiver or spectrum analyzer reading the virtual exciter the way a person or a
 * calibration program would: one scalar level per reading, with the analyzer's floor power-added,
 * Gaussian reading noise in dB, and optional outliers and failed readings. The rehearsal bench for
 * calibration (DESIGN.md §6–7).
 */
import { OrthotoneError } from '../core/errors.js';
import { createRng } from '../core/rng.js';
import { requireFinite, requireRange } from '../core/validate.js';
/** Defaults for {@link AnalyzerOptions} (seed required). */
export const DEFAULT_ANALYZER_OPTIONS = Object.freeze({
  floorDbc: -70,
  noiseDb: 0.5,
  outlierRate: 0,
  outlierDb: 10,
  failureRate: 0,
});
/**
 * Creates an analyzer reading `exciter`: reading = `10·log10(10^(level/10) + 10^(floor/10))`
 * plus `N(0, noiseDb²)`, plus (rarely) ±`outlierDb`; a failed reading throws.
 * @param exciter the virtual exciter whose analytic response is read.
 * @param options `seed` required; see {@link AnalyzerOptions}.
 * @throws {OrthotoneError} INVALID_ARGUMENT for bad options; readings throw MEASUREMENT_FAILED
 *   with probability `failureRate`.
 * Reference: power addition of a level and a floor (incoherent sum); reading noise model of
 * DESIGN.md §6 (σ in dB).
 */
export function createAnalyzer(exciter, options) {
  const o = {
    ...DEFAULT_ANALYZER_OPTIONS,
    ...Object.fromEntries(Object.entries(options ?? {}).filter(([, v]) => v !== undefined)),
  };
  requireFinite('seed', o.seed);
  requireRange('floorDbc', o.floorDbc, -300, 0, 'dBc');
  requireRange('noiseDb', o.noiseDb, 0, 20, 'dB');
  requireRange('outlierRate', o.outlierRate, 0, 1);
  requireRange('outlierDb', o.outlierDb, 0, 100, 'dB');
  requireRange('failureRate', o.failureRate, 0, 1);
  const rng = createRng(o.seed);
  let readings = 0;
  const floorP = 10 ** (o.floorDbc / 10);
  const read = (levelDbc) => {
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
