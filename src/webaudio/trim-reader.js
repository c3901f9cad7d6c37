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
import { requireRange, withDefaults } from '../core/validate.js';

const DEFAULTS = Object.freeze({
  node: undefined,
  capture: undefined,
  read: undefined,
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
export function createTrimReader(options) {
  const o = withDefaults(DEFAULTS, options);
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
  let chain = Promise.resolve();
  const one = async (trims) => {
    if (o.signal?.aborted) throw abortedReading();
    o.node.setTrims(trims, { rampSeconds: o.rampSeconds });
    const cap = await abortable(o.capture.capture(frames, { skipFrames }), o.signal, abortedReading);
    let level;
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
function nonFinite(r) {
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
function abortedReading() {
  return new OrthotoneError('ABORTED', 'the reading was aborted');
}
