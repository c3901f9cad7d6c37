/**
 * The generate/ kernels as the processor uses them: a running quadrature generator (network +
 * trims + sideband + correction). The block sources are in test-source.ts.
 * Also used on the main thread by the node factory to validate everything before the audio thread
 * sees it.
 */
import type { Correction, Trims } from '../core/trims.js';
import type { Network } from '../design/network.js';
import { createQuadratureGenerator, type QuadratureGenerator } from '../generate/quadrature-generator.js';
import type { GeneratorStats, Sideband } from '../generate/trim-stage.js';

/** A generator plus the operations the processor needs. */
export interface RunningGenerator {
  process(input: Float32Array, outI: Float32Array, outQ: Float32Array): void;
  /** Sets all trims; `immediate` skips the generator's ramp (used when a fresh generator takes over). */
  setTrims(trims: Trims, immediate: boolean): void;
  /** Selects the sideband (ramped by the generator). */
  setSideband(sideband: Sideband): void;
  /** A copy with identical state and a different correction (for a cross-faded swap). */
  withCorrection(correction: Correction | null): RunningGenerator;
  reset(): void;
  /** The generator's counters (live object). */
  readonly stats: Readonly<GeneratorStats>;
}

function wrap(gen: QuadratureGenerator): RunningGenerator {
  return {
    process: (input, outI, outQ) => gen.process(input, outI, outQ),
    setTrims: (trims, immediate) => gen.setTrims(trims, immediate ? { rampSeconds: 0 } : undefined),
    setSideband: (sb) => gen.setSideband(sb),
    withCorrection(correction) {
      const c = gen.clone();
      c.setCorrection(correction);
      return wrap(c);
    },
    reset: () => gen.reset(),
    get stats() {
      return gen.stats;
    },
  };
}

/**
 * Creates the generator the processor runs.
 * @throws {OrthotoneError} INVALID_DOCUMENT / INVALID_ARGUMENT as createQuadratureGenerator does.
 */
export function createRunningGenerator(
  network: Network,
  sideband: Sideband,
  correction: Correction | null,
  trims: Trims,
): RunningGenerator {
  return wrap(createQuadratureGenerator(network, { sideband, correction, trims }));
}
