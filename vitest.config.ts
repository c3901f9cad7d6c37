import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['tests/**/*.test.ts'],
    // Rebuilds dist/ before the CLI and README tests when it is older than src/ (tests/support/built.ts).
    setupFiles: ['tests/support/dist-setup.ts'],
    fileParallelism: false,
    testTimeout: 60_000,
    hookTimeout: 120_000,
  },
});
