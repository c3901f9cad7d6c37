/**
 * `orthotone emissions`: is this exciter within limits? Every product (carrier, opposite sideband,
 * two-tone intermodulation, the mixer's responses at LO harmonics), after the output filter, against
 * the limits of named rule sets, with margins; exit status 0 when all pass, 1 when any fails, 2 for
 * bad input. Products come from a capture of the exciter (I/Q WAV at the fundamental) or from the
 * virtual exciter (a tolerance preset, a network and a calibration profile).
 */
import { readFile } from 'node:fs/promises';
import type { CalibrationProfile } from '../calibrate/profile.js';
import { cautionsText, TRANSMIT_CAUTIONS } from '../core/cautions.js';
import { OrthotoneError } from '../core/errors.js';
import type { Network } from '../design/network.js';
import { checkEmissions, type EmissionCheck, type EmissionProduct } from '../emissions/check.js';
import { RULE_SETS, ruleSetName } from '../emissions/limits.js';
import { type OutputFilter, validateOutputFilter } from '../emissions/output-filter.js';
import { captureProducts, simulateProducts, twoToneProducts } from '../emissions/products.js';
import { parseNetworkJson } from '../export/network-json.js';
import { parseProfileJson } from '../export/profile-json.js';
import { benchReportHtml } from '../export/report.js';
import { assertDistinctFiles, writeFileAtomic } from '../node/files.js';
import { readIqWavFile } from '../node/wav.js';
import { drawDevice, HOMEBREW_BENCH_SEED, TOLERANCE_PRESETS } from '../simulate/model.js';
import { choiceOpt, lookupOpt, numberListOpt, numberOpt, parseCommand, UsageError } from './args.js';
import { parseTolerance } from './calibrate.js';
import { fixed, formatTable } from './table.js';

const HELP = `usage: orthotone emissions (--capture FILE.wav | --preset NAME --network NET.json --profile P.json)
                          --carrier-hz HZ [--filter FILTER.json] [options]

Checks every product of the exciter against emission limits and says pass or fail (exit 0 = all
pass, 1 = some fail, 2 = bad input). A design aid: local regulations and licensed practice take
precedence; measure the real transmitter into a dummy load.

where the products come from:
  --capture FILE.wav     a stereo I/Q capture (left I, right Q) of the exciter's output at the
                         fundamental, relative to the carrier (e.g. from 'orthotone simulate'),
                         holding a single tone (--tone) or a two-tone test (--two-tone); the mixer's
                         LO-harmonic responses are then predicted from the ideal four-phase mixer
  --preset NAME          the virtual exciter: ${Object.keys(TOLERANCE_PRESETS).join(' | ')}, run sample
                         by sample with --network and the trims of --profile, read at the
                         fundamental and at LO harmonics 2-9, with a single tone and a two-tone
  --network NET.json     the 90° network (default: the one stored in the profile)
  --profile P.json       the calibration profile (trims, correction, sideband, tone)

options:
  --carrier-hz HZ        RF carrier (LO) frequency, Hz (required)
  --filter FILTER.json   output low-pass filter from 'orthotone output-filter --out'
  --rules R,...          rule sets: ${Object.keys(RULE_SETS)
    .filter((r) => r !== 'user')
    .join(', ')} (default fcc-97.307)
  --limit-dbc X          your own limit, dB below the reference (e.g. -50), applied to every product
  --limit-reference R    pep (default) | mean: what --limit-dbc is relative to
  --power-w W            transmitter power, W (ITU rule sets scale with it)
  --oob-limit-dbc X      practice figure for products outside the spurious domain (carrier, opposite
                         sideband, close-in IMD), dB below PEP (default -40; not a legal limit)
  --tone HZ              single test tone, Hz (default: the profile's, or 1000)
  --two-tone A,B         two-tone frequencies, Hz (default 700,1900 when inside the band)
  --sideband S           upper | lower (capture; the profile's with --preset)
  --highest-audio-hz HZ  top of the audio band = necessary bandwidth of J3E (default: the network's
                         upper band edge, or 3000)
  --level DBFS           single-tone peak level for the virtual exciter (default -6)
  --device-seed N        device drawn from the preset (default ${HOMEBREW_BENCH_SEED})
  --tolerance K=V,...    override preset tolerances (as in 'orthotone calibrate')
  --seed N               converter and receiver noise seed (default 1)
  --report FILE.html     also write a self-contained bench report
  --format F             table (default) | json
  -h, --help             this help
`;

