/**
 * Racing a pending promise against an AbortSignal: shared by the calibrate/ reading loop and the
 * webaudio/ trim reader. Internal helper (not re-exported from the package).
 */
/**
 * Settles like `p`, or rejects with `reason(signal)` as soon as `signal` aborts (at once when it has
 * already aborted). The abort listener is removed when `p` settles first. Without a signal, `p` itself.
 * @param p the pending work (it is not cancelled; only its result is no longer awaited).
 * @param signal optional abort signal.
 * @param reason the rejection value on abort, built from the signal.
 * @throws nothing itself; the returned promise rejects with `p`'s error or `reason(signal)`.
 * Reference: WHATWG DOM Standard, `AbortSignal` (the `abort` event and `reason`).
 */
export function abortable(p, signal, reason) {
  if (!signal) return p;
  return new Promise((resolve, reject) => {
    const onAbort = () => reject(reason(signal));
    if (signal.aborted) return onAbort();
    signal.addEventListener('abort', onAbort, { once: true });
    p.then(
      (v) => {
        signal.removeEventListener('abort', onAbort);
        resolve(v);
      },
      (e) => {
        signal.removeEventListener('abort', onAbort);
        reject(e);
      },
    );
  });
}
