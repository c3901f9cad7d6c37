// Lists mutants from a run's event-recorder folder (reports/mutation/events-<scope>/) while it runs or
// after: counts per status and the surviving/uncovered ones with file, line and replacement.
//   node tests/mutants/survivors.mjs reports/mutation/events-node
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';

const dir = process.argv[2];
const counts = {};
const left = [];
for (const f of readdirSync(dir)
  .filter((n) => n.endsWith('onMutantTested.json'))
  .sort()) {
  const m = JSON.parse(readFileSync(join(dir, f), 'utf8'));
  counts[m.status] = (counts[m.status] ?? 0) + 1;
  if (m.status === 'Survived' || m.status === 'NoCoverage') {
    const l = m.location?.start?.line;
    left.push(
      `${m.status}\t${m.fileName}:${l}\t${m.mutatorName}\t${JSON.stringify(m.replacement ?? '').slice(0, 90)}`,
    );
  }
}
const killed = (counts.Killed ?? 0) + (counts.Timeout ?? 0);
const valid = killed + (counts.Survived ?? 0) + (counts.NoCoverage ?? 0);
console.log(
  JSON.stringify(counts),
  `score so far ${((100 * killed) / Math.max(valid, 1)).toFixed(2)} % of ${valid}`,
);
for (const s of left) console.log(s);