const OPTIONS = {
  capture: { type: 'string' },
  preset: { type: 'string' },
  network: { type: 'string' },
  profile: { type: 'string' },
  'carrier-hz': { type: 'string' },
  filter: { type: 'string' },
  rules: { type: 'string' },
  'limit-dbc': { type: 'string' },
  'limit-reference': { type: 'string' },
  'power-w': { type: 'string' },
  'oob-limit-dbc': { type: 'string' },
  tone: { type: 'string' },
  'two-tone': { type: 'string' },
  sideband: { type: 'string' },
  'highest-audio-hz': { type: 'string' },
  level: { type: 'string' },
  'device-seed': { type: 'string' },
  tolerance: { type: 'string' },
  seed: { type: 'string' },
  report: { type: 'string' },
  format: { type: 'string' },
  help: { type: 'boolean', short: 'h' },
} as const;

/**
 * Reads a text file named by an option.
 * @throws {UsageError} naming the option and the file when it cannot be read.
 */
export async function readText(option: string, file: string): Promise<string> {
  try {
    return await readFile(file, 'utf8');
  } catch (e) {
    throw new UsageError(
      `--${option} ${file} cannot be read: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`,
    );
  }
}

/**
 * Parses a document with `parse`, turning its OrthotoneError into a usage error naming the option.
 * @throws {UsageError} for a document `parse` refuses; anything else `parse` throws, unchanged.
 */
export function parseDoc<T>(option: string, file: string, text: string, parse: (t: string) => T): T {
  try {
    return parse(text);
  } catch (e) {
    if (e instanceof OrthotoneError) throw new UsageError(`--${option} ${file}: ${e.message}`);
    throw e;
  }
}

/**
 * Reads the profile and the network (from --network, else from the profile).
 * @throws {UsageError} for an unreadable or invalid file, no network, or a sample-rate mismatch.
 */
export async function readProfileAndNetwork(
  profileFile: string,
  networkFile: string | undefined,
): Promise<{ profile: CalibrationProfile; network: Network }> {
  const profile = parseDoc('profile', profileFile, await readText('profile', profileFile), parseProfileJson);
  let network: Network;
  if (networkFile !== undefined) {
    network = parseDoc('network', networkFile, await readText('network', networkFile), parseNetworkJson);
  } else if (profile.network !== null) {
    network = parseDoc('profile', profileFile, JSON.stringify(profile.network), parseNetworkJson);
  } else {
    throw new UsageError(`--profile ${profileFile} holds no network: give --network NET.json`);
  }
  if (network.sampleRate !== profile.sampleRate) {
    throw new UsageError(
      `the network runs at ${network.sampleRate} Hz but the profile's trims were made at ${profile.sampleRate} Hz: give the network the profile was made with`,
    );
  }
  return { profile, network };
}

/**
 * Reads and validates an output-filter document.
 * @throws {UsageError} for an unreadable file or one that is not an output-filter document.
 */
export async function readFilter(file: string): Promise<OutputFilter> {
  const text = await readText('filter', file);
  return parseDoc('filter', file, text, (t) => {
    let doc: unknown;
    try {
      doc = JSON.parse(t);
    } catch {
      throw new OrthotoneError(
        'INVALID_DOCUMENT',
        'is not JSON: write one with orthotone output-filter --out',
      );
    }
    return validateOutputFilter(doc);
  });
}

/**
 * The check as a plain-text table.
 * @throws never
 */
export function checkTable(c: EmissionCheck): string {
  const rows: string[][] = [
    ['product', 'frequency', 'domain', 'level dBc', 'ref', 'limit dBc', 'margin dB', 'rule', 'result'],
  ];
  for (const i of c.items) {
    rows.push([
      i.name + (i.source === 'predicted' ? ' (predicted)' : '') + (i.atFloor ? ' (at floor)' : ''),
      `${Number((i.frequencyHz / 1e6).toPrecision(9))} MHz`,
      i.domain,
      fixed(i.levelDbc, 1),
      i.reference,
      fixed(i.limitDbc, 1),
      fixed(i.marginDb, 1),
      i.limitKind === 'practice' ? 'practice' : i.rule,
      i.pass ? 'pass' : 'FAIL',
    ]);
  }
  return formatTable(rows);
}

