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
import type { Trims } from '../core/trims.js';
import type { Analyzer } from '../simulate/analyzer.js';
import type { StopReason } from './null-seeker.js';

/** The best trims a seeker knows, and the level(s) expected there (dB). */
export interface SessionBest<L> {
  trims: Trims;
  levels: L;
}

/**
 * The one seeker interface every calibration implements. Levels are dB: a number for one null,
 * `{ sidebandDb, carrierDb }` for the combined seeker, one number per tone for the refiner.
 */
export interface Seeker<L> {
  /**
   * The trims to read next, or undefined when the seeker has stopped. Repeated calls give the same trims.
   * @throws never
   */
  next(): Trims | undefined;
  /**
   * Reports the level(s) read with `trims` in force (which may differ from what `next()` proposed:
   * hardware rounds). `levels` undefined, or a non-finite level, records a failed reading (it
   * counts against the budget; the setting is tried again).
   * @throws {OrthotoneError} INVALID_ARGUMENT when the seeker has stopped.
   */
  tell(trims: Trims, levels: L | undefined, error?: unknown): void;
  /**
   * Removes the last reading (a person mistyped it); undoes a stop.
   * @throws never in normal use.
   */
  undo(): void;
  /**
   * The best trims so far: never a setting the readings do not show to beat the start.
   * @throws never
   */
  best(): SessionBest<L>;
  /**
   * Everything needed to continue later: plain JSON data.
   * @throws never
   */
  save(): SavedSeeker;
  /**
   * Replaces this seeker's readings by those of a saved state (from {@link Seeker.save} of the same
   * kind of seeker) and replays them.
   * @throws {OrthotoneError} INVALID_DOCUMENT when `state` is not a saved state of this kind.
   */
  restore(state: unknown): void;
  /**
   * Stops the seeker; `best()` stays valid. The first reason given is kept.
   * @throws never
   */
  stop(reason: StopReason): void;
  readonly done: boolean;
  readonly stopReason: StopReason | undefined;
  /** Readings told so far (failed ones included). */
  readonly count: number;
}

/** A saved seeker (JSON-serialisable). */
export interface SavedSeeker {
  format: 'orthotone-seeker-session';
  version: 1;
  kind: 'null' | 'combined' | 'multitone';
  /** The readings, in trims; failed levels as null. */
  readings: { trims: Trims; levels: unknown }[];
  /** Seeker-specific state (e.g. the null seeker's options). */
  [key: string]: unknown;
}

/** What a reading source is told about the reading it is asked for. */
export interface ReadingContext {
  /** 1-based number of the reading in this session. */
  index: number;
  /** Budget of the session (readings at most). */
  maxReadings: number | undefined;
  /** Fires when the reading is no longer wanted (abort, time-out): stop work, kill children. */
  signal: AbortSignal;
}

/**
 * A request from a reading source instead of a level: `retry` asks again, `undo` drops the last
 * reading, `stop` ends the session keeping the best so far (`why` says whether a person quit or the
 * input ended).
 */
export interface SessionCommand {
  command: 'retry' | 'undo' | 'stop';
  why?: 'quit' | 'end-of-input';
}

/** Where levels come from: the one reading-source interface. */
export interface ReadingSource<L> {
  /**
   * Reads the level(s) with `trims` in force. May throw or return non-finite levels (a failed
   * reading), or a {@link SessionCommand}.
   * @throws anything: a throw is a failed reading, counted and retried by the driver.
   */
  read(trims: Trims, context: ReadingContext): L | SessionCommand | Promise<L | SessionCommand>;
  /**
   * Optional guard run on every reading that did not throw (non-finite levels included): a message
   * when the run must not go on (e.g. the wanted tone is missing or too weak in live mode, or a
   * level is NaN). The session then stops with `refused`, keeping the best so far.
   * @throws never (return the message instead).
   */
  check?(levels: L, trims: Trims): string | undefined;
}

