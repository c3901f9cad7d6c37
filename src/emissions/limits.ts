/**
 * Emission limits as named rule sets, each with its source, and the frequency domains they apply to.
 *
 * Domains (ITU Radio Regulations Art. 1, Nos. 1.144–1.146B, as used by Rec. ITU-R SM.329 §1): the
 * necessary bandwidth holds the wanted emission; the **out-of-band domain** extends from its edges
 * to 250 % of the necessary bandwidth either side of its centre; beyond is the **spurious domain**,
 * where the spurious limits below apply. For 150 kHz–30 MHz with a necessary bandwidth under 4 kHz,
 * Rec. ITU-R SM.1539 sets the boundary at 10 kHz from the centre (2.5 × 4 kHz; from memory).
 * For an SSB telephony emission (J3E) the necessary bandwidth is the highest audio frequency M
 * (ITU-R SM.1138 / RR Appendix 1; from memory), from the carrier towards the wanted sideband.
 * So the carrier, the opposite sideband and close-in two-tone intermodulation of an exciter fall in
 * the out-of-band domain; the mixer's responses at LO harmonics fall in the spurious domain.
 *
 * The out-of-band domain has no numeric limit in these rule sets for amateur SSB. The check holds
 * products there to a practice figure (default 40 dB below PEP; common practice, no source — carrier
 * and opposite-sideband suppression of 40 dB is what builders usually aim for) and says so.
 *
 * These are design aids, not legal advice: local regulations and licensed practice take precedence.
 */
import { OrthotoneError } from '../core/errors.js';
import { requireFinite, requirePositive } from '../core/validate.js';

/** What a limit is relative to. */
export type LimitReference = 'mean' | 'pep';
/** Where a product lies relative to the necessary bandwidth. */
export type EmissionDomain = 'necessary' | 'out-of-band' | 'spurious';

/** A limit resolved for one carrier frequency and transmitter power. */
export interface ResolvedLimit {
  /** Rule-set name. */
  rule: string;
  /** Limit as a level, dB relative to `reference` (negative: e.g. −43). */
  limitDbc: number;
  reference: LimitReference;
  /** Domains the limit applies to. */
  domains: readonly EmissionDomain[];
  /** The text of the source, for the output. */
  source: string;
}

/** Inputs a rule set may need. */
export interface LimitContext {
  /** Carrier (assigned) frequency, Hz. */
  carrierHz: number;
  /** Transmitter power, W (mean power for 'mean' rules, PEP for 'pep' rules); undefined if unknown. */
  powerW?: number;
  /** A user-supplied limit, dBc (for the rule set 'user'). */
  userLimitDbc?: number;
  /** Reference of the user-supplied limit (default 'pep'). */
  userReference?: LimitReference;
}

/** A named rule set. */
export interface RuleSet {
  name: string;
  /** One-line description with the source. */
  title: string;
  /**
   * Resolves the limit for a context.
   * @throws {OrthotoneError} INVALID_ARGUMENT when the rule set does not cover the carrier frequency.
   */
  resolve(ctx: LimitContext): ResolvedLimit;
}

const MHZ = 1e6;

function below30(rule: string, ctx: LimitContext): void {
  if (!(ctx.carrierHz < 30 * MHZ)) {
    throw new OrthotoneError(
      'INVALID_ARGUMENT',
      `rule set ${rule} covers transmitters below 30 MHz, not ${ctx.carrierHz} Hz: choose another with --rules or give --limit-dbc`,
      ctx.carrierHz,
    );
  }
}

/** 10·log10(P) for a power in W, or undefined. */
const dbw = (p: number | undefined): number | undefined => (p === undefined ? undefined : 10 * Math.log10(p));

