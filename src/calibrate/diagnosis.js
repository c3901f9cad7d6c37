/**
 * Diagnoses a (finished or running) seeker.
 * @param seeker the seeker after its readings.
 * @param ctx what is being nulled.
 * @returns findings, possibly none (levels in dB, DC in full-scale units, as in each message).
 * Thresholds are our own choices (common practice, no source).
 * @throws never
 */
export function diagnoseSeeker(seeker, ctx) {
  const out = [];
  const o = seeker.options;
  const [sx, sy] = seeker.axes();
  const names = o.axisNames;
  const readings = seeker.readings().filter((r) => Number.isFinite(r.db));
  [sx, sy].forEach((s, j) => {
    if (s !== 'inactive') return;
    const hint =
      ctx.quantity === 'carrier'
        ? 'DC may be blocked by an AC-coupled output (coupling capacitor or transformer): null the carrier in hardware (mixer balance) instead'
        : 'check that the trim reaches the hardware (wiring, range, the right channel)';
    out.push({
      code: 'TRIM_INACTIVE',
      axis: names[j],
      value: o.maxStep[j],
      message: `${names[j]} does not move the ${ctx.quantity} reading: steps up to ±${fmt(o.maxStep[j])} changed it by no more than the noise; ${hint}.${
        s === 'inactive' && (j === 0 ? sy : sx) === 'active'
          ? ` The other trim was nulled alone (one-dimensional fit).`
          : ''
      }`,
    });
  });
  const first = readings[0];
  if (ctx.relativeToWanted && first && ctx.quantity === 'sideband' && first.db > -6) {
    out.push({
      code: 'SIDEBAND_INVERTED',
      value: first.db,
      message: `the unwanted sideband read ${first.db.toFixed(1)} dBc at the start, about as strong as the wanted one or stronger: Q acts with the opposite sign (I and Q swapped, or Q inverted). Select the other sideband or swap the I/Q leads, then calibrate again.`,
    });
  }
  const e = seeker.estimate();
  if (e && readings.length >= 6) {
    const free = o.model === 'quadratic';
    const k = e.surface.k;
    const ratio = Math.exp(Math.abs(e.surface.s));
    if (Math.abs(k) > (free ? 0.3 : 0.5)) {
      out.push({
        code: 'CROSS_COUPLED',
        value: k,
        message: `${names[0]} and ${names[1]} are cross-coupled (coupling ${k.toFixed(2)}): each moves the other's null, so alternating one knob at a time converges slowly; the fitted model includes the coupling.`,
      });
    }
    if (ratio > (free ? 3 : 2)) {
      const strong = e.surface.s > 0 ? names[0] : names[1];
      out.push({
        code: 'UNEQUAL_SENSITIVITY',
        axis: strong,
        value: 10 * Math.log10(ratio),
        message: `${strong} acts ${(10 * Math.log10(ratio)).toFixed(1)} dB more strongly than the other trim (per unit); the fitted model allows for it.`,
      });
    }
    const [[lx, hx], [ly, hy]] = o.bounds;
    const [cx, cy] = e.centre;
    if (cx < lx || cx > hx || cy < ly || cy > hy) {
      out.push({
        code: 'NULL_OUT_OF_RANGE',
        message: `the fitted ${ctx.quantity} null (${fmt(cx)}, ${fmt(cy)}) lies outside the trims' range [${fmt(lx)}, ${fmt(hx)}] × [${fmt(ly)}, ${fmt(hy)}]: the imbalance is larger than the trims can correct; fix it in hardware first.`,
      });
    }
    if (e.rmsDb > 2 * o.noiseDb && readings.length >= 8) {
      out.push({
        code: 'NOISY_READINGS',
        value: e.rmsDb,
        message: `readings scatter ${e.rmsDb.toFixed(2)} dB RMS about the fit, more than the stated noise ${o.noiseDb} dB: average longer on the analyzer or give the true noiseDb.`,
      });
    }
  }
  const rejected = readings.filter((r) => r.weight === 0).length;
  if (rejected > 0) {
    out.push({
      code: 'OUTLIERS_REJECTED',
      value: rejected,
      message: `${rejected} reading${rejected > 1 ? 's' : ''} disagreed with the rest by far more than the noise and ${rejected > 1 ? 'were' : 'was'} left out of the fit (interference, a transient or a mistyped value).`,
    });
  }
  return out;
}
function fmt(x) {
  return Math.abs(x) >= 0.01 || x === 0 ? x.toFixed(3) : x.toExponential(2);
}
