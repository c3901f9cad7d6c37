/**
 * Shared pieces of the C headers orthotone writes: identifier checks, float literals and array
 * declarations laid out six values a line.
 */
import { OrthotoneError } from '../core/errors.js';
/**
 * Checks an identifier prefix for generated C code.
 * @throws {OrthotoneError} INVALID_ARGUMENT when `name` is not a C identifier.
 */
export function requireCIdentifier(name) {
  if (!/^[A-Za-z_][A-Za-z0-9_]{0,40}$/.test(name)) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `name ${JSON.stringify(name)} is not a C identifier: use letters, digits and _, not starting with a digit`,
      name,
    );
  }
  return name;
}
/**
 * A C float literal of `x` rounded to single precision, 9 significant digits (round-trips binary32:
 * IEEE 754-2008 §5.12.2, nine decimal digits suffice for binary32). Non-finite `x` gives text that
 * is not a C literal (`NaNf`, `Infinityf`): callers pass finite coefficients.
 * @throws never
 */
export function cFloat(x) {
  const s = Math.fround(x).toPrecision(9);
  return `${s.includes('e') || s.includes('.') ? s : `${s}.0`}f`;
}
/**
 * `static const <type> <ident>[n] = { ... };` with six values a line. `type` and `ident` are written
 * as given: check `ident` with {@link requireCIdentifier} first.
 * @throws never
 */
export function cArray(type, ident, values) {
  const lines = [];
  for (let k = 0; k < values.length; k += 6) lines.push(`  ${values.slice(k, k + 6).join(', ')},`);
  return `static const ${type} ${ident}[${values.length}] = {\n${lines.join('\n')}\n};\n`;
}
