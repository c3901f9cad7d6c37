/**
 * `DeviceLink`: one session with a device over any byte stream (a serial port, Web Serial, a
 * WebSocket bridge, an in-memory pair). Commands go one at a time, each with a tag and a time-out;
 * garbage lines are counted and ignored; a device reset (a fresh greeting, or the stream closing
 * and coming back) is met by reconnecting, greeting again, checking the version and re-applying
 * the settings; every applied setting is recorded. Platform-free: the transport is injected.
 */
import { OrthotoneError } from '../core/errors.js';
import {
  checkDeviceTrims,
  DEVICE_LINE_MAX,
  encodeNetwork,
  encodeSet,
  encodeSource,
  LINE_MAX,
  LINK_VERSION,
  parseDeviceLine,
  parseGreeting,
  parseTrimsFields,
} from './protocol.js';

const DEFAULTS = Object.freeze({
  timeoutMs: 1000,
  slowTimeoutMs: 3000,
  reconnectMs: 5000,
  reconnectIntervalMs: 200,
});
function asciiBytes(s) {
  const b = new Uint8Array(s.length);
  for (let i = 0; i < s.length; i++) {
    const c = s.charCodeAt(i);
    b[i] = c < 128 ? c : 63;
  }
  return b;
}
const sleep = (ms) => new Promise((r) => setTimeout(r, ms));
/**
 * A session with one device. Create it with {@link openDeviceLink}.
 */
