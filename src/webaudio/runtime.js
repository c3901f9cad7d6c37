import { createQuadratureGenerator } from '../generate/quadrature-generator.js';
import { createTestSource } from './test-source.js';

function wrap(gen) {
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
export function createRunningGenerator(network, sideband, correction, trims) {
  return wrap(createQuadratureGenerator(network, { sideband, correction, trims }));
}
const inputSource = {
  fill(out, input) {
    if (input && input.length === out.length) out.set(input);
    else out.fill(0);
  },
  reset() {},
};
const silence = {
  fill(out) {
    out.fill(0);
  },
  reset() {},
};
/**
 * Creates the source a spec describes. Test sources are unit-level (peak 1 for a tone, PEP 1 for
 * two tones, RMS 1 for noise); the processor's `levelDb` sets the level.
 * @throws {OrthotoneError} INVALID_ARGUMENT for an unknown kind or a bad frequency or duration.
 */
export function createBlockSource(spec, sampleRate) {
  if (spec?.kind === 'input') return inputSource;
  if (spec?.kind === 'silence') return silence;
  return createTestSource(spec, sampleRate);
}
