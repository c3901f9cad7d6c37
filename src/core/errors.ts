/**
 * One error class for the whole library, with a stable machine-readable `code`.
 *
 * Messages name the bad value and say how to fix it, e.g.
 * "band upper edge 30000 Hz must be below Nyquist 24000 Hz for sampleRate 48000".
 */

/** Stable error codes. Never renamed; new ones may be added. */
export type OrthotoneErrorCode =
  | 'INVALID_ARGUMENT' // a value is of the wrong type, non-finite or out of range
  | 'INVALID_BAND' // band edges reversed, at or beyond Nyquist, or non-positive
  | 'UNREACHABLE_TARGET' // the requested suppression cannot be met within the allowed size
  | 'NO_CONVERGENCE' // an iterative method stopped at its cap without converging
  | 'INVALID_DOCUMENT' // a network or profile document fails validation
  | 'BUFFER_MISMATCH' // caller buffers of different or insufficient lengths
  | 'CAPTURE_TOO_SHORT' // a capture is too short for the requested resolution
  | 'TONES_UNRESOLVED' // tones closer than the window can separate
  | 'TRIM_INACTIVE' // a trim does not move the reading
  | 'MEASUREMENT_FAILED' // a reading could not be taken
  | 'WRITE_FAILED' // a file could not be written (the previous file, if any, is kept)
  | 'OUTPUT_IS_INPUT' // an output file is the same file as an input or as another output
  | 'DEVICE_TIMEOUT' // a device did not answer a command in time
  | 'DEVICE_REFUSED' // a device answered a command with an error (its code is in the message)
  | 'DEVICE_LOST' // the link to a device closed and did not come back (unplugged, powered off)
  | 'DEVICE_VERSION' // a device speaks another version of the link protocol
  | 'ABORTED'; // an AbortSignal fired

/** The library's single error type. `code` is stable; `message` is for people. */
export class OrthotoneError extends Error {
  /** Stable code for programs to branch on. */
  readonly code: OrthotoneErrorCode;
  /** The offending value, where there is one. */
  readonly value: unknown;

  constructor(code: OrthotoneErrorCode, message: string, value?: unknown) {
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
export function isOrthotoneError(e: unknown, code?: OrthotoneErrorCode): e is OrthotoneError {
  return e instanceof OrthotoneError && (code === undefined || e.code === code);
}
