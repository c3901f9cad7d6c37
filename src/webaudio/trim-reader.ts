/**
 * `createTrimReader`: turns a live quadrature node and a capture node into the `measure(trims)`
 * callback the calibrate/ functions take. Each reading sets the trims (ramped), lets the path settle
 * for a fixed number of frames counted on the audio thread (ramp, sound-card round trip, receiver
 * AGC and filters), captures, and hands the capture to an injected `read` function that returns a
 * level in dB. The measuring and calibrating modules are injected, never imported: webaudio sits
 * on the generate side of the layers (core ← design ← generate ← webaudio) and must not depend on
 * measure/ or calibrate/.
 */
import { abortable } from '../core/abort.js';
import { OrthotoneError } from '../core/errors.js';
import type { Trims } from '../core/trims.js';
import { requireRange, withDefaults } from '../core/validate.js';
import type { CaptureNode, CaptureResult } from './capture-node.js';
import type { QuadratureNode } from './node.js';

/** Options of {@link createTrimReader}. */
export interface TrimReaderOptions<T = number> {
  /** The generator whose trims are set (only `setTrims` and `sampleRate` are used). */
  node: Pick<QuadratureNode, 'setTrims' | 'sampleRate'>;
  /** Where the answer comes back: a capture node fed by the receiver audio (or by the I/Q). */
  capture: Pick<CaptureNode, 'capture'>;
  /**
   * Turns one capture into the reading: a level in dB (e.g. the unwanted sideband in dBc via
   * measureSideband), or an object of levels (e.g. `{ sidebandDb, carrierDb }` for
   * calibrateSidebandAndCarrier). May throw: the reading then fails with MEASUREMENT_FAILED.
   */
  read: (capture: CaptureResult, sampleRate: number) => T;
  /** Ramp applied to trim changes, seconds. */
  rampSeconds: number;
  /** Wait after the trims are set, before capturing, seconds (must cover the ramp and path latency). */
  settleSeconds: number;
  /** CaptureResult length, seconds. */
  captureSeconds: number;
  /** Cancels a reading in progress. */
  signal: AbortSignal | undefined;
}

const DEFAULTS: Readonly<TrimReaderOptions<unknown>> = Object.freeze({
  node: undefined as unknown as TrimReaderOptions['node'],
  capture: undefined as unknown as TrimReaderOptions['capture'],
  read: undefined as unknown as TrimReaderOptions<unknown>['read'],
  rampSeconds: 0.01,
  settleSeconds: 0.06,
  captureSeconds: 0.1,
  signal: undefined,
});

/**
 * Makes a `measure(trims) => Promise<dB>` callback for calibrateSideband / calibrateCarrier that
 * reads the live path. Readings are serialised: one at a time, in call order.
 * @throws {OrthotoneError} INVALID_ARGUMENT when a required part is missing, when settleSeconds is
 *   shorter than rampSeconds, or a duration is out of range (0…10 s; capture 1 ms…10 s).
 * @returns the measure callback (resolving to what `read` returns); its promise rejects with ABORTED when `signal` fires and with
 *   MEASUREMENT_FAILED when `read` throws or returns a non-finite level.
 */
export function createTrimReader<T = number>(
  options: Partial<TrimReaderOptions<T>> & Pick<TrimReaderOptions<T>, 'node' | 'capture' | 'read'>,
): (trims: Partial<Trims>) => Promise<T> {
  const o = withDefaults(DEFAULTS as Readonly<TrimReaderOptions<T>>, options);
  if (!o.node || typeof o.node.setTrims !== 'function') {
    throw new OrthotoneError('INVALID_ARGUMENT', 'node must be a quadrature node (createQuadratureNode)');
  }
  if (!o.capture || typeof o.capture.capture !== 'function') {
    throw new OrthotoneError('INVALID_ARGUMENT', 'capture must be a capture node (createCaptureNode)');
  }
  if (typeof o.read !== 'function') {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      'read must be a function (capture, sampleRate) => level in dB',
    );
  }
  requireRange('rampSeconds', o.rampSeconds, 0, 10, 's');
  requireRange('settleSeconds', o.settleSeconds, 0, 10, 's');
  requireRange('captureSeconds', o.captureSeconds, 0.001, 10, 's');
  if (o.settleSeconds < o.rampSeconds) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `settleSeconds ${o.settleSeconds} s is shorter than rampSeconds ${o.rampSeconds} s: readings would catch the ramp; make settleSeconds at least the ramp plus the path latency`,
      o.settleSeconds,
    );
  }
  const fs = o.node.sampleRate;
  const frames = Math.max(1, Math.round(o.captureSeconds * fs));
  const skipFrames = Math.round(o.settleSeconds * fs);
  let chain: Promise<unknown> = Promise.resolve();

  const one = async (trims: Partial<Trims>): Promise<T> => {
    if (o.signal?.aborted) throw abortedReading();
    o.node.setTrims(trims, { rampSeconds: o.rampSeconds });
    const cap = await abortable(o.capture.capture(frames, { skipFrames }), o.signal, abortedReading);
    let level: T;
    try {
      level = o.read(cap, fs);
    } catch (e) {
      throw new OrthotoneError(
        'MEASUREMENT_FAILED',
        `the reading failed: ${e instanceof Error ? e.message : String(e)}`,
        e,
      );
    }
    const bad = nonFinite(level);
    if (bad !== null) {
      throw new OrthotoneError(
        'MEASUREMENT_FAILED',
        `the reading gave ${bad}, not a finite level in dB`,
        level,
      );
    }
    return level;
  };

  return (trims) => {
    const p = chain.then(() => one(trims));
    chain = p.catch(() => undefined);
    return p;
  };
}