/**
 * `orthotone emissions` entry point; returns 0 (all pass), 1 (some fail).
 * @throws {UsageError} for bad, missing or conflicting options and unreadable files; OrthotoneError
 *   INVALID_ARGUMENT / INVALID_DOCUMENT / OUTPUT_IS_INPUT / WRITE_FAILED (runGuarded maps all to exit 2).
 */
export async function run(argv: string[]): Promise<number> {
  const { values: v } = parseCommand(argv, OPTIONS);
  if (v.help) {
    process.stdout.write(HELP);
    return 0;
  }
  const capture = v.capture as string | undefined;
  const preset = v.preset as string | undefined;
  if ((capture === undefined) === (preset === undefined)) {
    throw new UsageError(
      'emissions needs either --capture FILE.wav or --preset NAME with --profile P.json (not both)',
    );
  }
  if (preset !== undefined && v.profile === undefined) {
    throw new UsageError('--preset needs --profile P.json (the trims to run with) and --network NET.json');
  }
  const carrierHz = numberOpt('carrier-hz', v['carrier-hz']);
  if (carrierHz === undefined || !(carrierHz > 0)) {
    throw new UsageError('emissions needs --carrier-hz HZ, the RF carrier frequency (e.g. 14.2e6)');
  }
  const format = choiceOpt('format', v.format, ['table', 'json'] as const, 'table');
  const report = v.report as string | undefined;
  assertDistinctFiles(
    [
      ['--capture', capture],
      ['--network', v.network as string | undefined],
      ['--profile', v.profile as string | undefined],
      ['--filter', v.filter as string | undefined],
    ],
    [['--report', report]],
  );
  const rules = typeof v.rules === 'string' ? v.rules.split(',').filter((x) => x !== '') : undefined;
  for (const r of rules ?? []) {
    if (ruleSetName(r) === undefined) {
      throw new UsageError(
        `--rules ${JSON.stringify(r)} is not known: use ${Object.keys(RULE_SETS).join(', ')}`,
      );
    }
  }
  const userLimitDbc = numberOpt('limit-dbc', v['limit-dbc']);
  const userReference = choiceOpt('limit-reference', v['limit-reference'], ['pep', 'mean'] as const, 'pep');
  const powerW = numberOpt('power-w', v['power-w']);
  if (powerW !== undefined && !(powerW > 0))
    throw new UsageError(`--power-w ${powerW} must be a power above 0 W`);
  const oob = numberOpt('oob-limit-dbc', v['oob-limit-dbc']);
  const filter = typeof v.filter === 'string' ? await readFilter(v.filter) : null;
  const twoTone = numberListOpt('two-tone', v['two-tone'], ',', 2) as [number, number] | undefined;

  let products: EmissionProduct[];
  let sideband: 'upper' | 'lower';
  let highestAudioHz: number;
  let profile: CalibrationProfile | null = null;
  let network: Network | null = null;
  const context: string[] = [];
  if (capture !== undefined) {
    sideband = choiceOpt('sideband', v.sideband, ['upper', 'lower'] as const, 'upper');
    highestAudioHz = numberOpt('highest-audio-hz', v['highest-audio-hz'] ?? '3000')!;
    const cap = await readIqWavFile(capture).catch((e: unknown) => {
      if (e instanceof OrthotoneError) throw new UsageError(`--capture ${capture}: ${e.message}`);
      throw e;
    });
    const s = sideband === 'upper' ? 1 : -1;
    if (twoTone) {
      products = twoToneProducts(
        { i: cap.i, q: cap.q },
        cap.sampleRate,
        carrierHz,
        [s * twoTone[0], s * twoTone[1]],
        'measured',
      );
      context.push(
        `capture ${capture}: two-tone ${twoTone.join(' and ')} Hz, ${sideband} sideband, ${cap.sampleRate} Hz`,
      );
    } else {
      const toneHz = numberOpt('tone', v.tone ?? '1000')!;
      products = captureProducts({ i: cap.i, q: cap.q }, cap.sampleRate, carrierHz, toneHz, sideband);
      context.push(
        `capture ${capture}: single tone ${toneHz} Hz, ${sideband} sideband, ${cap.sampleRate} Hz; LO-harmonic responses predicted from the ideal four-phase mixer`,
      );
    }
  } else {
    const pr = await readProfileAndNetwork(v.profile as string, v.network as string | undefined);
    profile = pr.profile;
    network = pr.network;
    sideband = profile.sideband;
    if (v.sideband !== undefined)
      throw new UsageError('--sideband is taken from the profile with --preset: drop it');
    highestAudioHz = numberOpt('highest-audio-hz', v['highest-audio-hz'] ?? String(network.band[1]))!;
    const tol = parseTolerance(
      v.tolerance as string | undefined,
      lookupOpt('preset', preset, TOLERANCE_PRESETS, 'homebrew-bench'),
    );
    const deviceSeed = numberOpt('device-seed', v['device-seed'] ?? String(HOMEBREW_BENCH_SEED))!;
    const toneHz = numberOpt('tone', v.tone ?? String(profile.toneHz))!;
    const [lo, hi] = network.band;
    const tt: [number, number] =
      twoTone ?? (lo <= 700 && hi >= 1900 ? [700, 1900] : [lo + 0.25 * (hi - lo), lo + 0.75 * (hi - lo)]);
    products = simulateProducts({
      network,
      model: drawDevice(tol, deviceSeed),
      trims: profile.trims,
      correction: profile.correction,
      sideband,
      carrierHz,
      toneHz,
      twoToneHz: tt,
      levelDbfs: numberOpt('level', v.level ?? '-6')!,
      seed: numberOpt('seed', v.seed ?? '1')!,
    });
    context.push(
      `virtual exciter: preset ${preset}, device ${deviceSeed}, trims of ${v.profile as string}; single tone ${toneHz} Hz, two-tone ${tt.join(' and ')} Hz; ${sideband} sideband`,
    );
  }
  const check = checkEmissions({
    products,
    carrierHz,
    sideband,
    highestAudioHz,
    ...(rules !== undefined ? { rules } : {}),
    ...(powerW !== undefined ? { powerW } : {}),
    ...(userLimitDbc !== undefined ? { userLimitDbc, userReference } : {}),
    ...(oob !== undefined ? { oobPracticeDbc: oob } : {}),
    filter,
  });
  if (filter)
    context.push(
      `output filter ${v.filter as string}: ${filter.response ?? 'ladder'} order ${filter.elements.length}`,
    );
  else context.push('no output filter given: the LO-harmonic responses reach the output unfiltered');
  process.stderr.write(`${cautionsText()}\n`);
  if (report) {
    writeFileAtomic(
      report,
      benchReportHtml({
        created: new Date().toISOString(),
        carrierHz,
        network,
        profile,
        check,
        filter,
        context,
        cautions: TRANSMIT_CAUTIONS,
      }),
    );
  }
  if (format === 'json') {
    process.stdout.write(
      `${JSON.stringify(
        {
          items: check.items,
          pass: check.pass,
          carrierHz,
          bands: check.bands,
          limits: check.limits,
          notes: check.notes,
          filter,
          context,
          cautions: TRANSMIT_CAUTIONS,
        },
        null,
        2,
      )}\n`,
    );
  } else {
    process.stdout.write(
      `${context.join('\n')}\n\n${checkTable(check)}\n${check.notes.map((n) => `note: ${n}`).join('\n')}\n`,
    );
    const fails = check.items.filter((i) => !i.pass);
    process.stdout.write(
      `\nresult: ${check.pass ? 'every product within its limit' : `${fails.length} of ${check.items.length} over the limit (worst: ${fails.sort((a, b) => a.marginDb - b.marginDb)[0]!.name}, ${fixed(-fails[0]!.marginDb, 1)} dB over)`}\n`,
    );
    if (report) process.stdout.write(`wrote ${report}\n`);
  }
  return check.pass ? 0 : 1;
}
