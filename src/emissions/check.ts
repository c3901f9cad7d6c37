/**
 * The emission check: every product of the exciter (carrier, opposite sideband, two-tone
 * intermodulation, the mixer's responses at LO harmonics), after the output filter, against the
 * limits of the chosen rule sets (limits.ts), with its domain, margin and verdict.
 *
 * Levels: a product's level is kept relative to the PEP of the test signal it was read with, and
 * the PEP-to-mean ratio of that test (0 dB for one steady tone, 3.01 dB for two equal tones:
 * Krauss, Bostian & Raab, Solid State Radio Engineering, p. 509; docs/REFERENCES.md §5). A rule relative
 * to the mean power gets `level re PEP + (PEP − mean)`.
 * Filter: the filter's insertion loss at the product minus its loss at the carrier (the fundamental
 * passes the same filter) is subtracted from the product's level.
 */
import { OrthotoneError } from '../core/errors.js';
import { requireFinite, requireOneOf, requirePositive } from '../core/validate.js';
import {
  DEFAULT_OOB_PRACTICE_DBC,
  domainOf,
  type EmissionBands,
  type EmissionDomain,
  emissionBands,
  type LimitReference,
  type ResolvedLimit,
  RULE_SETS,
  ruleSetName,
} from './limits.js';
import { type LadderElement, ladderAttenuationDb } from './output-filter.js';

/** A product as read or modelled, before the output filter. */
export interface EmissionProduct {
  /** Plain name, e.g. "carrier", "opposite sideband", "IMD3 low", "LO×3 opposite sideband". */
  name: string;
  kind: 'carrier' | 'opposite-sideband' | 'intermodulation' | 'mixer-harmonic';
  /** RF frequency, Hz. */
  frequencyHz: number;
  /** Level relative to the PEP of the test signal, dB, before the output filter. */
  levelDbPep: number;
  /** PEP minus mean power of the test signal the product was read with, dB (≥ 0). */
  pepToMeanDb: number;
  /** How the level was obtained. */
  source: 'measured' | 'simulated' | 'predicted';
  /** True when the reading is at the analyzer's floor (the level is then an upper bound). */
  atFloor?: boolean;
  /** LO harmonic (1 = fundamental) for mixer products. */
  harmonic?: number;
}

/** One row of the check: a product against one rule set's limit. */
export interface EmissionItem {
  name: string;
  kind: EmissionProduct['kind'];
  frequencyHz: number;
  /** Level after the filter, dB relative to `reference` (PEP or mean power), i.e. dBc. */
  levelDbc: number;
  /** Limit, dB relative to `reference`. */
  limitDbc: number;
  /** limitDbc − levelDbc, dB (positive = within the limit). */
  marginDb: number;
  pass: boolean;
  reference: LimitReference;
  domain: EmissionDomain;
  /** Rule set the limit comes from, or 'practice' for the out-of-band practice figure. */
  rule: string;
  /** Whether the limit is the rule set's own ('rule') or the out-of-band practice figure ('practice'). */
  limitKind: 'rule' | 'practice';
  /** Filter loss applied (relative to the carrier), dB. */
  filterDb: number;
  source: EmissionProduct['source'];
  atFloor: boolean;
}

/** Options of {@link checkEmissions}. */
export interface EmissionCheckOptions {
  products: readonly EmissionProduct[];
  /** Carrier (LO) frequency, Hz. */
  carrierHz: number;
  sideband: 'upper' | 'lower';
  /** Highest audio frequency of the wanted signal (the J3E necessary bandwidth), Hz. */
  highestAudioHz: number;
  /** Rule-set names (see RULE_SETS); default ['fcc-97.307']. */
  rules?: readonly string[];
  /** Transmitter power, W, for rules that depend on it. */
  powerW?: number;
  /** User limit, dBc (adds the rule set 'user' when given). */
  userLimitDbc?: number;
  userReference?: LimitReference;
  /** Practice figure for products outside the spurious domain, dB below PEP (default −40). */
  oobPracticeDbc?: number;
  /** Output filter: its elements (F, H) and impedance (Ω). */
  filter?: { elements: readonly Pick<LadderElement, 'kind' | 'value'>[]; impedanceOhms: number } | null;
}

/** The result of {@link checkEmissions}. */
export interface EmissionCheck {
  items: EmissionItem[];
  /** True when every item passes. */
  pass: boolean;
  bands: EmissionBands;
  limits: ResolvedLimit[];
  /** Lines to show with the table: what counts as spurious, where the limits come from. */
  notes: string[];
}

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
export function checkEmissions(options: EmissionCheckOptions): EmissionCheck {
  const fc = requirePositive('carrierHz', options.carrierHz, 'Hz');
  const sideband = requireOneOf('sideband', options.sideband, ['upper', 'lower'] as const);
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
    const rs = RULE_SETS[key]!;
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
  const items: EmissionItem[] = [];
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
      const reference: LimitReference = ruleApplies ? lim.reference : 'pep';
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
