/**
 * The async driver of a bare {@link NullSeeker} (natural coordinates), as a thin composition of
 * the session driver (session.ts `runSession`): asks, measures, tells, until the seeker stops, the
 * budget is used or an AbortSignal fires. A reading that throws or returns a non-finite value is
 * recorded as failed (it counts against the budget) and the setting is tried again; after three
 * failures in a row the run stops with `measurement-failed`. Nothing is ever thrown away: the
 * best setting so far and the saved state are always available from the seeker.
 */
import { ZERO_TRIMS } from '../core/trims.js';
import { functionSource, runSession } from './session.js';
import { createTrimSeeker } from './trim-calibration.js';
/**
 * Runs a seeker to its stop. Resolves (never rejects on a failed reading or an abort); the seeker's
 * `stopReason` says why it ended (`aborted` on an AbortSignal).
 * @param seeker the ask/tell core.
 * @param measure reads the level at a setting, dB; may be async.
 * @returns the last measurement error, if any (for messages).
 * @throws never for a failed reading or an abort (the promise resolves); an exception thrown by
 *   `onReading` is passed on as a rejection.
 */
export async function runNullSeeker(seeker, measure, options = {}) {
  // The plain coordinates ride in two trim fields through the session driver.
  const axes = {
    quantity: 'sideband',
    names: [...seeker.options.axisNames],
    toPoint: (t) => [t.gainDb, t.phaseDeg],
    toTrims: (p, base) => ({ ...base, gainDb: p[0], phaseDeg: p[1] }),
    seeker: {},
  };
  const ts = createTrimSeeker(seeker, axes, { ...ZERO_TRIMS });
  const { onReading } = options;
  const session = await runSession(
    ts,
    functionSource((t) => measure([t.gainDb, t.phaseDeg])),
    {
      signal: options.signal,
      onReading: (h) => {
        onReading?.({
          index: seeker.count,
          point: [h.trims.gainDb, h.trims.phaseDeg],
          db: h.levels ?? Number.NaN,
          ...(h.error !== undefined ? { error: h.error } : {}),
          best: seeker.best(),
          estimate: seeker.estimate(),
        });
      },
    },
  );
  return session.lastError !== undefined ? { lastError: session.lastError } : {};
}
