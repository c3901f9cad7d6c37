/**
 * One calibration session: a {@link Seeker} (what to read next), a {@link ReadingSource} (where the
 * level comes from) and, separately, a {@link TrimApplier} (who sets the trims and says which trims
 * are in force), driven by one loop, {@link runSession}, which owns abort, time-outs, retries,
 * failure counting and the history of readings *in the trims actually used*.
 *
 * Every calibration in the library and its front ends is a composition of these three parts:
 * - seekers: {@link createTrimSeeker} (one null: sideband or carrier), the combined seeker
 *   (`createCombinedSeeker`, both nulls from one reading), the per-tone refiner
 *   (`createMultitoneSeeker`, across the band);
 * - reading sources: the virtual analyzer ({@link analyzerSource}), a person typing levels
 *   (src/cli/calibrate-sources.ts `promptSource`), a shell command (`commandSource`, same file),
 *   Web Audio capture (src/webaudio/trim-reader.ts `createCaptureSource`), a device (issue 11);
 * - trim appliers: {@link PASS_THROUGH} (the reading source applies the trims itself, e.g. a
 *   command that receives them in its environment, or a simulation), the Web Audio generator, a
 *   device over a serial link (issue 11: its applier returns the trims the device confirmed).
 *
 * Platform-free: nothing here imports Node or the DOM; sources that need them live in src/cli,
 * src/node and src/webaudio.
 * References: the ask/tell split of DESIGN.md §6; the AbortSignal contract of the WHATWG DOM
 * Standard (`abort` event and `reason`).
 */
import { abortable } from '../core/abort.js';
import { isOrthotoneError, OrthotoneError } from '../core/errors.js';
/** An applier for sources that apply the trims themselves (simulations, commands given the trims). */
export const PASS_THROUGH = Object.freeze({ apply: (t) => t });
/**
 * True when every number in `levels` (a number, an array or an object of numbers) is finite.
 * @throws never
 */
export function levelsFinite(levels) {
  if (typeof levels === 'number') return Number.isFinite(levels);
  if (Array.isArray(levels)) return levels.length > 0 && levels.every(levelsFinite);
  if (levels && typeof levels === 'object') return Object.values(levels).every(levelsFinite);
  return false;
}
const isCommand = (x) =>
  typeof x === 'object' && x !== null && 'command' in x && typeof x.command === 'string';
/**
 * Drives a seeker with a reading source until the seeker stops, the source says stop, the signal
 * aborts or readings keep failing. Never rejects on a failed reading, a time-out or an abort (the
 * seeker's `stopReason` and `cutShort` say why it ended); the best trims are always in the seeker.
 * @param seeker the ask/tell core.
 * @param source where levels come from.
 * @param options applier, signal, time-out, failure limit, progress callbacks.
 * @returns the stop reason, the history in trims, the last error and whether the run was cut short.
 * @throws {OrthotoneError} INVALID_ARGUMENT for a bad `timeoutSeconds` or `maxFailures`; an
 *   exception thrown by a callback is passed on as a rejection.
 * Reference: DESIGN.md §6 (ask/tell core with an async driver).
 */
