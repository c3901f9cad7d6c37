import { OrthotoneError } from '../core/errors.js';
import { requireRange } from '../core/validate.js';

const median = (xs) => {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
};
/**
 * Compares verify readings with a profile's stored figures.
 * @param profile the saved profile (its `results.sidebandDb` / `carrierDb`, positive dB, or else its
 *   lowest stored reading of each quantity).
 * @param readings levels read at the stored trims, dBc.
 * @param options `floorDbc`: the analyzer's floor relative to the wanted tone, dBc, if known;
 *   `toleranceDb`: allowed worsening, dB (default 3).
 * @returns per-quantity verdicts, whether to re-calibrate, and lines to show.
 * @throws {OrthotoneError} INVALID_ARGUMENT when there is no good reading of a quantity the profile
 *   has a figure for, or a bad tolerance or floor.
 * Reference: file header (median of readings; power addition of a level and a floor).
 */
export function judgeDrift(profile, readings, options = {}) {
  const tol = requireRange('toleranceDb', options.toleranceDb ?? 3, 0.1, 60, 'dB');
  const floor =
    options.floorDbc === undefined ? undefined : requireRange('floorDbc', options.floorDbc, -300, 0, 'dBc');
  const quantities = [];
  for (const q of ['sideband', 'carrier']) {
    const fromResults = q === 'sideband' ? profile.results.sidebandDb : profile.results.carrierDb;
    const stored = profile.readings
      .filter((r) => r.quantity === q && r.levelDb !== null)
      .map((r) => r.levelDb);
    let storedDb;
    let storedFrom;
    if (fromResults !== undefined) {
      storedDb = fromResults;
      storedFrom = 'results';
    } else if (stored.length > 0) {
      storedDb = -Math.min(...stored);
      storedFrom = 'lowest stored reading';
    } else continue;
    const got = readings
      .map((r) => (q === 'sideband' ? r.sidebandDbc : r.carrierDbc))
      .filter(Number.isFinite);
    if (got.length === 0) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        `verify got no good ${q} reading: check the analyzer and read again`,
      );
    }
    const expectedDbc =
      floor === undefined ? -storedDb : 10 * Math.log10(10 ** (-storedDb / 10) + 10 ** (floor / 10));
    const medianDbc = median(got);
    const changeDb = medianDbc - expectedDbc;
    quantities.push({
      quantity: q,
      storedDb,
      storedFrom,
      expectedDbc,
      medianDbc,
      changeDb,
      drifted: changeDb > tol,
      readings: got.length,
    });
  }
  if (quantities.length === 0) {
    throw new OrthotoneError(
      'INVALID_DOCUMENT',
      'the profile stores no sideband or carrier figure to compare with: calibrate again and save the profile',
    );
  }
  const recalibrate = quantities.some((q) => q.drifted);
  const lines = quantities.map(
    (q) =>
      `${q.quantity}: stored ${q.storedDb.toFixed(1)} dB down (${q.storedFrom}), expected reading ${q.expectedDbc.toFixed(1)} dBc${floor !== undefined ? ` with the ${floor} dBc floor` : ''}, now ${q.medianDbc.toFixed(1)} dBc (median of ${q.readings}): ${q.changeDb >= 0 ? `${q.changeDb.toFixed(1)} dB worse` : `${(-q.changeDb).toFixed(1)} dB better`} → ${q.drifted ? 'DRIFTED' : 'holds'}`,
  );
  lines.push(
    recalibrate
      ? `The exciter has drifted by more than ${tol} dB since the profile was made: re-calibrate (orthotone calibrate) before transmitting.`
      : `No drift beyond ${tol} dB: the stored trims still hold; no need to re-calibrate.`,
  );
  return { quantities, recalibrate, toleranceDb: tol, lines };
}
