/**
 * Web Audio: the AudioWorklet generator node, the capture node and the live trim reader. The
 * processor module itself is the separate entry `orthotone/worklet` (dist/worklet/processor.js).
 * No import-time side effects.
 *
 * The public names of this folder: a deliberate list (docs/api.md lists them; tests/api-surface.test.ts
 * checks the two agree). Everything else here is internal: import it from its own file.
 */
export type {
  AudioContextLike,
  AudioParamLike,
  PortLike,
  WorkletNodeConstructor,
  WorkletNodeLike,
  WorkletNodeOptionsLike,
} from './audio-types.js';
export {
  type CaptureNode,
  type CaptureNodeOptions,
  type CaptureResult,
  createCaptureNode,
} from './capture-node.js';
export {
  CAPTURE_PROCESSOR_NAME,
  type ProcessorStats,
  QUADRATURE_PARAMS,
  QUADRATURE_PROCESSOR_NAME,
  type QuadratureParamName,
  type SourceSpec,
} from './messages.js';
export {
  createQuadratureNode,
  type ProcessorFault,
  type QuadratureNode,
  type QuadratureNodeOptions,
  type SwapAck,
} from './node.js';
export {
  type CaptureSourceOptions,
  createCaptureSource,
  createGeneratorApplier,
  createTrimReader,
  type TrimReaderOptions,
} from './trim-reader.js';
export { loadWorkletModule } from './worklet-module.js';