export async function runSession(seeker, source, options = {}) {
  const applier = options.applier ?? PASS_THROUGH;
  const { signal } = options;
  const timeout = options.timeoutSeconds;
  if (timeout !== undefined && !(timeout > 0 && timeout <= 86_400)) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `timeoutSeconds ${timeout} must lie in (0, 86400] s: give the time one reading may take`,
      timeout,
    );
  }
  const maxFailures = options.maxFailures ?? 3;
  if (!(Number.isInteger(maxFailures) && maxFailures >= 1)) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `maxFailures ${maxFailures} must be an integer ≥ 1`,
      maxFailures,
    );
  }
  const history = [...(options.history ?? [])];
  let lastError;
  let failures = 0;
  let cutShort;
  let refusal;
  const abortReason = (s) => s.reason ?? new OrthotoneError('ABORTED', 'aborted');
  for (;;) {
    if (signal?.aborted) {
      seeker.stop('aborted');
      cutShort = 'aborted';
      break;
    }
    const proposed = seeker.next();
    if (!proposed) break;
    const index = seeker.count + 1;
    // One controller per reading: fires on the caller's abort and on the time-out.
    const ctl = new AbortController();
    const onOuter = () => ctl.abort(abortReason(signal));
    signal?.addEventListener('abort', onOuter, { once: true });
    const timer =
      timeout !== undefined
        ? setTimeout(
            () =>
              ctl.abort(
                new OrthotoneError(
                  'MEASUREMENT_FAILED',
                  `reading ${index} took longer than ${timeout} s: raise the time-out or check the instrument`,
                ),
              ),
            timeout * 1000,
          )
        : undefined;
    let trims = proposed;
    let answer;
    let error;
    try {
      const work = (async () => {
        trims = await applier.apply(proposed, ctl.signal);
        return source.read(trims, { index, maxReadings: options.maxReadings, signal: ctl.signal });
      })();
      answer = await abortable(work, ctl.signal, (s) => s.reason);
    } catch (e) {
      error = e;
    } finally {
      if (timer !== undefined) clearTimeout(timer);
      signal?.removeEventListener('abort', onOuter);
    }
    if (signal?.aborted || (error !== undefined && isOrthotoneError(error, 'ABORTED'))) {
      seeker.stop('aborted');
      cutShort = 'aborted';
      break;
    }
    if (isCommand(answer)) {
      if (answer.command === 'retry') continue;
      if (answer.command === 'undo') {
        const dropped = seeker.count > 0 ? history.pop() : undefined;
        seeker.undo();
        options.onUndo?.(dropped);
        continue;
      }
      seeker.stop('aborted');
      cutShort = answer.why ?? 'quit';
      break;
    }
    const good = error === undefined && levelsFinite(answer);
    if (!good) {
      if (error === undefined) {
        error = new OrthotoneError(
          'MEASUREMENT_FAILED',
          `reading ${index} gave ${JSON.stringify(answer)}, not a finite level in dB`,
          answer,
        );
      }
      lastError = error;
      failures++;
      options.onFailure?.(error, index);
    } else failures = 0;
    const levels = good ? answer : undefined;
    if (good && source.check) refusal = source.check(levels, trims);
    seeker.tell(trims, levels, error);
    const step = {
      index: history.length + 1,
      trims,
      levels,
      ...(error !== undefined ? { error } : {}),
      best: seeker.best(),
    };
    history.push(step);
    options.onReading?.(step);
    if (refusal !== undefined) {
      seeker.stop('aborted');
      cutShort = 'refused';
      break;
    }
    if (failures >= maxFailures) {
      seeker.stop('measurement-failed');
      cutShort = 'failed';
      break;
    }
  }
  return {
    stopReason: seeker.stopReason ?? 'budget',
    history,
    ...(lastError !== undefined ? { lastError } : {}),
    ...(cutShort ? { cutShort } : {}),
    ...(refusal !== undefined ? { refusal } : {}),
  };
}
/**
 * A reading source over a plain function `(trims) => level(s)` (the library's `measure` option).
 * @throws never
 */
export function functionSource(measure) {
  return { read: (t) => measure(t) };
}
export function analyzerSource(analyzer, quantity, toneHz, amplitude) {
  if (quantity === 'both') {
    return {
      read: (t) => {
        const r = analyzer.readBoth(toneHz, t, amplitude);
        return { sidebandDb: r.sidebandDbc, carrierDb: r.carrierDbc };
      },
    };
  }
  return {
    read: (t) =>
      quantity === 'sideband'
        ? analyzer.readSideband(toneHz, t, amplitude)
        : analyzer.readCarrier(toneHz, t, amplitude),
  };
}
/**
 * A reading source whose levels are mapped by `f` (e.g. the first of a list of typed numbers);
 * commands and the guard pass through.
 * @throws never
 */
export function mapSource(source, f) {
  return {
    async read(trims, ctx) {
      const a = await source.read(trims, ctx);
      return isCommand(a) ? a : f(a);
    },
  };
}
