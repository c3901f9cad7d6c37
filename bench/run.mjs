// Benchmark runner: imports every bench/*.bench.mjs (each exports `run(): Promise<object>`), runs
// them in one process so ratios compare figures measured in the same run, prints one JSON document
// to stdout and writes it to bench/results/latest.json. Usage: npm run bench [-- name-filter]
import { mkdirSync, readdirSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const here = dirname(fileURLToPath(import.meta.url));
const filter = process.argv[2];
const files = readdirSync(here)
  .filter((f) => f.endsWith('.bench.mjs'))
  .filter((f) => !filter || f.includes(filter))
  .sort();
const report = {
  date: new Date().toISOString(),
  node: process.version,
  cpu: os.cpus()[0]?.model ?? 'unknown',
  cores: os.cpus().length,
  results: {},
};
for (const f of files) {
  const mod = await import(join(here, f));
  process.stderr.write(`bench: ${f}\n`);
  report.results[f.replace('.bench.mjs', '')] = await mod.run();
}
mkdirSync(join(here, 'results'), { recursive: true });
const text = JSON.stringify(report, null, 2);
writeFileSync(join(here, 'results', 'latest.json'), text);
process.stdout.write(`${text}\n`);
