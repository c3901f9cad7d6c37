/**
 * Progress for long work (Monte Carlo runs, multi-tone calibrations, long renders) on stderr, and
 * only when stderr is a terminal: piped or redirected output stays clean, and stdout (which may
 * carry JSON) is never touched.
 *
 * Written here rather than taken from a progress-bar package: none is installed in this project,
 * adding one needs the maintainers' say, and what is needed is one rewritten line, rate-limited,
 * cleared at the end (about 40 lines).
 */

/** A progress line (see {@link createProgress}). */
export interface Progress {
  /**
   * Reports that `done` of `total` steps are finished; redraws at most every 100 ms.
   * @param done finished steps (0 … total).
   * @throws never
   */
  update(done: number): void;
  /**
   * Clears the line (call once, when the work ends or fails).
   * @throws never
   */
  finish(): void;
}

/** The stream parts the progress line uses (process.stderr has them). */
export interface ProgressStream {
  isTTY?: boolean;
  columns?: number;
  /**
   * Writes text as it is.
   * @throws whatever the stream throws (process.stderr does not).
   */
  write(s: string): boolean;
}

const QUIET: Progress = { update() {}, finish() {} };

/**
 * A one-line progress bar `label [#####.....] 42% (21/50)` rewritten in place on `stream`, or a
 * silent one when the stream is not a terminal (`isTTY` false: piped, redirected, CI logs).
 * @param label what is running, e.g. "Monte Carlo".
 * @param total number of steps (> 0; otherwise the progress is silent).
 * @param stream where to draw (default process.stderr).
 * @param now clock in ms (default Date.now; tests pass their own).
 * @returns the progress handle.
 * @throws never
 * Method: carriage return and ANSI "erase line" (ECMA-48 EL, `ESC [ 2 K`) on a terminal.
 */
export function createProgress(
  label: string,
  total: number,
  stream: ProgressStream = process.stderr,
  now: () => number = Date.now,
): Progress {
  if (!stream.isTTY || !(total > 0)) return QUIET;
  let last = Number.NEGATIVE_INFINITY;
  let shown = false;
  const draw = (done: number): void => {
    const f = Math.min(1, Math.max(0, done / total));
    const width = Math.max(10, Math.min(30, (stream.columns ?? 80) - label.length - 24));
    const filled = Math.round(f * width);
    stream.write(
      `\r\x1b[2K${label} [${'#'.repeat(filled)}${'.'.repeat(width - filled)}] ${Math.floor(f * 100)}% (${done}/${total})`,
    );
    shown = true;
  };
  return {
    update(done) {
      const t = now();
      if (t - last < 100 && done < total) return;
      last = t;
      draw(done);
    },
    finish() {
      if (shown) stream.write('\r\x1b[2K');
      shown = false;
    },
  };
}
