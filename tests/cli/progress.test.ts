/**
 * The progress line: drawn only on a terminal, rate-limited, ending at 100 %, cleared at the end.
 * A recording stream stands in for the terminal in the unit tests; beside them, the built command
 * runs under a real pseudo-terminal (util-linux `script`) and with piped stderr.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
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

  it('a long render shows progress on a real terminal and none when stderr is piped', () => {
    const dir = mkdtempSync(join(tmpdir(), 'ot-progress-'));
    try {
      const cmd = `node dist/cli.js render --tone 1000 --duration 20 --out ${join(dir, 'a.wav')}`;
      const tty = spawnSync('script', ['-qec', cmd, '/dev/null'], { encoding: 'utf8' });
      expect(tty.status, tty.stderr).toBe(0);
      expect(tty.stdout).toMatch(/render \[#+\.*\] \d+% \(\d+\/960000\)/);
      const piped = spawnSync(
        'node',
        ['dist/cli.js', 'render', '--tone', '1000', '--duration', '20', '--out', join(dir, 'b.wav')],
        { encoding: 'utf8' },
      );
      expect(piped.status).toBe(0);
      expect(piped.stderr).not.toMatch(/render \[/);
      expect(piped.stdout).not.toMatch(/render \[/);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
