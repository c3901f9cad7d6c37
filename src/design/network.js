import { OrthotoneError } from '../core/errors.js';

function sectionResponse(s, w) {
  // H = (a + z^-m) / (1 + a z^-m), z^-m = e^{-j m w}
  const c = Math.cos(s.order * w);
  const sn = -Math.sin(s.order * w);
  const nr = s.a + c;
  const ni = sn;
  const dr = 1 + s.a * c;
  const di = s.a * sn;
  const d = dr * dr + di * di;
  return { re: (nr * dr + ni * di) / d, im: (ni * dr - nr * di) / d };
}
function branchResponseAt(b, w) {
  let re = Math.cos(b.delay * w);
  let im = -Math.sin(b.delay * w);
  for (const s of b.sections) {
    const h = sectionResponse(s, w);
    const r = re * h.re - im * h.im;
    im = re * h.im + im * h.re;
    re = r;
  }
  return { re, im };
}
/**
 * Evaluates both branches of a network at `frequencyHz` directly from its coefficients
 * (z = e^{jω}, ω = 2πf/fs).
 * @param net the network document.
 * @param frequencyHz frequency in Hz, 0 ≤ f ≤ fs/2.
 * @returns the complex responses `{ i, q }`.
 * Method: direct evaluation of the transfer functions of DESIGN.md §3 on the unit circle.
 * @throws never for a network that passed {@link validateNetwork}; the document is not re-checked
 *   here, so a malformed object may fail with a TypeError.
 */
export function evaluateBranches(net, frequencyHz) {
  const w = (2 * Math.PI * frequencyHz) / net.sampleRate;
  if (net.kind === 'fir') {
    const d = (net.taps.length - 1) / 2;
    let re = 0;
    let im = 0;
    for (let k = 0; k < net.taps.length; k++) {
      const t = net.taps[k];
      if (t === 0) continue;
      re += t * Math.cos(w * k);
      im -= t * Math.sin(w * k);
    }
    return { i: { re: Math.cos(w * d), im: -Math.sin(w * d) }, q: { re, im } };
  }
  return { i: branchResponseAt(net.branches.i, w), q: branchResponseAt(net.branches.q, w) };
}
/**
 * Opposite-sideband suppression at one frequency from branch responses: input `cos ωt` gives the
 * wanted component `(Hi + jHq)/2·e^{jωt}` and the image `(Hi* + jHq*)/2·e^{−jωt}`, so
 * suppression = `20·log10(|Hi + jHq| / |Hi − jHq|)` dB. Ideal: `Hq = −j·Hi` (Q lags I by 90°).
 * Reference: K. Schmidt, QEX Aug 1994 §2 (the same quantity as the image-rejection ratio).
 * @returns suppression in dB (positive when the wanted sideband is larger; +Infinity for no image).
 * @throws never
 */
export function suppressionFromResponse(r) {
  const wr = r.i.re - r.q.im;
  const wi = r.i.im + r.q.re;
  const ur = r.i.re + r.q.im;
  const ui = r.i.im - r.q.re;
  const u = Math.hypot(ur, ui);
  if (u === 0) return Number.POSITIVE_INFINITY;
  return 20 * Math.log10(Math.hypot(wr, wi) / u);
}
/**
 * Phase of I minus phase of Q minus 90°, in degrees, wrapped to [−180, 180). 0 for an ideal pair
 * (DESIGN.md §2: Q lags I by 90°).
 * @throws never
 */
export function phaseErrorDegFromResponse(r) {
  let d = Math.atan2(r.i.im, r.i.re) - Math.atan2(r.q.im, r.q.re) - Math.PI / 2;
  d = ((((d + Math.PI) % (2 * Math.PI)) + 2 * Math.PI) % (2 * Math.PI)) - Math.PI;
  return (d * 180) / Math.PI;
}
/**
 * Gain of Q relative to I, in dB (0 for a balanced pair).
 * @throws never
 */
export function gainErrorDbFromResponse(r) {
  return 20 * Math.log10(Math.hypot(r.q.re, r.q.im) / Math.hypot(r.i.re, r.i.im));
}
function bad(msg, v) {
  throw new OrthotoneError('INVALID_DOCUMENT', msg, v);
}
function checkBranch(name, b) {
  if (typeof b !== 'object' || b === null) bad(`branches.${name} is missing: give { delay, sections }`);
  const br = b;
  if (typeof br.delay !== 'number' || !Number.isInteger(br.delay) || br.delay < 0 || br.delay > 65536) {
    bad(
      `branches.${name}.delay ${String(br.delay)} must be a whole number of samples from 0 to 65536`,
      br.delay,
    );
  }
  if (!Array.isArray(br.sections) || br.sections.length > 256) {
    bad(`branches.${name}.sections must be an array of at most 256 sections`);
  }
  br.sections.forEach((s, k) => {
    if (s?.order !== 1 && s?.order !== 2) {
      bad(`branches.${name}.sections[${k}].order ${String(s?.order)} must be 1 or 2`, s?.order);
    }
    if (typeof s.a !== 'number' || !Number.isFinite(s.a) || Math.abs(s.a) >= 1) {
      bad(
        `branches.${name}.sections[${k}].a ${String(s.a)} must be a finite number with |a| < 1 (a stable all-pass)`,
        s.a,
      );
    }
  });
}
/**
 * Checks that `doc` is a valid network document, format version 1, and returns it typed.
 * @throws {OrthotoneError} INVALID_DOCUMENT naming the field, its value and what is expected.
 */
export function validateNetwork(doc) {
  if (typeof doc !== 'object' || doc === null) bad('a network document must be a JSON object');
  const d = doc;
  if (d.format !== 'orthotone-network') {
    bad(`format ${JSON.stringify(d.format)} is not 'orthotone-network': is this a network file?`, d.format);
  }
  if (d.version !== 1)
    bad(
      `version ${JSON.stringify(d.version) ?? 'missing'} is not supported: this library reads version 1 (the number 1)`,
      d.version,
    );
  if (typeof d.sampleRate !== 'number' || !Number.isFinite(d.sampleRate) || d.sampleRate <= 0) {
    bad(`sampleRate ${String(d.sampleRate)} must be a positive number of Hz`, d.sampleRate);
  }
  if (
    !Array.isArray(d.band) ||
    d.band.length !== 2 ||
    !d.band.every((x) => typeof x === 'number' && Number.isFinite(x))
  ) {
    bad('band must be [lo, hi] in Hz', d.band);
  }
  if (d.kind === 'fir') {
    const taps = d.taps;
    if (!Array.isArray(taps) || taps.length < 3 || taps.length % 2 === 0 || taps.length > 65535) {
      bad('taps must be an array of odd length from 3 to 65535 (type III Hilbert FIR)', taps?.length);
    }
    taps.forEach((t, k) => {
      if (typeof t !== 'number' || !Number.isFinite(t))
        bad(`taps[${k}] ${String(t)} must be a finite number`, t);
    });
  } else if (d.kind === 'allpass') {
    const br = d.branches;
    if (typeof br !== 'object' || br === null) bad('branches must be { i, q } for kind allpass');
    checkBranch('i', br.i);
    checkBranch('q', br.q);
  } else {
    bad(`kind ${JSON.stringify(d.kind)} must be 'fir' or 'allpass'`, d.kind);
  }
  return d;
}
