/**
 * The device link over a serial port in Node, on the maintained `serialport` package: a thin
 * adapter from its stream to the link's {@link ByteChannel}. Lines are split by the link itself
 * (it bounds their length and counts garbage), so no parser package is needed here.
 */
import { SerialPort } from 'serialport';
import { OrthotoneError } from '../core/errors.js';
import type { ByteChannel, Connector } from '../device/link.js';

/** Options of {@link serialConnector}. */
export interface SerialOptions {
  /** Line rate, bit/s (default 115200; USB CDC devices and pseudo-terminals ignore it). */
  baudRate: number;
}

/**
 * Opens a serial port as a byte channel.
 * @param path the port, e.g. `/dev/ttyACM0`, `COM3`, or a pseudo-terminal.
 * @param options line rate.
 * @returns the open channel.
 * @throws {OrthotoneError} DEVICE_LOST naming the port and the system's reason when it cannot be
 *   opened (missing, busy, no permission).
 * Reference: serialport 13 `SerialPort` (https://serialport.io/docs/api-serialport).
 */
export function openSerialChannel(path: string, options: Partial<SerialOptions> = {}): Promise<ByteChannel> {
  const baudRate = options.baudRate ?? 115200;
  return new Promise((resolve, reject) => {
    const port = new SerialPort({ path, baudRate, autoOpen: false });
    port.open((err) => {
      if (err) {
        const why = /ENOENT|No such file/.test(err.message)
          ? 'it does not exist (is the device plugged in?)'
          : /EACCES|Permission/.test(err.message)
            ? 'permission denied (add yourself to the group that owns it, e.g. dialout)'
            : /lock|EBUSY|Resource temporarily/.test(err.message)
              ? 'another program holds it'
              : err.message;
        reject(new OrthotoneError('DEVICE_LOST', `cannot open ${path}: ${why}`, path));
        return;
      }
      let closing = false;
      resolve({
        label: path,
        start(sink) {
          port.on('data', (b: Buffer) => sink.data(new Uint8Array(b.buffer, b.byteOffset, b.length)));
          port.on('error', () => undefined); // 'close' follows with the reason
          port.on('close', (e: Error | null) => {
            if (!closing) sink.closed(e ?? undefined);
          });
        },
        write(bytes) {
          return new Promise<void>((res, rej) => {
            // serialport holds a write to a closed port until the port opens again, which this one
            // never does (a reconnect opens a new port): refuse it, as ByteChannel promises.
            if (!port.isOpen) {
              rej(new OrthotoneError('DEVICE_LOST', `cannot write to ${path}: the port is closed`, path));
              return;
            }
            port.write(Buffer.from(bytes), (e) => (e ? rej(e) : res()));
          });
        },
        close() {
          closing = true;
          // On a port already closed, serialport calls back at once with "Port is not open".
          return new Promise<void>((res) => port.close(() => res()));
        },
      });
    });
  });
}

/**
 * A connector for {@link openDeviceLink} that (re)opens a serial port by path; after a device
 * reset that re-enumerates the port, the same path is tried again.
 * @param path the port.
 * @param options line rate.
 * @returns the connector.
 * @throws never (the connector rejects as {@link openSerialChannel} does).
 * Reference: serialport 13.
 */
export function serialConnector(path: string, options: Partial<SerialOptions> = {}): Connector {
  return () => openSerialChannel(path, options);
}