/** Describes the first non-finite level in a reading (a number or an object of numbers), or null. */
function nonFinite(r: unknown): string | null {
  if (typeof r === 'number') return Number.isFinite(r) ? null : String(r);
  if (r && typeof r === 'object') {
    for (const [k, v] of Object.entries(r)) {
      if (typeof v === 'number' && !Number.isFinite(v)) return `${k} = ${v}`;
    }
    return null;
  }
  return String(r);
}

/** The rejection of a reading whose signal aborted. */
function abortedReading(): OrthotoneError {
  return new OrthotoneError('ABORTED', 'the reading was aborted');
}

/**
 * The Web Audio generator as a trim applier (the shape of calibrate/session.ts `TrimApplier`, which
 * this layer does not import): sets the trims on the quadrature node with a short ramp and returns
 * them as in force.
 * @param node the generator.
 * @param rampSeconds ramp of each change, seconds (default 0.01).
 * @throws {OrthotoneError} INVALID_ARGUMENT when `node` is not a quadrature node or the ramp is out
 *   of range (0…10 s).
 */
export function createGeneratorApplier(
  node: Pick<QuadratureNode, 'setTrims'>,
  rampSeconds = 0.01,
): { apply(trims: Trims, signal: AbortSignal): Trims } {
  if (!node || typeof node.setTrims !== 'function') {
    throw new OrthotoneError('INVALID_ARGUMENT', 'node must be a quadrature node (createQuadratureNode)');
  }
  requireRange('rampSeconds', rampSeconds, 0, 10, 's');
  return {
    apply(trims) {
      node.setTrims(trims, { rampSeconds });
      return { ...trims };
    },
  };
}

/** Options of {@link createCaptureSource}. */
export interface CaptureSourceOptions<T> {
  /** Where the answer comes back (receiver audio or the I/Q). */
  capture: Pick<CaptureNode, 'capture'>;
  /** Sample rate of the capture, Hz. */
  sampleRate: number;
  /**
   * Turns one capture into the level(s), dB; non-finite levels are passed on (the session's guard
   * decides). May throw: the reading then fails.
   * @throws anything: the reading then fails.
   */
  read: (capture: CaptureResult, sampleRate: number) => T;
  /** Wait after the trims were applied, before capturing, seconds (ramp plus path latency). */
  settleSeconds: number;
  /** Capture length, seconds. */
  captureSeconds: number;
  /**
   * Guard run on every reading (e.g. calibrate's `liveGuard`): a message stops the session.
   * @throws never (return the message instead).
   */
  check?: (levels: T, trims: Trims) => string | undefined;
}

/**
 * Web Audio capture as a reading source (the shape of calibrate/session.ts `ReadingSource`, which
 * this layer does not import): waits `settleSeconds` counted on the audio thread, captures, and
 * reads; the session's per-reading signal (abort, time-out) abandons the capture. Pair it with
 * {@link createGeneratorApplier} (or a device's applier) in `runSession`.
 * @throws {OrthotoneError} INVALID_ARGUMENT for a missing capture or read, a bad sample rate or a
 *   duration out of range (settle 0…10 s; capture 1 ms…10 s).
 */
export function createCaptureSource<T>(o: CaptureSourceOptions<T>): {
  read(trims: Trims, context: { signal: AbortSignal }): Promise<T>;
  check?: (levels: T, trims: Trims) => string | undefined;
} {
  if (!o?.capture || typeof o.capture.capture !== 'function') {
    throw new OrthotoneError('INVALID_ARGUMENT', 'capture must be a capture node (createCaptureNode)');
  }
  if (typeof o.read !== 'function') {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      'read must be a function (capture, sampleRate) => level in dB',
    );
  }
  requireRange('sampleRate', o.sampleRate, 1000, 1e6, 'Hz');
  requireRange('settleSeconds', o.settleSeconds, 0, 10, 's');
  requireRange('captureSeconds', o.captureSeconds, 0.001, 10, 's');
  const frames = Math.max(1, Math.round(o.captureSeconds * o.sampleRate));
  const skipFrames = Math.round(o.settleSeconds * o.sampleRate);
  return {
    async read(_trims, context) {
      const cap = await abortable(o.capture.capture(frames, { skipFrames }), context.signal, abortedReading);
      return o.read(cap, o.sampleRate);
    },
    ...(o.check ? { check: o.check } : {}),
  };
}
