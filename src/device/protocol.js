/**
 * The device link's line protocol, version 1 (docs/protocol.md): parsing the device's lines,
 * encoding commands, the greeting, trims in the protocol's units, and a network in the device's
 * arithmetic with its checksum. Pure functions over strings; no platform API.
 */
import { OrthotoneError } from '../core/errors.js';
/** The protocol version this library speaks (the greeting's `link=`). */
export const LINK_VERSION = 1;
/** Longest command line the host may send, characters before the LF (the device's buffer). */
export const LINE_MAX = 96;
/** Longest line a device may send, characters before the LF. */
export const DEVICE_LINE_MAX = 200;
const TAG_RE = /^(?:0|[1-9]\d{0,4})$/;
function splitWords(rest) {
  const words = [];
  const fields = {};
  for (const w of rest) {
    const eq = w.indexOf('=');
    if (eq > 0) fields[w.slice(0, eq)] = w.slice(eq + 1);
    else words.push(w);
  }
  return { words, fields };
}
/**
 * Classifies one line from a device (without its LF; a trailing CR is ignored). Anything that is
 * not a well-formed answer or notice is `garbage`, never an exception.
 * @param line the text of one line.
 * @returns the parsed line.
 * @throws never
 * Reference: docs/protocol.md, "Lines" (this project's own protocol).
 */
export function parseDeviceLine(line) {
  const text = line.endsWith('\r') ? line.slice(0, -1) : line;
  if (text.length > DEVICE_LINE_MAX || /[^\x20-\x7e]/.test(text)) return { kind: 'garbage', line };
  const parts = text.split(' ').filter((w) => w !== '');
  const [head, kind, ...rest] = parts;
  if (head === undefined || kind === undefined) return { kind: 'garbage', line };
  if (head === '*') {
    return { kind: 'notice', verb: kind, ...splitWords(rest) };
  }
  if (!TAG_RE.test(head)) return { kind: 'garbage', line };
  const tag = Number(head);
  if (tag > 65535) return { kind: 'garbage', line };
  if (kind === 'ok') {
    const [verb, ...more] = rest;
    if (verb === undefined) return { kind: 'garbage', line };
    return { kind: 'ok', tag, verb, ...splitWords(more) };
  }
  if (kind === 'err') {
    const [code, ...more] = rest;
    if (code === undefined || !/^[A-Z]+$/.test(code)) return { kind: 'garbage', line };
    return { kind: 'error', tag, code, text: more.join(' ') };
  }
  return { kind: 'garbage', line };
}
/**
 * A number as the protocol writes it: plain decimal, no exponent, at most `digits` (≤ 9) places
 * after the point, trailing zeros dropped.
 * @param x a finite number.
 * @param digits places after the point (default 9).
 * @returns the text, e.g. `-0.25`, `1000`.
 * @throws {OrthotoneError} INVALID_ARGUMENT for a non-finite number.
 */
export function formatNumber(x, digits = 9) {
  if (!Number.isFinite(x)) {
    throw new OrthotoneError('INVALID_ARGUMENT', `${x} cannot be sent to a device: use a finite number`, x);
  }
  let s = x.toFixed(Math.max(0, Math.min(9, digits)));
  if (s.includes('.')) s = s.replace(/0+$/, '').replace(/\.$/, '');
  if (s === '-0') s = '0';
  return s;
}
const NUMBER_RE = /^[-+]?(\d+(\.\d*)?|\.\d+)$/;
function fieldNumber(fields, key, what) {
  const v = fields[key];
  if (v === undefined || !NUMBER_RE.test(v)) {
    throw new OrthotoneError(
      'INVALID_DOCUMENT',
      `the device's ${what} has ${v === undefined ? `no ${key}=` : `${key}=${v}, not a number`}: the firmware does not follow docs/protocol.md`,
      v,
    );
  }
  return Number(v);
}
const ARITHMETICS = ['q15', 'q31', 'float32'];
/**
 * Reads a greeting's fields (from `* hello …` or `ok hello …`) and checks the version.
 * @param fields the `key=value` fields.
 * @param expected the version this host speaks (default {@link LINK_VERSION}).
 * @returns the device's description.
 * @throws {OrthotoneError} DEVICE_VERSION when `link` differs from `expected` (naming both);
 *   INVALID_DOCUMENT when a required field is missing or not a number, or the arithmetic unknown.
 * Reference: docs/protocol.md, "The greeting".
 */
