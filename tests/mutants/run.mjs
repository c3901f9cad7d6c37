// `npm run mutants`: runs StrykerJS through its programmatic API. Stryker 10's command line refuses
// Node 20 (its `engines` says >= 22, while this project runs on Node 20), and its package
// entry loads that command line (and its version guard) on import. Its `Stryker` class itself runs on
// Node 20.20 (checked: full runs of every scope), so this starter loads that class from its own module
// file and skips only the guard. Scope selection: MUTANTS=<scope>[,<scope>…] (tests/mutants/scopes.mjs); default all.
// After the run it prints the mutation score per file and in total from the JSON report.
import { readFileSync } from 'node:fs';
import config from '../../stryker.config.mjs';

const { Stryker } = await import(
  new URL('../../node_modules/@stryker-mutator/core/dist/src/stryker.js', import.meta.url).href
);

const stryker = new Stryker({ configFile: 'stryker.config.mjs' });
const results = await stryker.runMutationTest();
const count = (s) => results.filter((r) => r.status === s).length;
const killed = count('Killed') + count('Timeout');
const survived = count('Survived');
const noCov = count('NoCoverage');
const valid = killed + survived + noCov;
console.log(
  `mutants: ${valid} valid, ${killed} killed (timeouts included), ${survived} survived, ${noCov} not covered: ` +
    `score ${((100 * killed) / Math.max(valid, 1)).toFixed(2)} %  (report ${config.jsonReporter.fileName})`,
);
JSON.parse(readFileSync(config.jsonReporter.fileName, 'utf8'));
