export { createCaptureNode, } from './capture-node.js';
export { CAPTURE_PROCESSOR_NAME, QUADRATURE_PARAMS, QUADRATURE_PROCESSOR_NAME, } from './messages.js';
export { createQuadratureNode, } from './node.js';
export { createTrimReader } from './trim-reader.js';
export { loadWorkletModule } from './worklet-module.js';
