/**
 * The calibration profile: a versioned, JSON-serialisable record of one calibration — the trims,
 * the correction filter, the frequency (or tones) and sideband it was made at, the network it was
 * made with (as plain data, validated by whoever loads it: calibrate/ does not depend on design/),
 * the readings used and the resulting figures. Saved and loaded with validation; a C header of the
 * same numbers is in src/export/profile-header.ts.
 *
 * Format `orthotone-profile`, version 1:
 * ```
 * { "format": "orthotone-profile", "version": 1, "created": "2026-…Z",
 *   "sampleRate": 48000, "sideband": "upper", "toneHz": 1000, "tonesHz": [300, …] | null,
 *   "trims": { gainDb, phaseDeg, skewSamples, dcI, dcQ },
 *   "correction": { "qFromQ": [...], "qFromI": [...] } | null,
 *   "network": { …network document… } | null,
 *   "readings": [ { "quantity": "sideband", "trims": {...}, "levelDb": -41.2 }, … ],
 *   "results": { "sidebandDb": 71.3, "carrierDb": 69.8, "readingsUsed": 14 },
 *   "note": "…" }
 * ```
 */
import { OrthotoneError } from '../core/errors.js';
import { validateTrims, ZERO_TRIMS } from '../core/trims.js';
/**
 * Builds a profile (validated).
 * @throws {OrthotoneError} INVALID_DOCUMENT naming the bad field.
 */
export function createProfile(input) {
  const p = {
    format: 'orthotone-profile',
    version: 1,
    created: (input.created ?? new Date()).toISOString(),
    sampleRate: input.sampleRate,
    sideband: input.sideband ?? 'upper',
    toneHz: input.toneHz,
    tonesHz: input.tonesHz ?? null,
    trims: { ...ZERO_TRIMS, ...input.trims },
    correction: input.correction ?? null,
    network: input.network ?? null,
    readings: input.readings ?? [],
    results: input.results ?? {},
    ...(input.note !== undefined ? { note: input.note } : {}),
  };
  return validateProfile(p);
}
const bad = (msg, v) => {
  throw new OrthotoneError('INVALID_DOCUMENT', `calibration profile: ${msg}`, v);
};
const isNum = (x) => typeof x === 'number' && Number.isFinite(x);
/**
 * Validates a parsed profile document.
 * @returns the document, typed.
 * @throws {OrthotoneError} INVALID_DOCUMENT naming the first bad field and the fix.
 */
export function validateProfile(doc) {
  if (typeof doc !== 'object' || doc === null) bad('must be a JSON object', doc);
  const d = doc;
  if (d.format !== 'orthotone-profile') {
    bad(`format ${JSON.stringify(d.format)} must be "orthotone-profile": is this a profile file?`, d.format);
  }
  if (d.version !== 1)
    bad(`version ${JSON.stringify(d.version)} is not supported: this library reads version 1`);
  if (typeof d.created !== 'string' || Number.isNaN(Date.parse(d.created))) {
    bad(`created ${JSON.stringify(d.created)} must be an ISO 8601 time`);
  }
  if (!isNum(d.sampleRate) || d.sampleRate < 1000 || d.sampleRate > 1e6) {
    bad(`sampleRate ${JSON.stringify(d.sampleRate)} must be a number of Hz from 1000 to 1000000`);
  }
  if (d.sideband !== 'upper' && d.sideband !== 'lower') {
    bad(`sideband ${JSON.stringify(d.sideband)} must be "upper" or "lower"`);
  }
  const nyq = d.sampleRate / 2;
  if (!isNum(d.toneHz) || d.toneHz <= 0 || d.toneHz >= nyq) {
    bad(`toneHz ${JSON.stringify(d.toneHz)} must be a frequency between 0 and ${nyq} Hz`);
  }
  if (d.tonesHz !== null) {
    if (!Array.isArray(d.tonesHz) || !d.tonesHz.every((f) => isNum(f) && f > 0 && f < nyq)) {
      bad(`tonesHz must be null or a list of frequencies between 0 and ${nyq} Hz`);
    }
  }
  if (typeof d.trims !== 'object' || d.trims === null) bad('trims must be an object');
  const t = d.trims;
  for (const k of Object.keys(ZERO_TRIMS)) {
    if (!isNum(t[k])) bad(`trims.${k} ${JSON.stringify(t[k])} must be a finite number`);
  }
  try {
    validateTrims(t);
  } catch (e) {
    bad(`trims: ${e.message}`);
  }
  if (d.correction !== null) {
    const c = d.correction;
    if (typeof c !== 'object' || !Array.isArray(c.qFromQ) || !Array.isArray(c.qFromI)) {
      bad('correction must be null or { qFromQ: [...], qFromI: [...] }');
    }
    const q = c.qFromQ;
    const i = c.qFromI;
    if (q.length !== i.length || q.length % 2 === 0 || q.length > 255) {
      bad(
        `correction.qFromQ and qFromI must have the same odd length (≤ 255), got ${q.length} and ${i.length}`,
      );
    }
    if (!q.every(isNum) || !i.every(isNum)) bad('correction taps must be finite numbers');
  }
  if (d.network !== null && (typeof d.network !== 'object' || Array.isArray(d.network))) {
    bad('network must be null or a network document object');
  }
  if (!Array.isArray(d.readings)) bad('readings must be a list');
  d.readings.forEach((r, k) => {
    const x = r;
    if (typeof x !== 'object' || x === null || typeof x.quantity !== 'string') {
      bad(`readings[${k}] must be { quantity, trims, levelDb }`);
    }
    if (!(x.levelDb === null || isNum(x.levelDb))) bad(`readings[${k}].levelDb must be a number or null`);
    if (typeof x.trims !== 'object' || x.trims === null) bad(`readings[${k}].trims must be an object`);
  });
  if (typeof d.results !== 'object' || d.results === null) bad('results must be an object');
  for (const [k, v] of Object.entries(d.results)) {
    if (k === 'source') {
      if (!['measured', 'fit', 'simulated'].includes(v)) bad(`results.source ${JSON.stringify(v)}`);
    } else if (!isNum(v)) bad(`results.${k} ${JSON.stringify(v)} must be a number`);
  }
  if (d.note !== undefined && typeof d.note !== 'string') bad('note must be text');
  return d;
}
/**
 * Serialises a profile as pretty-printed JSON (numbers round-trip exactly), after validating it.
 * @throws {OrthotoneError} INVALID_DOCUMENT when the profile is not valid (see {@link validateProfile}).
 */
export function profileToJson(p) {
  return `${JSON.stringify(validateProfile(p), null, 2)}\n`;
}
/**
 * Parses and validates a profile.
 * @throws {OrthotoneError} INVALID_DOCUMENT when the text is not JSON or not a valid profile.
 */
export function parseProfileJson(text) {
  let doc;
  try {
    doc = JSON.parse(text);
  } catch (e) {
    throw new OrthotoneError(
      'INVALID_DOCUMENT',
      `calibration profile is not valid JSON (${e.message}): give a file written by 'orthotone calibrate --profile'`,
    );
  }
  return validateProfile(doc);
}