/**
 * Who sets the trims (on the generator, a device) and says which trims are in force. Kept apart
 * from the reading source so that any applier pairs with any source (a device with a typed prompt).
 */
export interface TrimApplier {
  /**
   * Sets `trims` and resolves to the trims actually in force (rounded by hardware, confirmed by a
   * device).
   * @throws anything: the reading then fails (counted and retried by the driver).
   */
  apply(trims: Trims, signal: AbortSignal): Trims | Promise<Trims>;
}

/** An applier for sources that apply the trims themselves (simulations, commands given the trims). */
export const PASS_THROUGH: TrimApplier = Object.freeze({ apply: (t: Trims) => t });

/** One reading as the driver keeps it. */
export interface SessionStep<L> {
  /** 1-based number of the reading. */
  index: number;
  /** The trims in force when the reading was taken (what the applier confirmed). */
  trims: Trims;
  /** The level(s) read; undefined when the reading failed. */
  levels: L | undefined;
  /** Why it failed. */
  error?: unknown;
  /** The seeker's best after this reading. */
  best: SessionBest<L>;
}

/** Options of {@link runSession}. */
export interface SessionOptions<L> {
  /** Sets the trims before each reading. Default {@link PASS_THROUGH}. */
  applier?: TrimApplier | undefined;
  /** Stops the session between readings and abandons a reading in progress. */
  signal?: AbortSignal | undefined;
  /** Time allowed for one reading (apply and read), seconds; on expiry it fails. Default: none. */
  timeoutSeconds?: number | undefined;
  /** Failed readings in a row that end the session with `measurement-failed`. Default 3. */
  maxFailures?: number | undefined;
  /**
   * Called after every reading (failed ones included).
   * @throws anything: passed on as the session's rejection.
   */
  onReading?: ((step: SessionStep<L>) => void) | undefined;
  /**
   * Called when a reading failed, before it is retried.
   * @throws anything: passed on as the session's rejection.
   */
  onFailure?: ((error: unknown, index: number) => void) | undefined;
  /**
   * Called after an undo with the dropped step (undefined when there was none).
   * @throws anything: passed on as the session's rejection.
   */
  onUndo?: ((dropped: SessionStep<L> | undefined) => void) | undefined;
  /** Readings already in the seeker (a resumed session), in trims, to start the history with. */
  history?: SessionStep<L>[] | undefined;
  /** Budget shown to the reading source. */
  maxReadings?: number | undefined;
}

/** How a session ended. */
export interface SessionResult<L> {
  stopReason: StopReason;
  /** Every reading, in the trims in force. */
  history: SessionStep<L>[];
  /** The last reading error. */
  lastError?: unknown;
  /**
   * Set when the session ended before the seeker was done: a person quit, the input ended, the
   * caller aborted, readings kept failing, or a guard refused.
   */
  cutShort?: 'quit' | 'end-of-input' | 'aborted' | 'failed' | 'refused';
  /** The guard's message when it refused. */
  refusal?: string;
}

/**
 * True when every number in `levels` (a number, an array or an object of numbers) is finite.
 * @throws never
 */
export function levelsFinite(levels: unknown): boolean {
  if (typeof levels === 'number') return Number.isFinite(levels);
  if (Array.isArray(levels)) return levels.length > 0 && levels.every(levelsFinite);
  if (levels && typeof levels === 'object') return Object.values(levels).every(levelsFinite);
  return false;
}

