/**
 * Thin transports for {@link DeviceLink} that need no platform import: a pair of WHATWG streams
 * (Web Serial's `port.readable`/`port.writable`, or any in-page stream pair), a Web Serial port,
 * and a WebSocket (the browser's, or the `ws` package's, which has the same shape) talking to the
 * bridge (`orthotone bridge`). The shapes are declared structurally, so this file imports neither
 * DOM nor Node types.
 */
import { OrthotoneError } from '../core/errors.js';
/**
 * A byte channel over a readable and a writable stream.
 * @param streams the two streams (e.g. an open Web Serial port's `readable` and `writable`).
 * @param label a name for messages.
 * @param onClose called once after the channel closed (to close the port itself).
 * @returns the channel.
 * @throws never
 * Reference: WHATWG Streams Standard (readers and writers).
 */
export function streamChannel(streams, label, onClose) {
  const reader = streams.readable.getReader();
  const writer = streams.writable.getWriter();
  let closed = false;
  let sinkRef;
  const finish = async (err) => {
    if (closed) return;
    closed = true;
    try {
      await reader.cancel();
    } catch {
      // already errored
    }
    try {
      reader.releaseLock();
      writer.releaseLock();
    } catch {
      // a pending read may hold the lock; the stream is finished anyway
    }
    if (onClose) await onClose().catch(() => undefined);
    sinkRef?.closed(err);
  };
  return {
    label,
    start(sink) {
      sinkRef = sink;
      (async () => {
        for (;;) {
          let r;
          try {
            r = await reader.read();
          } catch (e) {
            return finish(e instanceof Error ? e : new Error(String(e)));
          }
          if (r.done) return finish();
          if (r.value && r.value.length > 0 && !closed) sink.data(r.value);
        }
      })();
    },
    async write(bytes) {
      if (closed) throw new Error(`${label} is closed`);
      await writer.write(bytes);
    },
    async close() {
      const s = sinkRef;
      sinkRef = undefined; // a requested close is not a fault
      await finish();
      sinkRef = s;
    },
  };
}
/**
 * A connector for a Web Serial port (the page asks the user for it with
 * `navigator.serial.requestPort()`); each call opens the port and wraps its streams.
 * @param port the port object.
 * @param baudRate line rate, bit/s (default 115200; USB CDC devices ignore it).
 * @returns a connector for {@link openDeviceLink}.
 * @throws never (the connector rejects when the port cannot be opened).
 * Reference: W3C Web Serial API draft, `SerialPort.open()`.
 */
export function webSerialConnector(port, baudRate = 115200) {
  return async () => {
    await port.open({ baudRate });
    if (!port.readable || !port.writable) {
      await port.close().catch(() => undefined);
      throw new OrthotoneError('DEVICE_LOST', 'the serial port opened without streams (was it unplugged?)');
    }
    return streamChannel({ readable: port.readable, writable: port.writable }, 'Web Serial port', () =>
      port.close(),
    );
  };
}
function toBytes(data) {
  if (data instanceof Uint8Array) return data;
  if (data instanceof ArrayBuffer) return new Uint8Array(data);
  if (Array.isArray(data)) {
    // ws delivers fragmented messages as an array of chunks
    const parts = data.map(toBytes).filter((x) => x !== undefined);
    const out = new Uint8Array(parts.reduce((n, p) => n + p.length, 0));
    let at = 0;
    for (const p of parts) {
      out.set(p, at);
      at += p.length;
    }
    return out;
  }
  if (typeof data === 'string') {
    const b = new Uint8Array(data.length);
    for (let i = 0; i < data.length; i++) b[i] = data.charCodeAt(i) & 0x7f;
    return b;
  }
  return undefined;
}
/**
 * A connector to the WebSocket bridge (`orthotone bridge`): binary messages carry the serial
 * bytes both ways; the bridge closes the socket when the device's port closes, and a new socket
 * makes it open the port again.
 * @param url e.g. `ws://127.0.0.1:8765`.
 * @param create makes a socket: `(url) => new WebSocket(url)` in a page, or the `ws` package in Node.
 * @param openTimeoutMs time allowed to connect, ms (default 3000).
 * @returns a connector for {@link openDeviceLink}.
 * @throws never (the connector rejects with DEVICE_LOST when the bridge cannot be reached).
 * Reference: RFC 6455 (WebSocket), binary frames.
 */
export function webSocketConnector(url, create, openTimeoutMs = 3000) {
  return () =>
    new Promise((resolve, reject) => {
      const ws = create(url);
      ws.binaryType = 'arraybuffer';
      let sink;
      let opened = false;
      let done = false;
      const early = [];
      const timer = setTimeout(() => {
        if (opened) return;
        done = true;
        ws.close();
        reject(
          new OrthotoneError('DEVICE_LOST', `the bridge at ${url} did not accept within ${openTimeoutMs} ms`),
        );
      }, openTimeoutMs);
      ws.onmessage = (ev) => {
        const b = toBytes(ev.data);
        if (!b) return;
        if (sink) sink.data(b);
        else early.push(b);
      };
      ws.onerror = () => undefined; // onclose follows and carries the reason
      ws.onclose = (ev) => {
        clearTimeout(timer);
        if (!opened) {
          if (!done) {
            done = true;
            reject(
              new OrthotoneError(
                'DEVICE_LOST',
                `cannot reach the bridge at ${url}${ev.reason ? `: ${ev.reason}` : ''}: is 'orthotone bridge' running?`,
              ),
            );
          }
          return;
        }
        const s = sink;
        sink = undefined;
        s?.closed(ev.code === 1000 ? undefined : new Error(ev.reason || `bridge closed (code ${ev.code})`));
      };
      ws.onopen = () => {
        if (done) return;
        opened = true;
        clearTimeout(timer);
        resolve({
          label: url,
          start(s) {
            sink = s;
            for (const b of early.splice(0)) s.data(b);
          },
          async write(bytes) {
            if (ws.readyState !== 1) throw new Error(`the bridge at ${url} is closed`);
            ws.send(bytes);
          },
          async close() {
            sink = undefined;
            ws.close(1000, 'done');
          },
        });
      };
    });
}
