/**
 * Node-only entry (`orthotone/node`): everything in `orthotone`, plus files, WAV, streams, the
 * serial transport and the WebSocket bridge. The names below are a deliberate list (docs/api.md lists
 * them; tests/api-surface.test.ts checks the two agree); files.ts's atomic-write helpers are the
 * command line's, internal.
 */
export * from '../index.js';
export { type Bridge, type BridgeOptions, startBridge } from './bridge.js';
export { createIqTransformStream, type IqChunk, type IqStreamOptions } from './iq-stream.js';
export { openSerialChannel, type SerialOptions, serialConnector } from './serial-transport.js';
export {
  createWavWriter,
  decodeWav,
  encodeWav,
  MAX_DECODED_SAMPLES,
  openWavReader,
  readIqWavFile,
  readWavFile,
  toMono,
  WAV_ENCODINGS,
  type WavData,
  type WavEncoding,
  type WavInfo,
  type WavReader,
  type WavReadOptions,
  type WavWriteReport,
  type WavWriter,
  type WavWriterOptions,
  writeIqWavFile,
  writeWavFile,
} from './wav.js';