const isCommand = (x: unknown): x is SessionCommand =>
  typeof x === 'object' && x !== null && 'command' in x && typeof (x as SessionCommand).command === 'string';

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
export async function runSession<L>(
  seeker: Seeker<L>,
  source: ReadingSource<L>,
  options: SessionOptions<L> = {},
): Promise<SessionResult<L>> {
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
  const history: SessionStep<L>[] = [...(options.history ?? [])];
  let lastError: unknown;
  let failures = 0;
  let cutShort: SessionResult<L>['cutShort'];
  let refusal: string | undefined;
  const abortReason = (s: AbortSignal): unknown => s.reason ?? new OrthotoneError('ABORTED', 'aborted');
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
    const onOuter = (): void => ctl.abort(abortReason(signal!));
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
    let answer: L | SessionCommand | undefined;
    let error: unknown;
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
    // The guard sees every answer (a NaN too: live runs stop on it with a message).
    if (error === undefined && source.check) refusal = source.check(answer as L, trims);
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
    const levels = good ? (answer as L) : undefined;
    seeker.tell(trims, levels, error);
    const step: SessionStep<L> = {
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
export function functionSource<L>(measure: (trims: Trims) => L | Promise<L>): ReadingSource<L> {
  return { read: (t) => measure(t) };
}

/** The analyzer calls {@link analyzerSource} needs: those of the virtual analyzer (src/simulate/analyzer.ts). */
export type AnalyzerLike = Pick<Analyzer, 'readSideband' | 'readCarrier' | 'readBoth'>;

/**
 * The virtual analyzer as a reading source: the unwanted sideband, the carrier, or both, in dBc.
 * @param analyzer a simulated analyzer (createAnalyzer).
 * @param quantity what to read.
 * @param toneHz test tone, Hz; `amplitude` its peak, full scale 1.
 * @throws never
 */
export function analyzerSource(
  analyzer: AnalyzerLike,
  quantity: 'sideband' | 'carrier',
  toneHz: number,
  amplitude: number,
): ReadingSource<number>;
export function analyzerSource(
  analyzer: AnalyzerLike,
  quantity: 'both',
  toneHz: number,
  amplitude: number,
): ReadingSource<{ sidebandDb: number; carrierDb: number }>;
export function analyzerSource(
  analyzer: AnalyzerLike,
  quantity: 'sideband' | 'carrier' | 'both',
  toneHz: number,
  amplitude: number,
): ReadingSource<number> | ReadingSource<{ sidebandDb: number; carrierDb: number }> {
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
export function mapSource<A, B>(source: ReadingSource<A>, f: (a: A) => B): ReadingSource<B> {
  return {
    async read(trims, ctx) {
      const a = await source.read(trims, ctx);
      return isCommand(a) ? a : f(a as A);
    },
  };
}

/** Levels a live reading gives: both nulls in dBc and, when known, the wanted tone in dBFS. */
export interface LiveLevels {
  sidebandDb: number;
  carrierDb: number;
  /** Level of the wanted tone, dBFS (AES17), when the reading knows it. */
  wantedDbfs?: number;
}

/**
 * The guard of live runs (reading a receiver): refuses to go on when a level is not a number, when
 * the wanted tone is missing or weaker than `minWantedDbfs`, or when the "unwanted" sideband reads
 * above the wanted tone (the receiver hears the other sideband, or only noise). Each message says
 * what to check.
 * @param minWantedDbfs weakest usable wanted tone, dBFS (default −60).
 * @returns a `check` for a {@link ReadingSource}.
 * @throws never
 */
export function liveGuard(minWantedDbfs = -60): (levels: LiveLevels) => string | undefined {
  return (l) => {
    if (!l || !Number.isFinite(l.sidebandDb) || !Number.isFinite(l.carrierDb)) {
      return `a reading gave no level (sideband ${String(l?.sidebandDb)}, carrier ${String(l?.carrierDb)}): check that the receiver audio reaches the input and that the generator is playing`;
    }
    if (l.wantedDbfs !== undefined && !(l.wantedDbfs >= minWantedDbfs)) {
      return `the wanted tone reads ${Number.isFinite(l.wantedDbfs) ? `${l.wantedDbfs.toFixed(1)} dBFS` : 'nothing'}, below ${minWantedDbfs} dBFS: check that the receiver is tuned to the transmission and its audio reaches the input, then raise the level`;
    }
    if (l.sidebandDb > 0) {
      return `the unwanted sideband reads ${l.sidebandDb.toFixed(1)} dB above the wanted tone: check the receiver's sideband and tuning offset (or that a signal is present at all)`;
    }
    return undefined;
  };
}
