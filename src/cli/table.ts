/** Plain-text tables for CLI output: columns padded to their widest cell, numbers right-aligned. */

/**
 * Formats rows (first row = header) as aligned text with a rule under the header; cells that read
 * as numbers (with an optional unit) are right-aligned.
 * @throws never
 */
export function formatTable(rows: readonly (readonly string[])[]): string {
  if (rows.length === 0) return '';
  const widths: number[] = [];
  for (const r of rows) {
    r.forEach((c, k) => {
      widths[k] = Math.max(widths[k] ?? 0, c.length);
    });
  }
  const numeric = (s: string): boolean => /^[-+]?[\d.]+(e[-+]?\d+)?( ?[a-zA-Z%°/]*)?$/.test(s.trim());
  const line = (r: readonly string[]): string =>
    r
      .map((c, k) => (numeric(c) && r !== rows[0] ? c.padStart(widths[k]!) : c.padEnd(widths[k]!)))
      .join('  ')
      .trimEnd();
  const [head, ...rest] = rows;
  return [line(head!), widths.map((w) => '-'.repeat(w)).join('  '), ...rest.map(line)].join('\n') + '\n';
}

/**
 * Formats key/value pairs as two aligned columns.
 * @throws never
 */
export function formatPairs(pairs: readonly (readonly [string, string])[]): string {
  const w = Math.max(...pairs.map(([k]) => k.length));
  return pairs.map(([k, v]) => `${k.padEnd(w)}  ${v}`).join('\n') + '\n';
}

/**
 * `x.toFixed(digits)` without a minus sign on values that round to zero.
 * @throws {RangeError} from `Number.prototype.toFixed` when `digits` is outside 0…100.
 */
export function fixed(x: number, digits: number): string {
  const s = x.toFixed(digits);
  return /^-0\.?0*$/.test(s) ? s.slice(1) : s;
}
