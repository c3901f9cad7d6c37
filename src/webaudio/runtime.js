import { createQuadratureGenerator } from '../generate/quadrature-generator.js';
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
