// Mutation scores from StrykerJS JSON reports (mutation-testing-report-schema), per file and in total:
//   node tests/mutants/score.mjs reports/mutation/remez.json [more.json …]
// Two scores are printed. "score" is Stryker's own: (killed + timeout) / (killed + timeout + survived +
// no coverage); mutants a source comment marks equivalent (`// Stryker disable … : reason`) are Ignored and
// left out, as Stryker leaves them out. "score, marked counted" counts those marked mutants as survivors,
// so a reader can see what the marks are worth. Static mutants (ignoreStatic) are left out of both and
// counted apart.
import { readFileSync } from 'node:fs';

const rows = [];
const total = { killed: 0, timeout: 0, survived: 0, noCoverage: 0, marked: 0, static: 0, other: 0 };
for (const path of process.argv.slice(2)) {
  const report = JSON.parse(readFileSync(path, 'utf8'));
  for (const [file, { mutants }] of Object.entries(report.files)) {
    const c = { killed: 0, timeout: 0, survived: 0, noCoverage: 0, marked: 0, static: 0, other: 0 };
    for (const m of mutants) {
      if (m.status === 'Killed') c.killed++;
      else if (m.status === 'Timeout') c.timeout++;
      else if (m.status === 'Survived') c.survived++;
      else if (m.status === 'NoCoverage') c.noCoverage++;
      else if (m.status === 'Ignored' && /ignoreStatic/.test(m.statusReason ?? '')) c.static++;
      else if (m.status === 'Ignored') c.marked++;
      else c.other++; // CompileError, RuntimeError: not valid mutants
    }
    rows.push([file, c]);
    for (const k of Object.keys(total)) total[k] += c[k];
  }
}
const pct = (a, b) => (b > 0 ? `${((100 * a) / b).toFixed(1)} %` : '—');
const line = (name, c) => {
  const detected = c.killed + c.timeout;
  const valid = detected + c.survived + c.noCoverage;
  return (
    `${name.padEnd(40)} killed ${String(c.killed).padStart(4)}  timeout ${String(c.timeout).padStart(3)}  ` +
    `survived ${String(c.survived).padStart(3)}  no cov ${String(c.noCoverage).padStart(3)}  ` +
    `marked equivalent ${String(c.marked).padStart(3)}  static ${String(c.static).padStart(3)}  ` +
    `score ${pct(detected, valid).padStart(7)}  score, marked counted ${pct(detected, valid + c.marked).padStart(7)}`
  );
};
for (const [file, c] of rows) console.log(line(file, c));
console.log(line('total', total));
