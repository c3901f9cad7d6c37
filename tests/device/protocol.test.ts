/** The host side of the link protocol: line classification, numbers, checksum, network encoding. */
import { describe, expect, it } from 'vitest';
import {
  coefficientCode,
  crc16Bytes,
  crc16Codes,
  type DeviceInfo,
  encodeNetwork,
  encodeSet,
  formatNumber,
  LINE_MAX,
  parseDeviceLine,
  parseGreeting,
} from '../../src/device/protocol.js';
import { expectOrthotoneError } from '../support/errors.js';

const GREETING =
  'link=1 rate=48000 arith=q15 gres=0.0005301 pres=0.0034971 dres=0.000030518 gmax=6 pmax=45 dmax=1 ramp=20 taps=127 secs=12 name=x';
const fields = (s: string) => Object.fromEntries(s.split(' ').map((kv) => kv.split('=') as [string, string]));
const INFO: DeviceInfo = parseGreeting(fields(GREETING));

describe('link protocol codec', () => {
  it('classifies answers, errors, notices and garbage', () => {
    expect(parseDeviceLine('12 ok trims gain=0.5 phase=0 dci=0 dcq=0')).toMatchObject({
      kind: 'ok',
      tag: 12,
      verb: 'trims',
      fields: { gain: '0.5' },
    });
    expect(parseDeviceLine('4 err RANGE gain 9 dB is outside -6..6 dB')).toMatchObject({
      kind: 'error',
      tag: 4,
      code: 'RANGE',
    });
    expect(parseDeviceLine(`* hello ${GREETING}`)).toMatchObject({ kind: 'notice', verb: 'hello' });
    for (const g of [
      '',
      'ok',
      'hello world',
      '65536 ok x',
      '01 ok x',
      '3 maybe',
      '\x13~#noise \xfe',
      '7 err lower',
    ]) {
      expect(parseDeviceLine(g).kind, JSON.stringify(g)).toBe('garbage');
    }
    expect(parseDeviceLine('3 ok trims\r')).toMatchObject({ kind: 'ok', verb: 'trims' });
  });

  it('writes plain decimals without exponents', () => {
    expect(formatNumber(1e-7)).toBe('0.0000001');
    expect(formatNumber(-0.25)).toBe('-0.25');
    expect(formatNumber(-1e-12)).toBe('0');
    expect(formatNumber(1000)).toBe('1000');
    expect(encodeSet({ gainDb: 0.35, dcQ: -0.0007 })).toBe('set gain=0.35 dcq=-0.0007');
    expectOrthotoneError(() => encodeSet({}), 'INVALID_ARGUMENT', /no trim/);
  });

  it('CRC-16/CCITT-FALSE matches the catalogue check value', () => {
    // Greg Cook, "Catalogue of parametrised CRC algorithms", CRC-16/IBM-3740: check = 0x29B1
    expect(crc16Bytes([...'123456789'].map((c) => c.charCodeAt(0)))).toBe(0x29b1);
    // the same register over 32-bit codes, least significant byte first
    expect(crc16Codes([0x34333231, 0x38373635])).toBe(
      crc16Bytes([...'12345678'].map((c) => c.charCodeAt(0))),
    );
  });

  it('refuses another version and a greeting without its fields', () => {
    expectOrthotoneError(
      () => parseGreeting({ ...fields(GREETING), link: '2' }),
      'DEVICE_VERSION',
      /version 2/,
    );
    expectOrthotoneError(
      () => parseGreeting({ ...fields(GREETING), rate: 'fast' }),
      'INVALID_DOCUMENT',
      /rate/,
    );
  });

  it('encodes a network in the device arithmetic, in lines that fit the device buffer', () => {
    expect(coefficientCode(0.5, 'q15')).toBe(16384);
    expect(coefficientCode(-0.99999, 'q15')).toBe(-32767);
    expect(coefficientCode(1.5, 'q31')).toBe(2 ** 31 - 1);
    expect(coefficientCode(0.5, 'float32') >>> 0).toBe(0x3f000000); // IEEE 754 binary32 of 0.5
    const taps = Array.from({ length: 101 }, (_, k) => (k % 2 ? 0.6 / (k - 50) : 0));
    const { lines, crc } = encodeNetwork({ sampleRate: 48000, kind: 'fir', taps }, INFO);
    expect(lines[0]).toBe('net begin fir n=101');
    expect(lines.at(-1)).toBe(`net end crc=${crc.toString(16).toUpperCase().padStart(4, '0')}`);
    for (const l of lines) expect(`65535 ${l}`.length).toBeLessThanOrEqual(LINE_MAX);
    const sent = lines
      .filter((l) => l.startsWith('net put'))
      .flatMap((l) => l.split('v=')[1]!.split(',').map(Number));
    expect(sent).toEqual(taps.map((t) => coefficientCode(t, 'q15')));
    expectOrthotoneError(
      () => encodeNetwork({ sampleRate: 44100, kind: 'fir', taps }, INFO),
      'INVALID_ARGUMENT',
      /44100 Hz but the device runs at 48000 Hz/,
    );
  });
});
