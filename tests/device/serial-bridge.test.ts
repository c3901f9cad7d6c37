/**
 * The serial channel (src/node/serial-transport.ts) and the WebSocket bridge (src/node/bridge.ts) on
 * real components, fast enough for every run: a real pseudo-terminal opened through `serialport`
 * (tests/device/pty-echo.py sends back every byte it receives), a real WebSocket client from the `ws`
 * package against the bridge on a real TCP port, the line rate read back with coreutils' `stty`, the
 * bound address read from the kernel's socket table (/proc/net/tcp, tcp6; proc(5)).
 * What is checked is what a user relies on: bytes pass unchanged both ways (all 256 values, in
 * order), one client at a time, loopback only, and close/open failures that name the port and the fix.
 * The protocol over the bridge (compiled virtual device, Chromium) is in bridge-browser.test.ts.
 */
import { execFileSync, spawn } from 'node:child_process';
import { chmodSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { readFile } from 'node:fs/promises';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { WebSocket } from 'ws';
import { isOrthotoneError } from '../../src/core/errors.js';
import type { ByteChannel } from '../../src/device/link.js';
import { type Bridge, startBridge } from '../../src/node/bridge.js';
import { openSerialChannel, serialConnector } from '../../src/node/serial-transport.js';
import { killEchoes, startEcho } from './pty-echo.js';

let work: string;
const channels: ByteChannel[] = [];
const bridges: Bridge[] = [];
const sockets: WebSocket[] = [];

beforeAll(() => {
  work = mkdtempSync(join(tmpdir(), 'ot-bridge-'));
});
afterEach(async () => {
  for (const s of sockets.splice(0)) s.terminate();
  await Promise.all(bridges.splice(0).map((b) => b.close()));
  await Promise.all(channels.splice(0).map((c) => c.close()));
  await killEchoes();
});
afterAll(async () => {
  await killEchoes();
  rmSync(work, { recursive: true, force: true });
});

/** Every byte value once, in an order that puts line ends, XON/XOFF and 0xFF next to others. */
const ALL_BYTES = Uint8Array.from({ length: 256 }, (_, k) => (k * 97 + 13) % 256);

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

const openChannel = async (path: string, baudRate?: number) => {
  const c = await openSerialChannel(path, baudRate === undefined ? {} : { baudRate });
  channels.push(c);
  return c;
};

/** The line rate the kernel holds for a tty, read by coreutils' stty (a second opener: root here). */
const lineRate = (path: string) => Number(execFileSync('stty', ['-F', path, 'speed']).toString().trim());

/** Collects what a sink is given. */
function collector() {
  const got: number[] = [];
  const closes: (Error | undefined)[] = [];
  return {
    got,
    closes,
    sink: { data: (b: Uint8Array) => got.push(...b), closed: (e?: Error) => closes.push(e) },
  };
}

const bridgeOf = async (opts: Parameters<typeof startBridge>[0]) => {
  const b = await startBridge(opts);
  bridges.push(b);
  return b;
};

/** A `ws` client that records the bytes it receives and how it was closed. */
async function client(url: string) {
  const ws = new WebSocket(url);
  sockets.push(ws);
  const got: number[] = [];
  ws.on('message', (d: Buffer) => got.push(...d));
  const closed = new Promise<{ code: number; reason: string }>((r) =>
    ws.on('close', (code, reason) => r({ code, reason: reason.toString() })),
  );
  await new Promise<void>((res, rej) => {
    ws.once('open', () => res());
    ws.once('error', rej);
  });
  return { ws, got, closed };
}

describe('serial channel on a real pseudo-terminal', () => {
  it('carries every byte value unchanged both ways and names itself by its path', async () => {
    const dev = await startEcho();
    const ch = await openChannel(dev.path);
    expect(ch.label).toBe(dev.path);
    const c = collector();
    ch.start(c.sink);
    await ch.write(ALL_BYTES.subarray(0, 100));
    await ch.write(ALL_BYTES.subarray(100));
    await expect.poll(() => c.got.length, { timeout: 3000 }).toBe(256);
    expect(c.got).toEqual([...ALL_BYTES]);
    expect(c.closes).toEqual([]);
  });

  it('sets the line rate asked for, 115200 bit/s by default', async () => {
    const dev = await startEcho();
    await openChannel(dev.path);
    expect(lineRate(dev.path)).toBe(115200);
    const ch = channels.pop()!;
    await ch.close();
    await openChannel(dev.path, 9600);
    expect(lineRate(dev.path)).toBe(9600);
    // the connector opens the same path with the same options, afresh each time it is called
    const ch2 = channels.pop()!;
    await ch2.close();
    const connect = serialConnector(dev.path, { baudRate: 19200 });
    const again = await connect();
    channels.push(again);
    expect(again.label).toBe(dev.path);
    expect(lineRate(dev.path)).toBe(19200);
    await again.close();
    channels.push(await connect());
    expect(lineRate(dev.path)).toBe(19200);
  });

  it('closing it on purpose is not reported as a lost device, and frees the port', async () => {
    const dev = await startEcho();
    const ch = await openChannel(dev.path);
    const c = collector();
    ch.start(c.sink);
    await ch.close();
    await ch.close(); // a second close resolves too
    await expect(ch.write(Uint8Array.of(1))).rejects.toThrow(
      `cannot write to ${dev.path}: the port is closed`,
    );
    await sleep(100);
    expect(c.closes).toEqual([]);
    // the port's lock is released: another program can open it now
    const other = await openChannel(dev.path);
    expect(other.label).toBe(dev.path);
  });

  it('reports an unplugged device to its sink, with the reason', async () => {
    const dev = await startEcho();
    const ch = await openChannel(dev.path);
    const c = collector();
    ch.start(c.sink);
    await ch.write(Uint8Array.of(42));
    await expect.poll(() => c.got, { timeout: 3000 }).toEqual([42]);
    await dev.unplug();
    await expect.poll(() => c.closes.length, { timeout: 3000 }).toBe(1);
    expect(c.closes[0]).toBeInstanceOf(Error);
    // a write to the lost port is refused at once, naming it (the link then reconnects)
    const e = await ch.write(Uint8Array.of(1)).catch((x: unknown) => x);
    expect(isOrthotoneError(e, 'DEVICE_LOST'), String(e)).toBe(true);
    expect((e as Error).message).toBe(`cannot write to ${dev.path}: the port is closed`);
    await ch.close(); // closing a port already gone resolves
  });

  it('names the path and the fix when the port cannot be opened', async () => {
    const missing = join(work, 'ttyACM9');
    const e1 = await openSerialChannel(missing).catch((x: unknown) => x);
    expect(isOrthotoneError(e1, 'DEVICE_LOST'), String(e1)).toBe(true);
    expect((e1 as Error).message).toBe(
      `cannot open ${missing}: it does not exist (is the device plugged in?)`,
    );

    // busy: serialport locks the port it opens (TIOCEXCL and flock), so a second opener is refused
    const dev = await startEcho();
    await openChannel(dev.path);
    const e2 = await openSerialChannel(dev.path).catch((x: unknown) => x);
    expect(isOrthotoneError(e2, 'DEVICE_LOST'), String(e2)).toBe(true);
    expect((e2 as Error).message).toBe(`cannot open ${dev.path}: another program holds it`);

    // not a terminal: the system's own words are passed on
    const plain = join(work, 'plain-file');
    writeFileSync(plain, 'x');
    const e3 = await openSerialChannel(plain).catch((x: unknown) => x);
    expect(isOrthotoneError(e3, 'DEVICE_LOST'), String(e3)).toBe(true);
    expect((e3 as Error).message).toMatch(
      new RegExp(`^cannot open ${plain}: Error: Inappropriate ioctl for device`),
    );
  });

  it('names the fix when the user may not open the port', async () => {
    // A port owned by root, opened as an ordinary user (the effective user id is dropped for the open;
    // needs root to do so, as the test machine runs).
    if (typeof process.seteuid !== 'function' || process.geteuid?.() !== 0) return;
    const port = join(work, 'ttyS-root-only');
    writeFileSync(port, '');
    chmodSync(port, 0o600);
    process.seteuid!(65534);
    const e = await openSerialChannel(port)
      .catch((x: unknown) => x)
      .finally(() => process.seteuid!(0));
    expect(isOrthotoneError(e, 'DEVICE_LOST'), String(e)).toBe(true);
    expect((e as Error).message).toBe(
      `cannot open ${port}: permission denied (add yourself to the group that owns it, e.g. dialout)`,
    );
  });
});

/** The local addresses (hex, as /proc/net/tcp* prints them) of the sockets listening on a TCP port. */
function listeners(port: number): string[] {
  const hexPort = port.toString(16).toUpperCase().padStart(4, '0');
  const out: string[] = [];
  for (const f of ['/proc/net/tcp', '/proc/net/tcp6']) {
    let text = '';
    try {
      text = readFileSync(f, 'utf8');
    } catch {
      continue;
    }
    for (const line of text.split('\n').slice(1)) {
      const cols = line.trim().split(/\s+/);
      // st 0A is LISTEN (include/net/tcp_states.h)
      if (cols.length > 3 && cols[1]!.endsWith(`:${hexPort}`) && cols[3] === '0A') out.push(cols[1]!);
    }
  }
  return out;
}

/**
 * Occupies every thread of libuv's pool with a blocking open of a FIFO (fifo(7): opening one for
 * reading waits for a writer), so work queued on the pool (a serial port's open) waits until the
 * returned function releases them (a shell opens each FIFO for writing).
 */
function holdThreadPool(): () => Promise<void> {
  const n = Number(process.env.UV_THREADPOOL_SIZE ?? 4);
  const fifos = Array.from({ length: n }, (_, k) => join(work, `hold-${Date.now()}-${k}`));
  for (const f of fifos) execFileSync('mkfifo', [f]);
  const reads = fifos.map((f) => readFile(f));
  return async () => {
    spawn('sh', ['-c', 'for f in "$@"; do : > "$f"; done', 'sh', ...fifos], { stdio: 'ignore' });
    await Promise.all(reads);
  };
}

describe('WebSocket bridge to a real pseudo-terminal', () => {
  it('carries every byte value unchanged both ways, also bytes sent before the port is open', async () => {
    const dev = await startEcho();
    const log: string[] = [];
    const bridge = await bridgeOf({ devicePath: dev.path, log: (l) => log.push(l) });
    expect(bridge.url).toBe(`ws://127.0.0.1:${bridge.port}`);
    // The bridge opens the port when the client connects; the port's open runs on libuv's thread pool,
    // held here so that the first chunks certainly arrive before it: they wait for it, in order.
    const release = holdThreadPool();
    const c = await client(bridge.url);
    c.ws.send(ALL_BYTES.subarray(0, 10));
    c.ws.send(ALL_BYTES.subarray(10, 128));
    await sleep(50);
    expect(log).toEqual(['client 127.0.0.1 connected']);
    await release();
    await expect.poll(() => log.includes(`opened ${dev.path}`), { timeout: 3000 }).toBe(true);
    c.ws.send(ALL_BYTES.subarray(128));
    await expect.poll(() => c.got.length, { timeout: 3000 }).toBe(256);
    expect(c.got).toEqual([...ALL_BYTES]);
    expect(log.slice(0, 2)).toEqual(['client 127.0.0.1 connected', `opened ${dev.path}`]);
    // the default line rate on the port while a client is connected
    expect(lineRate(dev.path)).toBe(115200);
  });

  it('serves one client at a time: a second is refused with the reason, the first carries on', async () => {
    const dev = await startEcho();
    const log: string[] = [];
    const bridge = await bridgeOf({ devicePath: dev.path, baudRate: 9600, log: (l) => log.push(l) });
    const first = await client(bridge.url);
    await expect.poll(() => log.includes(`opened ${dev.path}`), { timeout: 3000 }).toBe(true);
    expect(lineRate(dev.path)).toBe(9600);
    const second = await client(bridge.url);
    expect(await second.closed).toEqual({ code: 1013, reason: 'the bridge serves one client at a time' });
    first.ws.send(Uint8Array.of(1, 2, 3));
    await expect.poll(() => first.got, { timeout: 3000 }).toEqual([1, 2, 3]);
    expect(log.filter((l) => l.endsWith('connected'))).toHaveLength(1);

    // once the first leaves, the port is closed (free for others) and the next client is served
    first.ws.close();
    await expect.poll(() => log.includes('client left'), { timeout: 3000 }).toBe(true);
    const other = await openChannel(dev.path);
    await other.close();
    channels.pop();
    const third = await client(bridge.url);
    third.ws.send(Uint8Array.of(9, 8, 7));
    await expect.poll(() => third.got, { timeout: 3000 }).toEqual([9, 8, 7]);
  });

  it('a client that leaves before the port opens leaves the port closed', async () => {
    const dev = await startEcho();
    const log: string[] = [];
    const bridge = await bridgeOf({ devicePath: dev.path, log: (l) => log.push(l) });
    // The port's open runs on libuv's thread pool; holding the pool makes "the client left first" certain.
    const release = holdThreadPool();
    const c = await client(bridge.url);
    c.ws.terminate();
    await c.closed;
    await expect.poll(() => log.includes('client left'), { timeout: 3000 }).toBe(true);
    expect(log).not.toContain(`opened ${dev.path}`);
    await release();
    await sleep(150);
    expect(log).toEqual(['client 127.0.0.1 connected', 'client left']);
    const other = await openChannel(dev.path); // refused as busy if the bridge had kept it
    expect(other.label).toBe(dev.path);
  });

  it('listens on the loopback address only, unless told otherwise', async () => {
    const dev = await startEcho();
    const bridge = await bridgeOf({ devicePath: dev.path });
    // 0100007F is 127.0.0.1 in the kernel's byte order; a wildcard bind would show 00000000 or ::
    expect(listeners(bridge.port).map((a) => a.split(':')[0])).toEqual(['0100007F']);
  });

  it('refuses a TCP port outside 0…65535, naming it and the range', () => {
    for (const port of [-1, 65536, 80.5, Number.NaN]) {
      let e: unknown;
      try {
        void startBridge({ devicePath: '/dev/null', port });
      } catch (x) {
        e = x;
      }
      expect(isOrthotoneError(e, 'INVALID_ARGUMENT'), String(port)).toBe(true);
      expect((e as Error).message).toBe(`port ${port} must be a whole number from 0 to 65535`);
    }
  });

  it('accepts the TCP ports at both ends of the range', async () => {
    const dev = await startEcho();
    expect((await bridgeOf({ devicePath: dev.path, port: 0 })).port).toBeGreaterThan(0); // any free port
    // 65535 may be taken by another program: then the listen fails, but the port number is not refused
    const top = await startBridge({ devicePath: dev.path, port: 65535 }).catch((x: unknown) => x);
    if (top instanceof Error) expect(top.message).toBe('cannot listen on 127.0.0.1:65535: EADDRINUSE');
    else {
      bridges.push(top as Bridge);
      expect((top as Bridge).port).toBe(65535);
    }
  });

  it('takes the TCP port asked for, and names the address when it is taken', async () => {
    // a free port, found by the system
    const free = await new Promise<number>((res) => {
      const s = createServer().listen(0, '127.0.0.1', () => {
        const p = (s.address() as { port: number }).port;
        s.close(() => res(p));
      });
    });
    const dev = await startEcho();
    const bridge = await bridgeOf({ devicePath: dev.path, port: free, host: '127.0.0.1' });
    expect(bridge.port).toBe(free);
    expect(bridge.url).toBe(`ws://127.0.0.1:${free}`);
    const e = await startBridge({ devicePath: dev.path, port: free }).catch((x: unknown) => x);
    expect(isOrthotoneError(e, 'DEVICE_LOST'), String(e)).toBe(true);
    expect((e as Error).message).toBe(`cannot listen on 127.0.0.1:${free}: EADDRINUSE`);
  });

  it('closes the client with 1011 and the reason when the port cannot be opened', async () => {
    // a path long enough that the reason must be cut to fit a close frame (123 bytes at most, RFC 6455 §5.5)
    const missing = join(work, `tty-${'x'.repeat(150)}`);
    const log: string[] = [];
    const bridge = await bridgeOf({ devicePath: missing, log: (l) => log.push(l) });
    const c = await client(bridge.url);
    const { code, reason } = await c.closed;
    const full = `cannot open ${missing}: it does not exist (is the device plugged in?)`;
    expect(code).toBe(1011);
    expect(reason).toBe(full.slice(0, 120));
    await expect.poll(() => log, { timeout: 3000 }).toContain(full);
  });

  it('closes the client with 1011 when the device goes away, and logs the port', async () => {
    const dev = await startEcho();
    const log: string[] = [];
    const bridge = await bridgeOf({ devicePath: dev.path, log: (l) => log.push(l) });
    const c = await client(bridge.url);
    await expect.poll(() => log.includes(`opened ${dev.path}`), { timeout: 3000 }).toBe(true);
    await dev.unplug();
    expect(await c.closed).toEqual({ code: 1011, reason: 'the device port closed' });
    expect(log.some((l) => l.startsWith(`${dev.path} closed (`))).toBe(true);
    // the bridge carries on: the next client is served (here refused only by the missing port)
    const next = await client(bridge.url);
    expect((await next.closed).code).toBe(1011);
  });

  it('close() ends the client and frees the port, then stops listening', async () => {
    const dev = await startEcho();
    const log: string[] = [];
    const bridge = await bridgeOf({ devicePath: dev.path, log: (l) => log.push(l) });
    const c = await client(bridge.url);
    await expect.poll(() => log.includes(`opened ${dev.path}`), { timeout: 3000 }).toBe(true);
    await bridge.close();
    bridges.pop();
    expect((await c.closed).code).toBe(1006); // terminated: no close frame
    const other = await openChannel(dev.path);
    expect(other.label).toBe(dev.path);
    expect(listeners(bridge.port)).toEqual([]);
  });
});
