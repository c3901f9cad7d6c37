import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['tests/**/*.test.ts'],
    // Rebuilds dist/ before the CLI and README tests when it is older than src/ (tests/support/built.ts);
    // records each test's allowed and used retries in its meta for .ci/run (tests/support/retry-meta.ts).
    setupFiles: ['tests/support/dist-setup.ts', 'tests/support/retry-meta.ts'],
    fileParallelism: false,
    testTimeout: 60_000,
    hookTimeout: 120_000,
  },
});