export class DeviceLink {
  /** The device's greeting (refreshed after every reset). */
  info;
  /** Lines received that were neither an answer nor a notice. */
  garbageLines = 0;
  /** Answers that arrived after their command had timed out (or with an unknown tag). */
  staleAnswers = 0;
  /** Device resets met (fresh greeting or stream closed and reopened). */
  resets = 0;
  opts;
  connect;
  channel;
  open = false;
  closing = false;
  lost;
  rx = '';
  rxOverflow = false;
  tag = 0;
  pending;
  queue = Promise.resolve();
  recovery;
  resetSeen;
  t0;
  records = [];
  last = {};
  /** @internal use {@link openDeviceLink}. */
  constructor(connect, options = {}) {
    this.connect = connect;
    this.opts = { ...DEFAULTS, ...options };
    this.t0 = (this.opts.now ?? Date.now)();
  }
  /**
   * Every applied setting, greeting, reset and re-application, in order (a copy).
   * @throws never
   */
  get history() {
    return this.records.map((r) => ({ ...r }));
  }
  /**
   * The trims last confirmed by the device, if any (dB, degrees, full scale).
   * @throws never
   */
  get appliedTrims() {
    return this.last.trims ? { ...this.last.trims } : undefined;
  }
  /**
   * A short description of the stream, e.g. the port path.
   * @throws never
   */
  get label() {
    return this.channel?.label ?? '(closed)';
  }
  record(r) {
    this.records.push({ atMs: (this.opts.now ?? Date.now)() - this.t0, ...r });
  }
  emit(e) {
    try {
      this.opts.onEvent?.(e);
    } catch {
      // a listener's failure is not the link's
    }
  }
  attach(ch) {
    this.channel = ch;
    this.rx = '';
    this.rxOverflow = false;
    ch.start({
      data: (chunk) => {
        if (this.channel === ch) this.onBytes(chunk);
      },
      closed: (err) => {
        if (this.channel === ch) this.onClosed(err);
      },
    });
  }
  onBytes(chunk) {
    for (let i = 0; i < chunk.length; i++) {
      const c = chunk[i];
      if (c === 10) {
        const line = this.rx;
        const over = this.rxOverflow;
        this.rx = '';
        this.rxOverflow = false;
        if (over) this.onGarbage(`${line}…`);
        else this.onLine(line);
      } else if (this.rx.length <= DEVICE_LINE_MAX + 1) {
        this.rx += String.fromCharCode(c);
      } else {
        this.rxOverflow = true;
      }
    }
  }
  onGarbage(line) {
    this.garbageLines++;
    this.emit({ type: 'garbage', line });
  }
  onLine(text) {
    if (text === '' || text === '\r') return;
    const line = parseDeviceLine(text);
    if (line.kind === 'garbage') {
      this.onGarbage(text);
      return;
    }
    if (line.kind === 'notice') {
      if (line.verb !== 'hello') return;
      // A fresh greeting: the device restarted. Ignore it while a `hello` is outstanding (its
      // answer greets us anyway) or before the session is up.
      if (!this.open || this.recovery) return;
      if (this.pending && this.pending.body === 'hello') return;
      this.noteReset('the device greeted again (it restarted)');
      return;
    }
    const p = this.pending;
    if (!p || line.tag !== p.tag) {
      this.staleAnswers++;
      return;
    }
    this.pending = undefined;
    clearTimeout(p.timer);
    p.settle({ line });
  }
  onClosed(err) {
    if (this.closing) return;
    this.channel = undefined;
    this.noteReset(`the stream closed${err ? ` (${err.message})` : ''}`);
  }
  noteReset(reason) {
    const p = this.pending;
    if (p) {
      this.pending = undefined;
      clearTimeout(p.timer);
      p.settle({ reset: reason });
    } else if (this.open && !this.recovery) {
      this.resetSeen = reason;
    }
  }
  /** Sends one command and waits for its answer (no queueing, no recovery). */
  exchange(body, timeoutMs) {
    const ch = this.channel;
    if (!ch) return Promise.resolve({ reset: 'the stream is closed' });
    this.tag = (this.tag % 65535) + 1;
    const tag = this.tag;
    const text = `${tag} ${body}`;
    if (text.length > LINE_MAX) {
      return Promise.reject(
        new OrthotoneError('INVALID_ARGUMENT', `command '${text}' is longer than ${LINE_MAX} characters`),
      );
    }
    return new Promise((settle, fail) => {
      const timer = setTimeout(() => {
        if (this.pending?.tag !== tag) return;
        this.pending = undefined;
        fail(
          new OrthotoneError(
            'DEVICE_TIMEOUT',
            `the device on ${ch.label} did not answer '${text}' within ${timeoutMs} ms: check that it is powered, the port is right and nothing else holds it`,
            text,
          ),
        );
      }, timeoutMs);
      this.pending = { tag, body, settle, fail, timer };
      ch.write(asciiBytes(`${text}\n`)).catch((e) => {
        if (this.pending?.tag !== tag) return;
        this.pending = undefined;
        clearTimeout(timer);
        settle({ reset: `writing failed (${e?.message ?? String(e)})` });
      });
    });
  }
  /** Sends a command; an `err` answer becomes DEVICE_REFUSED. */
  async ask(body, timeoutMs) {
    const x = await this.exchange(body, timeoutMs);
    if ('line' in x && x.line.kind === 'error') {
      throw new OrthotoneError(
        'DEVICE_REFUSED',
        `the device refused '${body}': ${x.line.code} ${x.line.text}`,
        x.line.code,
      );
    }
    return x;
  }
  /** Greets the device and checks the version; sets `info`. */
  async greet() {
    const x = await this.ask('hello', this.opts.timeoutMs);
    if ('reset' in x) return 'reset';
    this.info = parseGreeting(x.line.fields, LINK_VERSION);
    this.record({ what: 'greeting', applied: { ...this.info.fields } });
    this.emit({ type: 'greeting', info: this.info });
    return undefined;
  }
  /**
   * Opens the stream and greets; used by {@link openDeviceLink}. @internal
   * @throws {OrthotoneError} as {@link openDeviceLink}.
   */
  async start() {
    this.attach(await this.connect());
    try {
      // Up to two tries: a device that resets as the port opens (many boards do) greets late.
      if ((await this.greet()) === 'reset') {
        if (!this.channel) this.attach(await this.connect());
        if ((await this.greet()) === 'reset') {
          throw new OrthotoneError(
            'DEVICE_LOST',
            `the device on ${this.label} closed the link while greeting`,
          );
        }
      }
    } catch (e) {
      await this.close();
      throw e;
    }
    this.open = true;
    return this.info;
  }
  async recover(reason) {
    this.resets++;
    this.record({ what: 'reset', requested: reason });
    this.emit({ type: 'reset', reason });
    const now = this.opts.now ?? Date.now;
    const deadline = now() + this.opts.reconnectMs;
    let lastErr = '';
    for (;;) {
      if (this.closing) throw new OrthotoneError('DEVICE_LOST', 'the link was closed');
      try {
        if (!this.channel) this.attach(await this.connect());
        if ((await this.greet()) !== 'reset') break;
        lastErr = 'it closed again while greeting';
      } catch (e) {
        if (e.code === 'DEVICE_VERSION') throw this.markLost(e);
        lastErr = e.message;
        if (this.channel) {
          const ch = this.channel;
          this.channel = undefined;
          await ch.close();
        }
      }
      if (now() >= deadline) {
        throw this.markLost(
          new OrthotoneError(
            'DEVICE_LOST',
            `the device went away (${reason}) and did not come back within ${this.opts.reconnectMs} ms (${lastErr}): check the cable and power; the settings made so far are kept in the history`,
          ),
        );
      }
      await sleep(this.opts.reconnectIntervalMs);
    }
    await this.reapply();
  }
  markLost(e) {
    this.lost = e;
    this.record({ what: 'lost', requested: e.message });
    this.emit({ type: 'lost', error: e });
    return e;
  }
  /** Re-applies network, sideband, source and trims after a reset. */
  async reapply() {
    const l = this.last;
    const must = async (body, slow = false) => {
      const x = await this.ask(body, slow ? this.opts.slowTimeoutMs : this.opts.timeoutMs);
      if ('reset' in x)
        throw new OrthotoneError('DEVICE_LOST', `the device reset again while re-applying '${body}'`);
      return x.line;
    };
    if (l.network) {
      const { lines } = encodeNetwork(l.network, this.info);
      for (const body of lines) await must(body, body.startsWith('net end'));
    }
    if (l.sideband) await must(`sideband ${l.sideband}`);
    if (l.source) await must(encodeSource(l.source));
    const want = this.opts.restoreTrims?.() ?? l.trims;
    let applied;
    if (want && Object.keys(want).length > 0) {
      applied = parseTrimsFields((await must(encodeSet(checkDeviceTrims(want, this.info)))).fields);
      this.last.trims = applied;
    }
    this.record({
      what: 'reapply',
      requested: { trims: want, sideband: l.sideband, source: l.source, network: l.network !== undefined },
      applied,
    });
    this.emit({ type: 'reapplied', trims: applied });
  }
  /** Runs `body` alone: after earlier commands, after any recovery. */
  serial(body) {
    const run = this.queue.then(body, body);
    this.queue = run.catch(() => undefined);
    return run;
  }
  /** One command with recovery: a reset while waiting leads to reconnect, re-apply and resend. */
  command(body, slow = false) {
    return this.serial(() => this.commandNow(body, slow));
  }
  /** {@link command} without queueing (for use inside a serial section). */
  async commandNow(body, slow) {
    for (let attempt = 0; ; attempt++) {
      if (this.lost) throw this.lost;
      if (!this.open) throw new OrthotoneError('DEVICE_LOST', 'the link is closed');
      if (this.resetSeen !== undefined || !this.channel) {
        const why = this.resetSeen ?? 'the stream is closed';
        this.resetSeen = undefined;
        this.recovery = this.recover(why);
        try {
          await this.recovery;
        } finally {
          this.recovery = undefined;
        }
      }
      const x = await this.ask(body, slow ? this.opts.slowTimeoutMs : this.opts.timeoutMs);
      if ('line' in x) return x.line;
      if (attempt >= 3) {
        throw this.markLost(
          new OrthotoneError(
            'DEVICE_LOST',
            `the device keeps resetting (${x.reset}): check its power supply`,
          ),
        );
      }
      this.resetSeen = x.reset;
    }
  }
  /**
   * Asks the device to identify itself again.
   * @returns the greeting.
   * @throws {OrthotoneError} DEVICE_TIMEOUT, DEVICE_LOST, DEVICE_VERSION.
   */
  async identify() {
    const x = await this.command('hello');
    this.info = parseGreeting(x.fields, LINK_VERSION);
    return this.info;
  }
  /**
   * Reads the trims the device applies.
   * @returns gain dB, phase degrees, DC full scale, converted back from the device's internal values.
   * @throws {OrthotoneError} DEVICE_TIMEOUT, DEVICE_LOST, DEVICE_REFUSED, INVALID_DOCUMENT.
   */
  async readTrims() {
    return parseTrimsFields((await this.command('trims')).fields);
  }
  /**
   * Sets any of the four trims (atomically, ramped by the device) and returns what it applied.
   * @param t trims to change, dB, degrees, full scale; absent ones keep their value.
   * @returns the full trim set as applied (the device's read-back).
   * @throws {OrthotoneError} INVALID_ARGUMENT outside the device's limits (nothing sent);
   *   DEVICE_TIMEOUT, DEVICE_LOST, DEVICE_REFUSED.
   */
  async setTrims(t) {
    if (!this.info) throw new OrthotoneError('DEVICE_LOST', 'the link is not open');
    const want = {};
    for (const k of ['gainDb', 'phaseDeg', 'dcI', 'dcQ']) if (t[k] !== undefined) want[k] = t[k];
    checkDeviceTrims(want, this.info);
    const applied = parseTrimsFields((await this.command(encodeSet(want))).fields);
    this.last.trims = applied;
    this.record({ what: 'trims', requested: want, applied });
    return applied;
  }
  /**
   * Chooses the sideband.
   * @param sideband 'upper' or 'lower'.
   * @throws {OrthotoneError} INVALID_ARGUMENT for another word; DEVICE_TIMEOUT, DEVICE_LOST, DEVICE_REFUSED.
   */
  async setSideband(sideband) {
    if (sideband !== 'upper' && sideband !== 'lower') {
      throw new OrthotoneError('INVALID_ARGUMENT', `sideband ${sideband} must be upper or lower`, sideband);
    }
    await this.command(`sideband ${sideband}`);
    this.last.sideband = sideband;
    this.record({ what: 'sideband', requested: sideband, applied: sideband });
  }
  /**
   * Chooses the source: an internal tone, two-tone, or the external input.
   * @param s the source (Hz, peak full scale).
   * @throws {OrthotoneError} INVALID_ARGUMENT for bad values; DEVICE_TIMEOUT, DEVICE_LOST, DEVICE_REFUSED.
   */
  async setSource(s) {
    const body = encodeSource(s);
    const x = await this.command(body);
    this.last.source = { ...s };
    this.record({ what: 'source', requested: { ...s }, applied: { ...x.fields, words: x.words } });
  }
  /**
   * Loads a network in the device's arithmetic; the device switches to it at a block boundary,
   * cross-fading.
   * @param net a network document at the device's rate.
   * @returns the checksum the device confirmed.
   * @throws {OrthotoneError} INVALID_ARGUMENT (rate or size); DEVICE_REFUSED (e.g. CHECK);
   *   DEVICE_TIMEOUT, DEVICE_LOST.
   */
  async loadNetwork(net) {
    if (!this.info) throw new OrthotoneError('DEVICE_LOST', 'the link is not open');
    const { lines, crc } = encodeNetwork(net, this.info);
    // The load is one unit: if the device resets mid-way, recovery restarts it from `net begin`.
    return this.serial(async () => {
      for (let attempt = 0; attempt < 3; attempt++) {
        const before = this.resets;
        let ok = true;
        for (const body of lines) {
          await this.commandNow(body, body.startsWith('net end'));
          if (this.resets !== before) {
            ok = false;
            break;
          }
        }
        if (ok) {
          this.last.network = net;
          this.record({
            what: 'network',
            requested: { kind: net.kind, coefficients: lines.length },
            applied: { crc },
          });
          return crc;
        }
      }
      throw new OrthotoneError('DEVICE_LOST', 'the device kept resetting while the network was loading');
    });
  }
  /**
   * Asks the device to keep its settings in non-volatile memory.
   * @throws {OrthotoneError} DEVICE_REFUSED (STORE), DEVICE_TIMEOUT, DEVICE_LOST.
   */
  async store() {
    await this.command('store', true);
    this.record({ what: 'store', requested: { ...this.last, network: this.last.network !== undefined } });
  }
  /**
   * Closes the stream. Pending commands fail with DEVICE_LOST.
   * @throws never
   */
  async close() {
    this.closing = true;
    this.open = false;
    const p = this.pending;
    if (p) {
      this.pending = undefined;
      clearTimeout(p.timer);
      p.fail(new OrthotoneError('DEVICE_LOST', 'the link was closed'));
    }
    const ch = this.channel;
    this.channel = undefined;
    if (ch) await ch.close();
  }
}
/**
 * Opens a link: connects, greets, checks the protocol version.
 * @param connect opens the byte stream (again, after a reset).
 * @param options time-outs, reconnection, restore policy, events.
 * @returns the open link; `link.info` holds the greeting.
 * @throws {OrthotoneError} DEVICE_VERSION for another protocol version, DEVICE_TIMEOUT when the
 *   device does not answer, DEVICE_LOST when the stream closes; the connector's own error when the
 *   port cannot be opened.
 * Reference: docs/protocol.md (this project's own protocol).
 */
export async function openDeviceLink(connect, options = {}) {
  const link = new DeviceLink(connect, options);
  await link.start();
  return link;
}
