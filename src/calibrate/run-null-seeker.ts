/**
 * The async driver of a {@link NullSeeker}: asks, measures, tells, until the seeker stops, the
 * budget is used or an AbortSignal fires. A reading that throws or returns a non-finite value is
 * recorded as failed (it counts against the budget) and the setting is tried again; after three
 * failures in a row the run stops with `measurement-failed`. Nothing is ever thrown away: the
 * best setting so far and the saved state are always available from the seeker.
 */
import { abortable } from '../core/abort.js';
import { isOrthotoneError } from '../core/errors.js';
import type { NullSeeker, SeekerBest, SeekerEstimate } from './null-seeker.js';

/** What the driver reports after each reading. */
export interface SeekerProgress {
  /** 1-based number of the reading. */
  index: number;
  /** The setting read. */
  point: [number, number];
  /** The level read, dB (NaN when the reading failed). */
  db: number;
  /** The error thrown by the measurement, when it failed. */
  error?: unknown;
  best: SeekerBest;
  estimate: SeekerEstimate | undefined;
}

/** Options of {@link runNullSeeker}. */
export interface RunSeekerOptions {
  /** Stops the run between readings (and abandons a reading in progress). */
  signal?: AbortSignal | undefined;
  /** Called after every reading, failed ones included. */
  onReading?: ((p: SeekerProgress) => void) | undefined;
}

/**
 * Runs a seeker to its stop. Resolves (never rejects on a failed reading or an abort); the seeker's
 * `stopReason` says why it ended (`aborted` on an AbortSignal).
 * @param seeker the ask/tell core.
 * @param measure reads the level at a setting, dB; may be async.
 * @returns the last measurement error, if any (for messages).
 * @throws never for a failed reading or an abort (the promise resolves); an exception thrown by
 *   `onReading` is passed on as a rejection.
 */
export async function runNullSeeker(
  seeker: NullSeeker,
  measure: (point: [number, number]) => number | Promise<number>,
  options: RunSeekerOptions = {},
): Promise<{ lastError?: unknown }> {
  const { signal, onReading } = options;
  let lastError: unknown;
  for (;;) {
    if (signal?.aborted) {
      seeker.stop('aborted');
      break;
    }
    const p = seeker.next();
    if (!p) break;
    let db: number;
    let error: unknown;
    try {
      db = await abortable(
        Promise.resolve().then(() => measure([p[0], p[1]])),
        signal,
        (s) => s.reason ?? new Error('aborted'),
      );
    } catch (e) {
      if (signal?.aborted || isOrthotoneError(e, 'ABORTED')) {
        seeker.stop('aborted');
        break;
      }
      error = e;
      lastError = e;
      db = Number.NaN;
    }
    if (typeof db !== 'number' || !Number.isFinite(db)) db = Number.NaN;
    seeker.tell(p, db);
    onReading?.({
      index: seeker.count,
      point: p,
      db,
      ...(error !== undefined ? { error } : {}),
      best: seeker.best(),
      estimate: seeker.estimate(),
    });
  }
  return lastError !== undefined ? { lastError } : {};
}
