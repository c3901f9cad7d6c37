// The public names of this folder: a deliberate list (docs/api.md lists them; tests/api-surface.test.ts
// checks the two agree). The line codec's helpers (parsers, encoders, CRC) are internal: import them
// from protocol.ts; the protocol itself is documented in docs/protocol.md.
export {
  type ByteChannel,
  type ByteSink,
  type Connector,
  type DeviceLink,
  type DeviceLinkOptions,
  type LinkEvent,
  type LinkRecord,
  openDeviceLink,
} from './link.js';
export {
  type DeviceInfo,
  type DeviceSource,
  type DeviceTrims,
  LINK_VERSION,
  type LinkNetwork,
} from './protocol.js';
export {
  type ReadableLike,
  type SerialPortLike,
  streamChannel,
  type WebSocketLike,
  type WritableLike,
  webSerialConnector,
  webSocketConnector,
} from './streams.js';