export function parseGreeting(fields, expected = LINK_VERSION) {
  const link = fieldNumber(fields, 'link', 'greeting');
  if (link !== expected) {
    throw new OrthotoneError(
      'DEVICE_VERSION',
      `the device speaks link protocol version ${link}, this orthotone speaks version ${expected}: update the firmware or orthotone so they match`,
      link,
    );
  }
  const arith = fields['arith'];
  if (!ARITHMETICS.includes(arith)) {
    throw new OrthotoneError(
      'INVALID_DOCUMENT',
      `the device's greeting has arith=${arith ?? '(none)'}: expected one of ${ARITHMETICS.join(', ')}`,
      arith,
    );
  }
  const n = (k) => fieldNumber(fields, k, 'greeting');
  return {
    link,
    sampleRate: n('rate'),
    arithmetic: arith,
    resolution: { gainDb: n('gres'), phaseDeg: n('pres'), dc: n('dres') },
    limits: { gainDb: n('gmax'), phaseDeg: n('pmax'), dc: n('dmax') },
    rampMs: n('ramp'),
    maxTaps: n('taps'),
    maxSections: n('secs'),
    name: fields['name'] ?? '',
    fields: Object.freeze({ ...fields }),
  };
}
/**
 * Reads the trims of an `ok trims …` answer.
 * @param fields the answer's fields (`gain`, `phase`, `dci`, `dcq`).
 * @returns the applied trims, dB, degrees, full scale.
 * @throws {OrthotoneError} INVALID_DOCUMENT when a field is missing or not a number.
 * Reference: docs/protocol.md, command `trims`.
 */
export function parseTrimsFields(fields) {
  return {
    gainDb: fieldNumber(fields, 'gain', 'trims answer'),
    phaseDeg: fieldNumber(fields, 'phase', 'trims answer'),
    dcI: fieldNumber(fields, 'dci', 'trims answer'),
    dcQ: fieldNumber(fields, 'dcq', 'trims answer'),
  };
}
/**
 * Checks a partial trim set against a device's limits.
 * @param t the trims to send (dB, degrees, full scale).
 * @param info the device's greeting.
 * @returns `t`.
 * @throws {OrthotoneError} INVALID_ARGUMENT naming the trim, its value and the device's range.
 */
export function checkDeviceTrims(t, info) {
  const lim = {
    gainDb: [info.limits.gainDb, 'dB'],
    phaseDeg: [info.limits.phaseDeg, 'degrees'],
    dcI: [info.limits.dc, 'full scale'],
    dcQ: [info.limits.dc, 'full scale'],
  };
  for (const k of Object.keys(lim)) {
    const v = t[k];
    if (v === undefined) continue;
    const [m, unit] = lim[k];
    if (typeof v !== 'number' || !Number.isFinite(v) || Math.abs(v) > m) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        `${k} ${v} ${unit} is outside the device's range: use a value from ${-m} to ${m} ${unit}`,
        v,
      );
    }
  }
  return t;
}
/**
 * The `set …` command body for a partial trim set (keys in a fixed order; absent trims omitted).
 * @param t trims, dB, degrees, full scale.
 * @returns e.g. `set gain=0.35 phase=-1.2`.
 * @throws {OrthotoneError} INVALID_ARGUMENT for a non-finite value or an empty set.
 * Reference: docs/protocol.md, command `set`.
 */