/**
 * The rule sets by name.
 * - `fcc-97.307`: US 47 CFR §97.307(d): below 30 MHz, the mean power of any spurious emission at
 *   least 43 dB below the mean power of the fundamental (transmitters installed after 1 January
 *   2003); §97.307(e): 30–225 MHz at least 60 dB (the rule's alternative absolute figures for
 *   transmitters of 25 W or less are not modelled, so the 60 dB here may be stricter than the rule).
 *   Source: 47 CFR §97.307(d),(e) (docs/REFERENCES.md §5 [P]).
 * - `itu-sm329-amateur`: Rec. ITU-R SM.329 §4.2, Table 1 (Category A, which repeats RR Appendix 3
 *   Table II), "amateur services operating below 30 MHz (including with SSB)":
 *   43 + 10·log10(PEP in W) dB below PEP, or 50 dB, whichever is less stringent (from memory; the
 *   table was not at hand). Without a power the 50 dB figure is used (it binds at PEP ≥ 5 W and is
 *   the stricter one below).
 * - `itu-sm329-general`: the same table, "all services except those quoted below":
 *   43 + 10·log10(P) dB below the mean power P (W), or 70 dBc, whichever is less stringent (from
 *   memory). Without a power the 70 dBc cap is used (stricter than the rule below 1 kW).
 * - `user`: a limit you give (`userLimitDbc`), relative to PEP unless `userReference` says 'mean';
 *   applied to every product, in every domain.
 */
export const RULE_SETS: Readonly<Record<string, RuleSet>> = Object.freeze({
  'fcc-97.307': {
    name: 'fcc-97.307',
    title:
      'US 47 CFR 97.307(d)/(e): spurious emissions 43 dB (below 30 MHz) / 60 dB (30-225 MHz) below the mean power of the fundamental',
    resolve(ctx: LimitContext): ResolvedLimit {
      if (ctx.carrierHz < 30 * MHZ) {
        return {
          rule: 'fcc-97.307',
          limitDbc: -43,
          reference: 'mean',
          domains: ['spurious'],
          source: '47 CFR 97.307(d): at least 43 dB below the mean power of the fundamental (below 30 MHz)',
        };
      }
      if (ctx.carrierHz <= 225 * MHZ) {
        return {
          rule: 'fcc-97.307',
          limitDbc: -60,
          reference: 'mean',
          domains: ['spurious'],
          source:
            '47 CFR 97.307(e): at least 60 dB below the mean power of the fundamental (30-225 MHz; the 25 W alternative is not modelled)',
        };
      }
      throw new OrthotoneError(
        'INVALID_ARGUMENT',
        `rule set fcc-97.307 is modelled up to 225 MHz, not ${ctx.carrierHz} Hz: give --limit-dbc from the rule that applies`,
        ctx.carrierHz,
      );
    },
  },
  'itu-sm329-amateur': {
    name: 'itu-sm329-amateur',
    title:
      'ITU-R SM.329 Category A, amateur below 30 MHz: 43 + 10 log10(PEP) dB or 50 dB below PEP, whichever is less stringent (from memory)',
    resolve(ctx: LimitContext): ResolvedLimit {
      below30('itu-sm329-amateur', ctx);
      const p = dbw(ctx.powerW);
      const db = p === undefined ? 50 : Math.min(50, 43 + p);
      return {
        rule: 'itu-sm329-amateur',
        limitDbc: -db,
        reference: 'pep',
        domains: ['spurious'],
        source: `ITU-R SM.329 Table 1 Category A (amateur, below 30 MHz): 43 + 10 log10(PEP) or 50 dB, whichever is less stringent${p === undefined ? '; no power given, 50 dB used' : ''} (from memory)`,
      };
    },
  },
  'itu-sm329-general': {
    name: 'itu-sm329-general',
    title:
      'ITU-R SM.329 Category A, all services: 43 + 10 log10(P) dB below the mean power, or 70 dBc, whichever is less stringent (from memory)',
    resolve(ctx: LimitContext): ResolvedLimit {
      const p = dbw(ctx.powerW);
      const db = p === undefined ? 70 : Math.min(70, 43 + p);
      return {
        rule: 'itu-sm329-general',
        limitDbc: -db,
        reference: 'mean',
        domains: ['spurious'],
        source: `ITU-R SM.329 Table 1 Category A (all services): 43 + 10 log10(P) or 70 dBc, whichever is less stringent${p === undefined ? '; no power given, 70 dBc used' : ''} (from memory)`,
      };
    },
  },
  user: {
    name: 'user',
    title: 'a limit you give with --limit-dbc, applied to every product',
    resolve(ctx: LimitContext): ResolvedLimit {
      if (ctx.userLimitDbc === undefined) {
        throw new OrthotoneError(
          'INVALID_ARGUMENT',
          'rule set user needs a limit: give --limit-dbc, e.g. -50',
        );
      }
      const l = requireFinite('userLimitDbc', ctx.userLimitDbc);
      return {
        rule: 'user',
        limitDbc: -Math.abs(l),
        reference: ctx.userReference ?? 'pep',
        domains: ['necessary', 'out-of-band', 'spurious'],
        source: `user-supplied limit ${-Math.abs(l)} dB relative to ${ctx.userReference === 'mean' ? 'the mean power' : 'PEP'}`,
      };
    },
  },
});

