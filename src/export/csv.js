/**
 * Coefficients as CSV. FIR: `index,offset,tap` (offset from the centre tap). All-pass:
 * `branch,section,order,a` rows, plus one `branch,delay,,<samples>` row per branch.
 * @param net a network document (taps and `a` dimensionless, delays in samples).
 * @throws never for a valid network document (not re-validated here).
 */
export function networkToCsv(net) {
  const rows = [];
  if (net.kind === 'fir') {
    const d = (net.taps.length - 1) / 2;
    rows.push('index,offset,tap');
    net.taps.forEach((t, k) => {
      rows.push(`${k},${k - d},${t}`);
    });
  } else {
    rows.push('branch,section,order,a');
    for (const name of ['i', 'q']) {
      const b = net.branches[name];
      rows.push(`${name},delay,,${b.delay}`);
      b.sections.forEach((s, k) => {
        rows.push(`${name},${k},${s.order},${s.a}`);
      });
    }
  }
  return `${rows.join('\n')}\n`;
}
/**
 * Per-frequency analysis as CSV:
 * `frequency_hz,phase_error_deg,gain_error_db,suppression_db,group_delay_i,group_delay_q`
 * (group delays in samples).
 * @param a an analysis from `analyzeNetwork`.
 * @throws never
 */
export function analysisToCsv(a) {
  const rows = ['frequency_hz,phase_error_deg,gain_error_db,suppression_db,group_delay_i,group_delay_q'];
  for (let k = 0; k < a.frequencyHz.length; k++) {
    rows.push(
      [
        a.frequencyHz[k],
        a.phaseErrorDeg[k],
        a.gainErrorDb[k],
        a.suppressionDb[k],
        a.groupDelayI[k],
        a.groupDelayQ[k],
      ].join(','),
    );
  }
  return `${rows.join('\n')}\n`;
}