export function encodeSet(t) {
  const parts = [];
  if (t.gainDb !== undefined) parts.push(`gain=${formatNumber(t.gainDb)}`);
  if (t.phaseDeg !== undefined) parts.push(`phase=${formatNumber(t.phaseDeg)}`);
  if (t.dcI !== undefined) parts.push(`dci=${formatNumber(t.dcI)}`);
  if (t.dcQ !== undefined) parts.push(`dcq=${formatNumber(t.dcQ)}`);
  if (parts.length === 0) {
    throw new OrthotoneError('INVALID_ARGUMENT', 'no trim to set: give gainDb, phaseDeg, dcI or dcQ', t);
  }
  return `set ${parts.join(' ')}`;
}
/**
 * CRC-16/CCITT-FALSE (poly 0x1021, init 0xFFFF, no reflection, no final XOR) over 32-bit
 * two's-complement integers, each least significant byte first.
 * @param codes the coefficient codes in index order.
 * @returns the checksum, 0…65535.
 * @throws never
 * Reference: the CRC catalogue entry CRC-16/IBM-3740 (alias CCITT-FALSE), check value 0x29B1 for
 * ASCII "123456789" (Greg Cook, "Catalogue of parametrised CRC algorithms").
 */
export function crc16Codes(codes) {
  let crc = 0xffff;
  const byte = (b) => {
    crc ^= (b & 0xff) << 8;
    for (let k = 0; k < 8; k++) crc = crc & 0x8000 ? ((crc << 1) ^ 0x1021) & 0xffff : (crc << 1) & 0xffff;
  };
  for (let i = 0; i < codes.length; i++) {
    const c = codes[i] | 0;
    byte(c);
    byte(c >>> 8);
    byte(c >>> 16);
    byte(c >>> 24);
  }
  return crc;
}
/**
 * CRC-16/CCITT-FALSE over bytes (the same register as {@link crc16Codes}).
 * @param bytes the data.
 * @returns the checksum, 0…65535.
 * @throws never
 * Reference: CRC-16/IBM-3740 in Greg Cook's "Catalogue of parametrised CRC algorithms".
 */
export function crc16Bytes(bytes) {
  let crc = 0xffff;
  for (let i = 0; i < bytes.length; i++) {
    crc ^= (bytes[i] & 0xff) << 8;
    for (let k = 0; k < 8; k++) crc = crc & 0x8000 ? ((crc << 1) ^ 0x1021) & 0xffff : (crc << 1) & 0xffff;
  }
  return crc;
}
const F32 = new Float32Array(1);
const U32 = new Uint32Array(F32.buffer);
const I32 = new Int32Array(F32.buffer);
/**
 * One coefficient as the device's integer code: Q15/Q31 round to nearest (ties away from zero)
 * and saturate to ±(2ⁿ−1); float32 gives the binary32 bit pattern as a signed 32-bit integer.
 * @param x coefficient value.
 * @param arith the device's arithmetic.
 * @returns the code.
 * @throws never
 * Reference: Q-format fixed point (common practice, no source); IEEE 754-2019 binary32.
 */
export function coefficientCode(x, arith) {
  if (arith === 'float32') {
    F32[0] = x;
    return I32[0];
  }
  const bits = arith === 'q15' ? 15 : 31;
  const max = 2 ** bits - 1;
  const code = Math.sign(x) * Math.floor(Math.abs(x) * 2 ** bits + 0.5);
  return Math.max(-max, Math.min(max, code));
}
function codeText(code, arith) {
  if (arith !== 'float32') return String(code);
  I32[0] = code;
  return `x${U32[0].toString(16).toUpperCase().padStart(8, '0')}`;
}
/**
 * The command bodies that load `net` into a device (`net begin`, `net put`, `net ord`, `net end`),
 * each short enough for one line with a 5-digit tag.
 * @param net a network document (FIR or all-pass) at the device's sample rate.
 * @param info the device's greeting (arithmetic, rate, sizes).
 * @returns the bodies in order, and the checksum sent with `net end`.
 * @throws {OrthotoneError} INVALID_ARGUMENT when the rate differs from the device's or the
 *   network is larger than the device holds; INVALID_DOCUMENT when the network lacks its taps
 *   or branches.
 * Reference: docs/protocol.md, commands `net …`.
 */
