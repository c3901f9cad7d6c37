/**
 * vitest setup (vitest.config.ts `setupFiles`): before a test file that runs the built package — the
 * CLI tests and the README examples — dist/ is rebuilt when it is older than src/, or the file fails
 * (./built.ts). Other test files are left alone, so unit runs never build.
 */
import { beforeAll, expect } from 'vitest';
import { ensureFreshBuild } from './built.js';

/** Test files that run dist/ (paths relative to the repository, '/'-separated). */
export const USES_DIST = /[\\/]tests[\\/](cli[\\/][^\\/]+|readme)\.test\.ts$/;

beforeAll(() => {
  const file = expect.getState().testPath ?? '';
  if (USES_DIST.test(file)) ensureFreshBuild();
});
