/**
 * Loading the processor module into a context once, and picking the AudioWorkletNode constructor
 * that matches the context (native, or one passed by the caller).
 */
import { OrthotoneError } from '../core/errors.js';

const loaded = new WeakMap();
/**
 * Adds the processor module to `context.audioWorklet` once per context and URL; later calls reuse
 * the same promise. A failed load is forgotten so it can be retried.
 * @param context the audio context (native, standardized-audio-context's or node-web-audio-api's).
 * @param moduleUrl URL (or, in Node with node-web-audio-api, a plain filesystem path) of the built
 *   processor, `dist/worklet/processor.js` (package entry `orthotone/worklet`).
 * @throws {OrthotoneError} INVALID_ARGUMENT when the context has no audioWorklet or the URL is empty;
 *   the returned promise rejects with the loader's error when the module cannot be loaded.
 */
export function loadWorkletModule(context, moduleUrl) {
  const url = String(moduleUrl);
  if (!url) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      'moduleUrl is empty: pass the URL of orthotone/worklet (dist/worklet/processor.js)',
      moduleUrl,
    );
  }
  const wl = context?.audioWorklet;
  if (!wl || typeof wl.addModule !== 'function') {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      'the audio context has no audioWorklet: use a browser with AudioWorklet (served over https or localhost) or the AudioContext from standardized-audio-context',
      context,
    );
  }
  let byUrl = loaded.get(context);
  if (!byUrl) {
    byUrl = new Map();
    loaded.set(context, byUrl);
  }
  let p = byUrl.get(url);
  if (!p) {
    p = wl.addModule(url);
    const map = byUrl;
    p.catch(() => map.delete(url));
    byUrl.set(url, p);
  }
  return p;
}
/**
 * The AudioWorkletNode constructor to use for `context`: the one given, or the global native one
 * when `context` is a native BaseAudioContext.
 * @throws {OrthotoneError} INVALID_ARGUMENT when none fits, naming the option that fixes it.
 */
export function workletNodeConstructorFor(context, given) {
  if (given !== undefined) {
    if (typeof given !== 'function') {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        'options.AudioWorkletNode must be an AudioWorkletNode constructor (for example the one exported by standardized-audio-context)',
        given,
      );
    }
    return given;
  }
  const g = globalThis;
  const native = typeof g.BaseAudioContext === 'function' && context instanceof g.BaseAudioContext;
  if (native && typeof g.AudioWorkletNode === 'function') return g.AudioWorkletNode;
  throw new OrthotoneError(
    'INVALID_ARGUMENT',
    'this audio context is not a native BaseAudioContext: pass options.AudioWorkletNode, the AudioWorkletNode constructor of the library that made the context (standardized-audio-context or node-web-audio-api)',
    context,
  );
}
