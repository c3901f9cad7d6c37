/**
 * Option validation helpers. Each throws {@link OrthotoneError} with a message that names the
 * option, the value and what would be accepted. Used once, at design or construction time.
 */
import { OrthotoneError } from './errors.js';

function show(v: unknown): string {
  if (typeof v === 'number') return Number.isNaN(v) ? 'NaN' : String(v);
  if (typeof v === 'string') return JSON.stringify(v);
  if (v === undefined) return 'undefined';
  try {
    return JSON.stringify(v) ?? String(v);
  } catch {
    return String(v);
  }
}

/**
 * Requires a finite number.
 * @throws {OrthotoneError} INVALID_ARGUMENT when `v` is not a finite number.
 */
export function requireFinite(name: string, v: unknown, hint = ''): number {
  if (typeof v !== 'number' || !Number.isFinite(v)) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `${name} ${show(v)} must be a finite number${hint ? `: ${hint}` : ''}`,
      v,
    );
  }
  return v;
}

/**
 * Requires a finite number in [min, max] (inclusive).
 * @throws {OrthotoneError} INVALID_ARGUMENT when out of range or not finite.
 */
export function requireRange(name: string, v: unknown, min: number, max: number, unit = ''): number {
  const x = requireFinite(name, v, `use a value from ${min} to ${max}${unit ? ` ${unit}` : ''}`);
  if (x < min || x > max) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `${name} ${x}${unit ? ` ${unit}` : ''} is out of range: use a value from ${min} to ${max}${unit ? ` ${unit}` : ''}`,
      v,
    );
  }
  return x;
}

/**
 * Requires a finite number strictly greater than zero.
 * @throws {OrthotoneError} INVALID_ARGUMENT otherwise.
 */
export function requirePositive(name: string, v: unknown, unit = ''): number {
  const x = requireFinite(name, v, 'use a positive value');
  if (x <= 0) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `${name} ${x}${unit ? ` ${unit}` : ''} must be greater than 0`,
      v,
    );
  }
  return x;
}

/**
 * Requires an integer in [min, max].
 * @throws {OrthotoneError} INVALID_ARGUMENT otherwise.
 */
export function requireInteger(name: string, v: unknown, min: number, max: number): number {
  const x = requireFinite(name, v, `use a whole number from ${min} to ${max}`);
  if (!Number.isInteger(x) || x < min || x > max) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `${name} ${x} must be a whole number from ${min} to ${max}`,
      v,
    );
  }
  return x;
}

/**
 * Requires one of a fixed set of string values.
 * @throws {OrthotoneError} INVALID_ARGUMENT otherwise.
 */
export function requireOneOf<T extends string>(name: string, v: unknown, allowed: readonly T[]): T {
  if (typeof v !== 'string' || !(allowed as readonly string[]).includes(v)) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `${name} ${show(v)} is not recognised: use one of ${allowed.map((a) => `'${a}'`).join(', ')}`,
      v,
    );
  }
  return v as T;
}

/**
 * Requires a sample rate in Hz: finite, from 1000 Hz to 1 MHz.
 * @throws {OrthotoneError} INVALID_ARGUMENT otherwise.
 */
export function requireSampleRate(v: unknown): number {
  return requireRange('sampleRate', v, 1000, 1_000_000, 'Hz');
}

/**
 * Validates an audio band `[lo, hi]` in Hz against a sample rate: 0 < lo < hi < fs/2.
 * @throws {OrthotoneError} INVALID_BAND naming the bad edge and the fix.
 */
export function requireBand(band: unknown, sampleRate: number): [number, number] {
  if (!Array.isArray(band) || band.length !== 2) {
    throw new OrthotoneError(
      'INVALID_BAND',
      `band ${show(band)} must be a pair [lo, hi] in Hz, e.g. [300, 3000]`,
      band,
    );
  }
  const [lo, hi] = band as [unknown, unknown];
  const nyq = sampleRate / 2;
  if (typeof lo !== 'number' || !Number.isFinite(lo) || lo <= 0) {
    throw new OrthotoneError(
      'INVALID_BAND',
      `band lower edge ${show(lo)} Hz must be a finite frequency above 0 Hz (a 90° network cannot reach DC)`,
      band,
    );
  }
  if (typeof hi !== 'number' || !Number.isFinite(hi)) {
    throw new OrthotoneError(
      'INVALID_BAND',
      `band upper edge ${show(hi)} Hz must be a finite frequency`,
      band,
    );
  }
  if (hi >= nyq) {
    throw new OrthotoneError(
      'INVALID_BAND',
      `band upper edge ${hi} Hz must be below Nyquist ${nyq} Hz for sampleRate ${sampleRate}: lower the edge or raise the sample rate`,
      band,
    );
  }
  if (lo >= hi) {
    throw new OrthotoneError(
      'INVALID_BAND',
      `band lower edge ${lo} Hz must be below the upper edge ${hi} Hz: write the band as [lo, hi]`,
      band,
    );
  }
  return [lo, hi];
}

