// Shared timing helpers for the benchmarks.
import { performance } from 'node:perf_hooks';

/** Runs `fn` repeatedly for at least `minMs` after a warm-up; returns the median time per call in ms. */
export function timeIt(fn, { minMs = 300, warmup = 3, minRuns = 5 } = {}) {
  for (let i = 0; i < warmup; i++) fn();
  const times = [];
  const t0 = performance.now();
  while (times.length < minRuns || performance.now() - t0 < minMs) {
    const a = performance.now();
    fn();
    times.push(performance.now() - a);
  }
  times.sort((x, y) => x - y);
  return times[Math.floor(times.length / 2)];
}
