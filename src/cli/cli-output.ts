/**
 * What every command shares about its output: the transmitting cautions, printed once per command
 * where its output may reach a transmitter, on stderr whenever stdout carries machine output (JSON)
 * so that stdout stays parseable; and `--profile FILE` for the commands that apply trims.
 */
import { readFileSync } from 'node:fs';
import type { CalibrationProfile } from '../calibrate/profile.js';
import { cautionsText } from '../core/cautions.js';
import { isOrthotoneError } from '../core/errors.js';
import { parseProfileJson } from '../export/profile-json.js';
import { UsageError } from './args.js';

/**
 * Prints the transmitting cautions (src/core/cautions.ts) once: to stderr when stdout carries JSON
 * (or other machine output), else to stdout, set off by a blank line.
 * @param machineStdout true when stdout carries JSON or another machine format.
 * @throws never (a write error on the stream is the stream's).
 */
export function printCautions(machineStdout: boolean): void {
  (machineStdout ? process.stderr : process.stdout).write(`\n${cautionsText()}\n`);
}

/**
 * Reads `--profile FILE`: a calibration profile written by `orthotone calibrate --profile`.
 * @param file the path given.
 * @param sampleRate the rate the command runs at, Hz: the profile's must match (its skew and
 *   correction are in samples at its rate).
 * @returns the validated profile.
 * @throws {UsageError} naming --profile for an unreadable or invalid file or a different rate.
 */
export function readProfileOption(file: string, sampleRate?: number): CalibrationProfile {
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (e) {
    throw new UsageError(
      `--profile ${file} cannot be read: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`,
    );
  }
  let p: CalibrationProfile;
  try {
    p = parseProfileJson(text);
  } catch (e) {
    if (isOrthotoneError(e)) throw new UsageError(`--profile ${file}: ${e.message}`);
    throw e;
  }
  if (sampleRate !== undefined && p.sampleRate !== sampleRate) {
    throw new UsageError(
      `--profile ${file} was made at ${p.sampleRate} Hz but this runs at ${sampleRate} Hz: its skew and correction are in samples at its own rate; calibrate again at ${sampleRate} Hz`,
    );
  }
  return p;
}
