// vitest configuration for mutation runs only: the unit tests of the scopes named in MUTANTS
// (tests/mutants/scopes.mjs). The normal suite uses vitest.config.ts.
import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vitest/config';
import { SCOPES } from './scopes.mjs';

const names = (process.env.MUTANTS ?? Object.keys(SCOPES).join(',')).split(',').filter(Boolean);
const scopes = SCOPES;

export default defineConfig({
  root: fileURLToPath(new URL('../..', import.meta.url)),
  test: {
    include: names.flatMap((n) => scopes[n]?.tests ?? []),
    fileParallelism: false,
    testTimeout: 60_000,
    hookTimeout: 120_000,
  },
});
