/**
 * The emission check: every product of the exciter (carrier, opposite sideband, two-tone
 * intermodulation, the mixer's responses at LO harmonics), after the output filter, against the
 * limits of the chosen rule sets (limits.ts), with its domain, margin and verdict.
 *
 * Levels: a product's level is kept relative to the PEP of the test signal it was read with, and
 * the PEP-to-mean ratio of that test (0 dB for one steady tone, 3.01 dB for two equal tones:
 * Krauss, Bostian & Raab, Solid State Radio Engineering, p. 509; REFERENCES.md §5). A rule relative
 * to the mean power gets `level re PEP + (PEP − mean)`.
 * Filter: the filter's insertion loss at the product minus its loss at the carrier (the fundamental
 * passes the same filter) is subtracted from the product's level.
 */
import { OrthotoneError } from '../core/errors.js';
import { requireFinite, requireOneOf, requirePositive } from '../core/validate.js';
import { DEFAULT_OOB_PRACTICE_DBC, domainOf, emissionBands, RULE_SETS, ruleSetName } from './limits.js';
import { ladderAttenuationDb } from './output-filter.js';
/**
 * Checks every product against every chosen rule set.
 * @param options see {@link EmissionCheckOptions}; frequencies in Hz, levels in dB.
 * @returns items (one per product and rule set covering it; one practice row for a product no rule
 *   set covers), overall pass, domain bands, resolved limits, notes.
 * @throws {OrthotoneError} INVALID_ARGUMENT for an unknown rule set, a rule set that does not cover
 *   the carrier frequency, or a non-finite level or frequency.
 * Reference: limits.ts (47 CFR §97.307; Rec. ITU-R SM.329; RR Art. 1 domains); PEP and mean power
 * of a two-tone signal per Krauss, Bostian & Raab p. 509.
 */
export function checkEmissions(options) {
  const fc = requirePositive('carrierHz', options.carrierHz, 'Hz');
  const sideband = requireOneOf('sideband', options.sideband, ['upper', 'lower']);
  const bands = emissionBands(fc, sideband, options.highestAudioHz);
  const names = [...(options.rules ?? (options.userLimitDbc === undefined ? ['fcc-97.307'] : []))];
  if (options.userLimitDbc !== undefined && !names.includes('user')) names.push('user');
  if (names.length === 0) {
    throw new OrthotoneError('INVALID_ARGUMENT', 'no rule set chosen: give --rules or --limit-dbc');
  }
  const keys = names.map((n) => {
    const key = ruleSetName(n);
    if (key === undefined) {
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        `rule set ${JSON.stringify(n)} is not known: use ${Object.keys(RULE_SETS).join(', ')}`,
        n,
      );
    }
    return key;
  });
  const limits = [...new Set(keys)].map((key) => {
    const rs = RULE_SETS[key];
    return rs.resolve({
      carrierHz: fc,
      ...(options.powerW !== undefined ? { powerW: requirePositive('powerW', options.powerW, 'W') } : {}),
      ...(options.userLimitDbc !== undefined ? { userLimitDbc: options.userLimitDbc } : {}),
      ...(options.userReference !== undefined ? { userReference: options.userReference } : {}),
    });
  });
  const practice = -Math.abs(
    requireFinite('oobPracticeDbc', options.oobPracticeDbc ?? DEFAULT_OOB_PRACTICE_DBC),
  );
  const filter = options.filter ?? null;
  const fundamentalLoss = filter ? ladderAttenuationDb(filter.elements, fc, filter.impedanceOhms) : 0;
  const items = [];
  for (const p of options.products) {
    requireFinite(`${p.name} frequencyHz`, p.frequencyHz);
    requireFinite(`${p.name} levelDbPep`, p.levelDbPep);
    const filterDb = filter
      ? ladderAttenuationDb(filter.elements, p.frequencyHz, filter.impedanceOhms) - fundamentalLoss
      : 0;
    const pep = p.levelDbPep - filterDb;
    const domain = domainOf(bands, p.frequencyHz);
    let practiceShown = false;
    for (const lim of limits) {
      const ruleApplies = lim.domains.includes(domain);
      // One practice row per product, however many rule sets leave it uncovered.
      if (!ruleApplies && practiceShown) continue;
      if (!ruleApplies) practiceShown = true;
      const reference = ruleApplies ? lim.reference : 'pep';
      const levelDbc = reference === 'mean' ? pep + p.pepToMeanDb : pep;
      const limitDbc = ruleApplies ? lim.limitDbc : practice;
      const marginDb = limitDbc - levelDbc;
      items.push({
        name: p.name,
        kind: p.kind,
        frequencyHz: p.frequencyHz,
        levelDbc,
        limitDbc,
        marginDb,
        pass: marginDb >= 0,
        reference,
        domain,
        rule: ruleApplies ? lim.rule : 'practice',
        limitKind: ruleApplies ? 'rule' : 'practice',
        filterDb,
        source: p.source,
        atFloor: p.atFloor === true,
      });
    }
  }
  const notes = [
    `necessary band ${bands.necessary[0]}-${bands.necessary[1]} Hz (J3E, ${bands.necessaryHz} Hz); spurious domain beyond ${bands.spuriousFromHz} Hz from its centre ${bands.centreHz} Hz (RR Art. 1 / ITU-R SM.329 domains)`,
    ...limits.map(
      (l) =>
        `${l.rule}: ${l.source}; counts products in the ${l.domains.join(', ')} domain${l.domains.length > 1 ? 's' : ''}`,
    ),
    `products outside the spurious domain (carrier, opposite sideband, close-in intermodulation) are held to the practice figure ${practice} dB below PEP where no rule set covers them: common practice, no source, not a legal limit`,
    'levels after the output filter' +
      (filter ? ' (its loss relative to the carrier subtracted)' : ' (no filter given)'),
    'A design aid: local regulations and licensed practice take precedence; measure the real transmitter into a dummy load.',
  ];
  return { items, pass: items.every((i) => i.pass), bands, limits, notes };
}
