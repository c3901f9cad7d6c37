/**
 * The calibration profile on disk and on stdout, beside the network document (network-json.ts):
 * pretty-printed JSON with every number in its shortest round-trip form, parsed back with the
 * profile's validation (calibrate/profile.ts).
 */

import { type CalibrationProfile, validateProfile } from '../calibrate/profile.js';
import { OrthotoneError } from '../core/errors.js';

/**
 * Serialises a profile as pretty-printed JSON (numbers round-trip exactly), after validating it.
 * @param p a calibration profile.
 * @returns JSON text ending in a newline.
 * @throws {OrthotoneError} INVALID_DOCUMENT when the profile is not valid (see {@link validateProfile}).
 */
export function profileToJson(p: CalibrationProfile): string {
  return `${JSON.stringify(validateProfile(p), null, 2)}\n`;
}

/**
 * Parses and validates a profile.
 * @param text JSON text of a calibration profile.
 * @returns the validated profile.
 * @throws {OrthotoneError} INVALID_DOCUMENT when the text is not JSON or not a valid profile.
 */
export function parseProfileJson(text: string): CalibrationProfile {
  let doc: unknown;
  try {
    doc = JSON.parse(text);
  } catch (e) {
    throw new OrthotoneError(
      'INVALID_DOCUMENT',
      `calibration profile is not valid JSON (${(e as Error).message}): give a file written by 'orthotone calibrate --profile'`,
    );
  }
  return validateProfile(doc);
}
