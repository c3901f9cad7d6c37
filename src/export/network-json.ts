/**
 * The network document on disk and on stdout (DESIGN.md §3): the in-memory object, serialised as
 * JSON with every coefficient at full double precision (JavaScript's shortest round-trip form), and
 * parsed back with validation.
 */
import { OrthotoneError } from '../core/errors.js';
import { type Network, validateNetwork } from '../design/network.js';

/**
 * Serialises a network document as pretty-printed JSON. Coefficients round-trip exactly.
 * @param net a network document.
 * @returns JSON text ending in a newline.
 * @throws never for a network document (plain JSON data); it is serialised as given, not validated.
 */
export function networkToJson(net: Network): string {
  return `${JSON.stringify(net, null, 2)}\n`;
}

/**
 * Parses and validates a network document.
 * @param text JSON text of a network document, format version 1.
 * @throws {OrthotoneError} INVALID_DOCUMENT when the text is not JSON or not a valid document.
 */
export function parseNetworkJson(text: string): Network {
  let doc: unknown;
  try {
    doc = JSON.parse(text);
  } catch (e) {
    throw new OrthotoneError(
      'INVALID_DOCUMENT',
      `network file is not valid JSON (${(e as Error).message}): give a file written by 'orthotone design --format json'`,
    );
  }
  return validateNetwork(doc);
}
