/**
 * One error class for the whole library, with a stable machine-readable `code`.
 *
 * Messages name the bad value and say how to fix it, e.g.
 * "band upper edge 30000 Hz must be below Nyquist 24000 Hz for sampleRate 48000".
 */
/** The library's single error type. `code` is stable; `message` is for people. */
export class OrthotoneError extends Error {
  /** Stable code for programs to branch on. */
  code;
  /** The offending value, where there is one. */
  value;
  constructor(code, message, value) {
    super(message);
    this.name = 'OrthotoneError';
    this.code = code;
    this.value = value;
  }
}
/**
 * True when `e` is an {@link OrthotoneError}, optionally with the given code.
 * @throws never
 */
export function isOrthotoneError(e, code) {
  return e instanceof OrthotoneError && (code === undefined || e.code === code);
}
