// Mutation testing (StrykerJS 10.1.1 with the vitest runner), outside CI: `npm run mutants`.
// Scopes (issue 12's goal): src/measure, src/node, src/generate/trim-stage.ts, the null seeker's stop
// and evidence code, src/design/remez.ts, each with only its own unit tests (the browser and CLI
// suites are far too slow to run per mutant on 2 cores). Run one scope at a time:
//   MUTANTS=measure npm run mutants      (scopes: measure, node, trim-stage, seeker, remez)
// Reports go to reports/mutation/<scope>.{json,html}; surviving mutants are listed with the reason
// each is equivalent in tests/mutants.md.
import { SCOPES } from './tests/mutants/scopes.mjs';

const names = (process.env.MUTANTS ?? Object.keys(SCOPES).join(',')).split(',').filter(Boolean);
for (const n of names) {
  if (!SCOPES[n]) {
    console.error(`MUTANTS: unknown scope ${n}: use one or more of ${Object.keys(SCOPES).join(', ')}`);
    process.exit(2);
  }
}
const tag = names.join('+');

/** @type {import('@stryker-mutator/api/core').PartialStrykerOptions} */
export default {
  testRunner: 'vitest',
  vitest: { configFile: 'tests/mutants/vitest.mutants.config.ts', related: false },
  plugins: ['@stryker-mutator/vitest-runner'],
  mutate: names.flatMap((n) => SCOPES[n].mutate),
  coverageAnalysis: 'perTest',
  concurrency: Number(process.env.MUTANTS_CONCURRENCY ?? 1),
  timeoutMS: 20000,
  timeoutFactor: 2,
  reporters: ['clear-text', 'progress', 'json', 'html'],
  jsonReporter: { fileName: `reports/mutation/${tag}.json` },
  htmlReporter: { fileName: `reports/mutation/${tag}.html` },
  clearTextReporter: { allowColor: false, logTests: false, maxTestsToLog: 0 },
  ignorePatterns: ['dist', 'demo', 'firmware', 'bench', 'reports', '.vitest-report.json', 'tests/artifacts'],
  tempDirName: `.stryker-tmp-${tag}`,
  cleanTempDir: true,
  thresholds: { high: 90, low: 85, break: null },
};
