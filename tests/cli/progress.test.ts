/**
 * The progress line: drawn only on a terminal, rate-limited, ending at 100 %, cleared at the end.
 * (A recording stream stands in for the terminal; the CLI tests run the commands with piped stderr,
 * where nothing may appear.)
 */
import { describe, expect, it } from 'vitest';
import { createProgress } from '../../src/cli/progress.js';

function recorder(isTTY: boolean) {
  const writes: string[] = [];
  return {
    isTTY,
    columns: 80,
    writes,
    write: (s: string) => {
      writes.push(s);
      return true;
    },
  };
}

describe('createProgress', () => {
  it('writes nothing when the stream is not a terminal', () => {
    const s = recorder(false);
    const p = createProgress('Monte Carlo', 10, s);
    for (let k = 0; k <= 10; k++) p.update(k);
    p.finish();
    expect(s.writes).toEqual([]);
  });

  it('redraws at most every 100 ms, always shows the last step, and clears the line', () => {
    const s = recorder(true);
    let t = 0;
    const p = createProgress('runs', 50, s, () => t);
    for (let k = 1; k <= 50; k++) {
      t += 10; // 10 ms per step: about one redraw in ten
      p.update(k);
    }
    p.finish();
    const draws = s.writes.filter((w) => w.includes('runs ['));
    expect(draws.length).toBeGreaterThanOrEqual(5);
    expect(draws.length).toBeLessThanOrEqual(7);
    expect(draws.at(-1)).toMatch(/100% \(50\/50\)$/);
    expect(draws[0]!.startsWith('\r\x1b[2Kruns [')).toBe(true);
    expect(draws[0]).toMatch(/\] 2% \(1\/50\)$/);
    expect(s.writes.at(-1)).toBe('\r\x1b[2K');
  });
});
