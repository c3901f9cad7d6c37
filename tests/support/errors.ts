/** Shared check of the tests: a call fails with a typed OrthotoneError of a given code and message. */
import { expect } from 'vitest';
import { isOrthotoneError, type OrthotoneError, type OrthotoneErrorCode } from '../../src/core/errors.js';

/**
 * Expects `fn()` to throw an {@link OrthotoneError} with code `code` and a message matching every
 * one of `res`; fails when it returns. Returns the error for further checks.
 */
export function expectOrthotoneError(
  fn: () => unknown,
  code: OrthotoneErrorCode,
  ...res: RegExp[]
): OrthotoneError {
  try {
    fn();
  } catch (e) {
    expect(isOrthotoneError(e), String(e)).toBe(true);
    expect((e as OrthotoneError).code).toBe(code);
    for (const re of res) expect((e as Error).message).toMatch(re);
    return e as OrthotoneError;
  }
  return expect.unreachable(`expected an OrthotoneError ${code}`);
}

/**
 * `[code, message]` of the OrthotoneError `fn()` throws, for comparing whole messages; any other
 * error is rethrown, and a call that returns fails.
 */
export function refusal(fn: () => unknown): [string, string] {
  try {
    fn();
  } catch (e) {
    if (isOrthotoneError(e)) return [e.code, e.message];
    throw e;
  }
  throw new Error('did not throw');
}
