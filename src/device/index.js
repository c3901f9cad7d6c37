// The public names of this folder: a deliberate list (docs/api.md lists them; tests/api-surface.test.ts
// checks the two agree). The line codec's helpers (parsers, encoders, CRC) are internal: import them
// from protocol.ts; the protocol itself is documented in docs/protocol.md.
export { openDeviceLink, } from './link.js';
export { LINK_VERSION, } from './protocol.js';
export { streamChannel, webSerialConnector, webSocketConnector, } from './streams.js';
