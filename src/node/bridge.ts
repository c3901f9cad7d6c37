/**
 * The WebSocket bridge: lets any browser reach a serial device through this computer. One
 * WebSocket client at a time; binary messages carry the serial bytes both ways, unchanged (the
 * device link protocol runs end to end between the page and the device). The port is opened when
 * a client connects and closed when it leaves; when the port closes (device unplugged or reset),
 * the socket is closed with code 1011, and the page's link reconnects. Bound to 127.0.0.1 unless
 * told otherwise, so the device is not offered to the network.
 */
import type { AddressInfo } from 'node:net';
import { type WebSocket, WebSocketServer } from 'ws';
import { OrthotoneError } from '../core/errors.js';
import type { ByteChannel } from '../device/link.js';
import { openSerialChannel } from './serial-transport.js';

/** Options of {@link startBridge}. */
export interface BridgeOptions {
  /** The serial port (or pseudo-terminal) to serve. */
  devicePath: string;
  /** TCP port to listen on (0: any free port). */
  port: number;
  /** Address to bind (default 127.0.0.1). */
  host: string;
  /** Serial line rate, bit/s (default 115200). */
  baudRate: number;
  /**
   * Called with one line per event (client connected, port opened, …).
   * @throws should not; an error would end the bridge's event handler.
   */
  log?: (line: string) => void;
}

/** A running bridge. */
export interface Bridge {
  /** `ws://host:port`. */
  readonly url: string;
  /** The bound TCP port. */
  readonly port: number;
  /** Stops listening, closes the client and the serial port. @throws never */
  close(): Promise<void>;
}

/**
 * Starts the bridge.
 * @param options device path, TCP port, bind address, line rate, logger.
 * @returns the running bridge once it listens.
 * @throws {OrthotoneError} INVALID_ARGUMENT for a TCP port outside 0…65535; WRITE_FAILED is not
 *   used; the listen error (e.g. EADDRINUSE) as DEVICE_LOST with the address named.
 * Reference: RFC 6455; the `ws` package's `WebSocketServer`.
 */
export function startBridge(options: Partial<BridgeOptions> & { devicePath: string }): Promise<Bridge> {
  const host = options.host ?? '127.0.0.1';
  const tcpPort = options.port ?? 0;
  const log = options.log ?? (() => undefined);
  if (!Number.isInteger(tcpPort) || tcpPort < 0 || tcpPort > 65535) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `port ${tcpPort} must be a whole number from 0 to 65535`,
      tcpPort,
    );
  }
  return new Promise((resolve, reject) => {
    const wss = new WebSocketServer({ host, port: tcpPort });
    let client: WebSocket | undefined;
    let channel: ByteChannel | undefined;
    wss.on('error', (e: NodeJS.ErrnoException) => {
      reject(
        new OrthotoneError('DEVICE_LOST', `cannot listen on ${host}:${tcpPort}: ${e.code ?? e.message}`),
      );
    });
    wss.on('connection', (ws, req) => {
      if (client) {
        ws.close(1013, 'the bridge serves one client at a time');
        return;
      }
      client = ws;
      log(`client ${req.socket.remoteAddress ?? '?'} connected`);
      // Bytes that arrive before the port is open, sent to it in order once it is.
      const pending: Uint8Array[] = [];
      // binaryType 'nodebuffer' (ws's default, kept here): every message, text or binary, arrives as
      // one Buffer, fragments already joined.
      ws.on('message', (data: Buffer) => {
        const bytes = new Uint8Array(data.buffer, data.byteOffset, data.length);
        if (channel) channel.write(bytes).catch(() => undefined);
        else pending.push(bytes);
      });
      ws.on('close', () => {
        log('client left');
        // Only the one served client registers this handler, so `client` and `channel` are its own.
        client = undefined;
        const c = channel;
        channel = undefined;
        c?.close();
      });
      openSerialChannel(options.devicePath, { baudRate: options.baudRate ?? 115200 }).then(
        (c) => {
          if (client !== ws) {
            c.close();
            return;
          }
          channel = c;
          log(`opened ${options.devicePath}`);
          c.start({
            // After the socket closes, ws drops what is sent (no callback given): no readyState check.
            data: (bytes) => ws.send(bytes),
            closed: (err) => {
              log(`${options.devicePath} closed${err ? ` (${err.message})` : ''}`);
              // The socket's close handler forgets the channel once the closing handshake ends.
              ws.close(1011, 'the device port closed');
            },
          });
          for (const b of pending.splice(0)) c.write(b).catch(() => undefined);
        },
        (e: Error) => {
          log(e.message);
          ws.close(1011, e.message.slice(0, 120));
        },
      );
    });
    wss.on('listening', () => {
      // bound to a host and a TCP port (not a pipe), the server's address is an AddressInfo
      const { port } = wss.address() as AddressInfo;
      resolve({
        url: `ws://${host}:${port}`,
        port,
        close: () =>
          new Promise<void>((res) => {
            for (const c of wss.clients) c.terminate();
            channel?.close();
            wss.close(() => res());
          }),
      });
    });
  });
}
