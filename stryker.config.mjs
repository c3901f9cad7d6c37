// Mutation testing (StrykerJS 10.1.1 with the vitest runner), outside CI: `npm run mutants`.
// Scopes (issue 12's goal): src/measure, src/node, src/generate/trim-stage.ts, the null seeker's stop
// and evidence code, src/design/remez.ts, each with only its own unit tests (the browser and CLI
// suites are far too slow to run per mutant on 2 cores). Run one scope at a time:
//   MUTANTS=measure npm run mutants      (scopes: measure, node, node-device, trim-stage, seeker, remez)
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
// MUTANTS_MUTATE=<glob>[,<glob>…] narrows a scope to some of its files (or line ranges, `file:10-40`),
// to run a large scope in parts within the time at hand; the report is named after them.
const only = (process.env.MUTANTS_MUTATE ?? '').split(',').filter(Boolean);
const tag = only.length > 0 ? only.map((f) => f.replace(/^src\//, '').replace(/[^\w.-]+/g, '_')).join('+') : names.join('+');

/** @type {import('@stryker-mutator/api/core').PartialStrykerOptions} */
export default {
  testRunner: 'vitest',
  // A scope may ask for vitest's `forks` pool (scopes.mjs `pool`); the runner's default is `threads`.
  vitest: {
    configFile: 'tests/mutants/vitest.mutants.config.ts',
    related: false,
    pool: names.some((n) => SCOPES[n].pool === 'forks') ? 'forks' : 'threads',
  },
  plugins: ['@stryker-mutator/vitest-runner'],
  mutate: only.length > 0 ? only : names.flatMap((n) => SCOPES[n].mutate),
  coverageAnalysis: 'perTest',
  concurrency: Number(process.env.MUTANTS_CONCURRENCY ?? 1),
  // A mutant that loops is a Timeout (counted as detected); a short fixed allowance keeps those cheap.
  timeoutMS: 5000,
  timeoutFactor: 1.5,
  // Static mutants (module-level constants, tables) would need every test re-run per mutant; they are
  // reported as Ignored, not counted in the score (tests/mutants.md says so).
  ignoreStatic: true,
  // event-recorder writes each mutant's result as it is tested (reports/mutation/events-<scope>/), so
  // survivors can be studied before a long run ends.
  reporters: ['clear-text', 'progress', 'json', 'html', 'event-recorder'],
  eventReporter: { baseDir: `reports/mutation/events-${tag}` },
  jsonReporter: { fileName: `reports/mutation/${tag}.json` },
  htmlReporter: { fileName: `reports/mutation/${tag}.html` },
  clearTextReporter: { allowColor: false, logTests: false, maxTestsToLog: 0 },
  ignorePatterns: ['dist', 'demo', 'firmware', 'bench', 'reports', '.vitest-report.json', 'tests/artifacts'],
  // Incremental: a later run of the same scope reuses the results of mutants whose code and covering
  // tests did not change (reports/mutation/<scope>.incremental.json).
  incremental: true,
  incrementalFile: `reports/mutation/${tag}.incremental.json`,
  tempDirName: `.stryker-tmp-${tag}`,
  cleanTempDir: true,
  thresholds: { high: 90, low: 85, break: null },
};