/** Other names accepted for the rule sets (lower case). */
export const RULE_ALIASES: Readonly<Record<string, string>> = Object.freeze({
  fcc: 'fcc-97.307',
  'fcc-97.307d': 'fcc-97.307',
  'fcc-97.307(d)': 'fcc-97.307',
  '97.307': 'fcc-97.307',
  '47cfr97.307': 'fcc-97.307',
  itu: 'itu-sm329-amateur',
  'itu-sm329': 'itu-sm329-amateur',
  sm329: 'itu-sm329-amateur',
  'itu-sm329-a': 'itu-sm329-amateur',
  'itu-amateur': 'itu-sm329-amateur',
  'itu-general': 'itu-sm329-general',
});

/**
 * The rule-set name for a name or alias (case-insensitive), or undefined when unknown.
 * @throws never
 */
export function ruleSetName(name: string): string | undefined {
  const k = String(name).trim().toLowerCase();
  if (Object.hasOwn(RULE_SETS, k)) return k;
  return Object.hasOwn(RULE_ALIASES, k) ? RULE_ALIASES[k] : undefined;
}

/** Default out-of-band practice figure, dB below PEP (common practice, no source). */
export const DEFAULT_OOB_PRACTICE_DBC = -40;

/** The necessary band and the domain boundaries of an SSB emission. */
export interface EmissionBands {
  /** Necessary bandwidth, Hz. */
  necessaryHz: number;
  /** Lower and upper edge of the necessary band, Hz (RF). */
  necessary: [number, number];
  /** Centre of the necessary band, Hz. */
  centreHz: number;
  /** Distance from the centre where the spurious domain begins, Hz. */
  spuriousFromHz: number;
}

/**
 * The necessary band of an SSB (J3E) emission and its domain boundaries.
 * @param carrierHz suppressed-carrier frequency, Hz.
 * @param sideband 'upper' or 'lower'.
 * @param highestAudioHz highest modulation frequency M, Hz: the necessary bandwidth (J3E, Bn = M).
 * @returns the bands, Hz.
 * @throws {OrthotoneError} INVALID_ARGUMENT for a non-positive frequency.
 * Reference: RR Art. 1 Nos. 1.146A–B and Rec. ITU-R SM.329 §1.3 (domains, 250 % of the necessary
 * bandwidth); Rec. ITU-R SM.1539 Table 1 (10 kHz for narrow emissions at 150 kHz–30 MHz; from
 * memory); J3E necessary bandwidth Bn = M (ITU-R SM.1138; from memory).
 */
export function emissionBands(
  carrierHz: number,
  sideband: 'upper' | 'lower',
  highestAudioHz: number,
): EmissionBands {
  requirePositive('carrierHz', carrierHz, 'Hz');
  const bn = requirePositive('highestAudioHz', highestAudioHz, 'Hz');
  const necessary: [number, number] =
    sideband === 'upper' ? [carrierHz, carrierHz + bn] : [carrierHz - bn, carrierHz];
  const centreHz = (necessary[0] + necessary[1]) / 2;
  const narrowHf = carrierHz >= 150e3 && carrierHz <= 30e6 && bn < 4000;
  return { necessaryHz: bn, necessary, centreHz, spuriousFromHz: narrowHf ? 10_000 : 2.5 * bn };
}

/**
 * The domain of a product at `frequencyHz` (Hz) for these bands.
 * @throws never
 */
export function domainOf(bands: EmissionBands, frequencyHz: number): EmissionDomain {
  if (Math.abs(frequencyHz - bands.centreHz) > bands.spuriousFromHz) return 'spurious';
  // The suppressed carrier sits at the edge of the necessary band; it is no part of the wanted emission.
  if (frequencyHz > bands.necessary[0] && frequencyHz < bands.necessary[1]) return 'necessary';
  return 'out-of-band';
}
