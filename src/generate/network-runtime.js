/**
 * The contract shared by the two network runtimes (Hilbert FIR and all-pass pair): a stateful
 * processor that turns a chunk of mono samples into the I and Q branch outputs, in double precision,
 * without allocating. Kernels here know nothing of Web Audio or Node (STYLE.md habit 8).
 */
/** Largest chunk a runtime's `process` accepts, samples. Callers split longer blocks. */
export const RUNTIME_CHUNK = 128;