export function encodeNetwork(net, info) {
  if (net.sampleRate !== info.sampleRate) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `the network is designed for ${net.sampleRate} Hz but the device runs at ${info.sampleRate} Hz: design it for ${info.sampleRate} Hz`,
      net.sampleRate,
    );
  }
  const lines = [];
  let values;
  let orders;
  if (net.kind === 'fir') {
    if (!net.taps) throw new OrthotoneError('INVALID_DOCUMENT', 'the FIR network has no taps', net);
    if (net.taps.length > info.maxTaps) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        `the network has ${net.taps.length} taps but the device holds at most ${info.maxTaps}: design a shorter one`,
        net.taps.length,
      );
    }
    values = [...net.taps];
    lines.push(`net begin fir n=${values.length}`);
  } else {
    const b = net.branches;
    if (!b) throw new OrthotoneError('INVALID_DOCUMENT', 'the all-pass network has no branches', net);
    const most = Math.max(b.i.sections.length, b.q.sections.length);
    if (most > info.maxSections) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        `a branch of the network has ${most} sections but the device holds at most ${info.maxSections}: design one with fewer sections`,
        most,
      );
    }
    const all = [...b.i.sections, ...b.q.sections];
    values = all.map((s) => s.a);
    orders = all.map((s) => s.order);
    lines.push(
      `net begin allpass i=${b.i.sections.length} q=${b.q.sections.length} di=${b.i.delay} dq=${b.q.delay}`,
    );
  }
  const codes = values.map((x) => coefficientCode(x, info.arithmetic));
  const room = LINE_MAX - 6; // a tag of up to 5 digits and its space
  const chunk = (prefix, items) => {
    let at = 0;
    while (at < items.length) {
      const head = prefix(at);
      let body = '';
      let n = 0;
      while (at + n < items.length) {
        const next = (n === 0 ? '' : ',') + items[at + n];
        if (head.length + body.length + next.length > room) break;
        body += next;
        n++;
      }
      lines.push(head + body);
      at += n;
    }
  };
  chunk(
    (at) => `net put at=${at} v=`,
    codes.map((c) => codeText(c, info.arithmetic)),
  );
  if (orders?.some((o) => o !== 1)) {
    chunk(
      (at) => `net ord at=${at} o=`,
      orders.map((o) => String(o)),
    );
  }
  const crc = crc16Codes(codes);
  lines.push(`net end crc=${crc.toString(16).toUpperCase().padStart(4, '0')}`);
  return { lines, crc };
}
/**
 * The `source …` command body.
 * @param s the source: tone (Hz, peak full scale), two-tone (Hz, Hz, each tone's peak) or input.
 * @returns e.g. `source two f=700 g=1900 a=0.4`.
 * @throws {OrthotoneError} INVALID_ARGUMENT for a non-finite or negative frequency or an amplitude
 *   outside 0…1.
 * Reference: docs/protocol.md, command `source`.
 */
export function encodeSource(s) {
  const hz = (name, v) => {
    if (!(Number.isFinite(v) && v > 0)) {
      throw new OrthotoneError('INVALID_ARGUMENT', `${name} ${v} Hz must be a positive frequency`, v);
    }
    return formatNumber(v, 3);
  };
  const amp = (v) => {
    if (!(Number.isFinite(v) && v >= 0 && v <= 1)) {
      throw new OrthotoneError('INVALID_ARGUMENT', `amplitude ${v} must be from 0 to 1 (full scale)`, v);
    }
    return formatNumber(v, 6);
  };
  if (s.kind === 'input') return 'source input';
  if (s.kind === 'tone') return `source tone f=${hz('toneHz', s.toneHz)} a=${amp(s.amplitude)}`;
  return `source two f=${hz('toneHz', s.toneHz)} g=${hz('secondHz', s.secondHz)} a=${amp(s.amplitude)}`;
}