/**
 * The fields of `o` whose value is not `undefined` (only `keys`, when given), as a new object, so
 * that spreading it over defaults keeps the defaults where the caller left a field undefined.
 * Checks no keys (see {@link withDefaults} for a merge that refuses unknown keys).
 * @param o the partial object (undefined gives `{}`).
 * @param keys the only keys to copy (default: all own keys).
 * @returns a new object; `o` is not changed.
 * Method: plain field copy.
 * @throws never
 * @internal
 */
export function stripUndefined<T extends object>(
  o: Partial<T> | undefined,
  keys?: readonly (keyof T)[],
): Partial<T> {
  const out: Partial<T> = {};
  if (!o) return out;
  for (const k of keys ?? (Object.keys(o) as (keyof T)[])) {
    const v = o[k];
    if (v !== undefined) out[k] = v;
  }
  return out;
}

/**
 * Edit distance between two words: the fewest single-character insertions, deletions,
 * substitutions or swaps of neighbours that turn one into the other (optimal string alignment,
 * Damerau 1964, CACM 7(3):171; Levenshtein 1966). Written here because it is a dozen lines and
 * serves only the "did you mean" hints.
 * @throws never
 */
export function editDistance(a: string, b: string): number {
  const m = a.length;
  const n = b.length;
  const d: number[][] = Array.from({ length: m + 1 }, (_, i) => {
    const row = new Array<number>(n + 1).fill(0);
    row[0] = i;
    return row;
  });
  for (let j = 0; j <= n; j++) d[0]![j] = j;
  for (let i = 1; i <= m; i++) {
    for (let j = 1; j <= n; j++) {
      const cost = a[i - 1] === b[j - 1] ? 0 : 1;
      let v = Math.min(d[i - 1]![j]! + 1, d[i]![j - 1]! + 1, d[i - 1]![j - 1]! + cost);
      if (i > 1 && j > 1 && a[i - 1] === b[j - 2] && a[i - 2] === b[j - 1])
        v = Math.min(v, d[i - 2]![j - 2]! + 1);
      d[i]![j] = v;
    }
  }
  return d[m]![n]!;
}

/**
 * The known name nearest to `word` by {@link editDistance} (case-insensitive), when it is near
 * enough to be a likely typo (distance at most 2, or a third of the word's length, whichever is
 * more); `undefined` otherwise.
 * @throws never
 */
export function nearestName(word: string, known: readonly string[]): string | undefined {
  let best: string | undefined;
  let bestD = Number.POSITIVE_INFINITY;
  for (const k of known) {
    const dist = editDistance(word.toLowerCase(), k.toLowerCase());
    if (dist < bestD) {
      bestD = dist;
      best = k;
    }
  }
  return bestD <= Math.max(2, Math.floor(word.length / 3)) ? best : undefined;
}

/**
 * Refuses keys of an options object that the function does not know, naming the nearest known key
 * (a mistyped `tragetDb` would otherwise be ignored silently and the default used).
 * @param what what the options are for, e.g. `designNetwork options`.
 * @throws {OrthotoneError} INVALID_ARGUMENT `unknown option tragetDb in …: did you mean targetDb?`.
 */
export function rejectUnknownKeys(what: string, options: unknown, known: readonly string[]): void {
  if (typeof options !== 'object' || options === null) return;
  for (const k of Object.keys(options)) {
    if (known.includes(k)) continue;
    const near = nearestName(k, known);
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `unknown option ${k} in ${what}: ${near === undefined ? `use one of ${known.join(', ')}` : `did you mean ${near}?`}`,
      k,
    );
  }
}

/**
 * Merges `partial` over frozen `defaults`, dropping keys whose value is `undefined`, and refuses a
 * key that is neither in `defaults` nor in `optionalKeys` (see {@link rejectUnknownKeys}).
 * Validates no values: callers validate the merged result.
 * @throws {OrthotoneError} INVALID_ARGUMENT for an unknown key, naming the nearest known one.
 * @internal
 */
export function withDefaults<T extends object>(
  defaults: Readonly<T>,
  partial: Partial<T> | undefined,
  optionalKeys: readonly string[] = [],
): T {
  if (partial) rejectUnknownKeys('the options', partial, [...Object.keys(defaults), ...optionalKeys]);
  return { ...defaults, ...stripUndefined(partial) } as T;
}
