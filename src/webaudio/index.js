/**
 * Web Audio: the AudioWorklet generator node, the capture node and the live trim reader. The
 * processor module itself is the separate entry `orthotone/worklet` (dist/worklet/processor.js).
 * No import-time side effects.
 */
export * from './audio-types.js';
export * from './capture-node.js';
export { CAPTURE_PROCESSOR_NAME, QUADRATURE_PARAMS, QUADRATURE_PROCESSOR_NAME } from './messages.js';
export * from './node.js';
export * from './trim-reader.js';
export { loadWorkletModule } from './worklet-module.js';
