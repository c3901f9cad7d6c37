/**
 * The network document on disk and on stdout (DESIGN.md §3): the in-memory object, serialised as
 * JSON with every coefficient at full double precision (JavaScript's shortest round-trip form), and
 * parsed back with validation.
 */
import { OrthotoneError } from '../core/errors.js';
import { requireBand } from '../core/validate.js';
import { type Network, validateNetwork } from '../design/network.js';

/**
 * Serialises a network document as pretty-printed JSON. Coefficients round-trip exactly.
 * @param net a network document.
 * @returns JSON text ending in a newline.
 * @throws never for a network document (plain JSON data); it is serialised as given, not validated.
 * @example
 * ```ts
 * import { designNetwork, networkToJson } from 'orthotone';
 *
 * const net = designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'allpass', targetDb: 60 });
 * const text = networkToJson(net); // the network document, ready to save as network.json
 * console.log(text.length, 'characters');
 * ```
 */
export function networkToJson(net: Network): string {
  return `${JSON.stringify(net, null, 2)}\n`;
}

/**
 * Parses and validates a network document.
 * @param text JSON text of a network document, format version 1.
 * @throws {OrthotoneError} INVALID_DOCUMENT when the text is not JSON or not a valid document.
 * @example
 * ```ts
 * import { designNetwork, networkToJson, parseNetworkJson } from 'orthotone';
 *
 * const text = networkToJson(designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'fir', targetDb: 50 }));
 * const net = parseNetworkJson(text); // validated: a bad file throws OrthotoneError INVALID_DOCUMENT
 * console.log(net.kind, net.sampleRate, 'Hz');
 * ```
 */
export function parseNetworkJson(text: string): Network {
  let doc: unknown;
  try {
    doc = JSON.parse(text);
  } catch (e) {
    throw new OrthotoneError(
      'INVALID_DOCUMENT',
      `network file is not valid JSON (${printable((e as Error).message)}): give a file written by 'orthotone design --format json'`,
    );
  }
  const d = doc as Record<string, unknown> | null;
  if (typeof d === 'object' && d !== null && d.format === 'orthotone-network' && d.version !== 1) {
    throw new OrthotoneError(
      'INVALID_DOCUMENT',
      `version ${printable(JSON.stringify(d.version) ?? 'missing')} is not supported: this library reads version 1 (the number 1)`,
      d.version,
    );
  }
  const net = validateNetwork(doc);
  // The band must be a real band of this sample rate: a reversed or out-of-range band would be
  // run and evaluated as nonsense.
  try {
    requireBand(net.band, net.sampleRate);
  } catch (e) {
    throw new OrthotoneError('INVALID_DOCUMENT', `network file: ${(e as Error).message}`, net.band);
  }
  return net;
}

/**
 * Text safe to show in a one-line message: control and non-ASCII bytes written as `\xNN` /
 * `\u{…}`, cut to 120 characters (a binary file given by mistake must not spill into the terminal
 * or into JSON).
 * @throws never
 */
export function printable(s: string): string {
  const out = s.replace(/[^\x20-\x7e]/gu, (c) => {
    const cp = c.codePointAt(0)!;
    return cp < 0x100 ? `\\x${cp.toString(16).padStart(2, '0')}` : `\\u{${cp.toString(16)}}`;
  });
  return out.length > 120 ? `${out.slice(0, 117)}...` : out;
}
