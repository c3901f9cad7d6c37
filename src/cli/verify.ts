/**
 * `orthotone verify`: a few readings at a saved profile's trims, compared with the figures it
 * stored, to say whether the exciter has drifted and whether to re-calibrate. Readings come from
 * the virtual exciter, a person at a prompt or a measure command (the reading sources of
 * `orthotone calibrate`, src/cli/calibrate-sources.ts). Exit 0: the trims hold; 1: re-calibrate;
 * 2: bad input.
 */

import type { ReadingSource, SessionCommand } from '../calibrate/session.js';
import { cautionsText, TRANSMIT_CAUTIONS } from '../core/cautions.js';
import type { Trims } from '../core/trims.js';
import type { Network } from '../design/network.js';
import { judgeDrift, type VerifyReading } from '../emissions/verify.js';
import { parseNetworkJson } from '../export/network-json.js';
import { parseProfileJson } from '../export/profile-json.js';
import { benchReportHtml } from '../export/report.js';
import { assertDistinctFiles, writeFileAtomic } from '../node/files.js';
import { createAnalyzer } from '../simulate/analyzer.js';
import { createVirtualExciter } from '../simulate/exciter.js';
import { drawDevice, HOMEBREW_BENCH_SEED, TOLERANCE_PRESETS } from '../simulate/model.js';
import { choiceOpt, lookupOpt, numberOpt, parseCommand, UsageError } from './args.js';
import { parseTolerance } from './calibrate.js';
import { commandSource, lineInput, promptSource } from './calibrate-sources.js';
import { parseDoc, readText } from './emissions.js';

const HELP = `usage: orthotone verify --profile P.json (--simulate | --prompt | --measure-command CMD) [options]

Reads the opposite sideband and the carrier a few times at the profile's stored trims and compares
them with the figures it stored: says whether the exciter has drifted and whether to re-calibrate
(exit 0 = the trims hold, 1 = re-calibrate, 2 = bad input).

where the readings come from:
  --simulate             the virtual exciter (--preset, --device-seed as in 'orthotone calibrate')
  --prompt               you: type the sideband and carrier levels your analyzer shows, e.g. -43.5 -27.9
  --measure-command CMD  runs CMD with the trims in OT_GAIN_DB, OT_PHASE_DEG, OT_DC_I, OT_DC_Q,
                         OT_QUANTITY=both, OT_TONE_HZ; CMD prints the two levels in dB

options:
  --profile P.json       the saved calibration profile (required)
  --readings N           readings to take (default 3; the median is compared)
  --tolerance-db D       allowed worsening before calling it drift, dB (default 3)
  --floor DBC            the analyzer's floor relative to the tone, dBc (a null below it reads as the
                         floor); simulate default -70
  --preset NAME          ${Object.keys(TOLERANCE_PRESETS).join(' | ')} (simulate; default homebrew-bench)
  --device-seed N        device to draw (simulate; default ${HOMEBREW_BENCH_SEED})
  --tolerance K=V,...    override preset tolerances (simulate)
  --seed N               analyzer noise seed (simulate; default 2)
  --noise DB             analyzer reading noise, dB (simulate; default 0.5)
  --tone-amplitude A     peak tone level, full scale 1 (simulate; default 0.5, as calibrate)
  --report FILE.html     also write the bench report (calibration, network, this verify run)
  --format F             table (default) | json
  -h, --help             this help
`;

const OPTIONS = {
  profile: { type: 'string' },
  simulate: { type: 'boolean' },
  prompt: { type: 'boolean' },
  'measure-command': { type: 'string' },
  readings: { type: 'string' },
  'tolerance-db': { type: 'string' },
  floor: { type: 'string' },
  preset: { type: 'string' },
  'device-seed': { type: 'string' },
  tolerance: { type: 'string' },
  seed: { type: 'string' },
  noise: { type: 'string' },
  'tone-amplitude': { type: 'string' },
  report: { type: 'string' },
  format: { type: 'string' },
  help: { type: 'boolean', short: 'h' },
} as const;

const isCommand = (x: unknown): x is SessionCommand => typeof x === 'object' && x !== null && 'command' in x;

/**
 * `orthotone verify` entry point; returns 0 (trims hold) or 1 (re-calibrate).
 * @throws {UsageError} for bad or missing options or an unreadable profile; OrthotoneError
 *   INVALID_ARGUMENT / INVALID_DOCUMENT (runGuarded maps them to exit 2).
 */
export async function run(argv: string[]): Promise<number> {
  const { values: v } = parseCommand(argv, OPTIONS);
  if (v.help) {
    process.stdout.write(HELP);
    return 0;
  }
  if (typeof v.profile !== 'string')
    throw new UsageError('verify needs --profile P.json, the saved calibration profile');
  const modes = [v.simulate, v.prompt, v['measure-command'] !== undefined].filter(Boolean).length;
  if (modes !== 1)
    throw new UsageError('verify needs exactly one of --simulate, --prompt or --measure-command CMD');
  const report = v.report as string | undefined;
  assertDistinctFiles([['--profile', v.profile]], [['--report', report]]);
  const format = choiceOpt('format', v.format, ['table', 'json'] as const, 'table');
  const n = numberOpt('readings', v.readings ?? '3')!;
  if (!Number.isInteger(n) || n < 1 || n > 50)
    throw new UsageError(`--readings ${n} must be a whole number from 1 to 50`);
  const toleranceDb = numberOpt('tolerance-db', v['tolerance-db'] ?? '3')!;
  const profile = parseDoc('profile', v.profile, await readText('profile', v.profile), parseProfileJson);
  const toneHz = profile.sideband === 'lower' ? -profile.toneHz : profile.toneHz;
  const trims: Trims = profile.trims;
  let floorDbc = numberOpt('floor', v.floor);
  const out = format === 'table' ? process.stdout : process.stderr;
  let source: ReadingSource<number[]>;
  const input = v.prompt ? lineInput(process.stdin) : undefined;
  let what: string;
  if (v.simulate) {
    const preset = lookupOpt('preset', v.preset, TOLERANCE_PRESETS, 'homebrew-bench');
    const tol = parseTolerance(v.tolerance as string | undefined, preset);
    const deviceSeed = numberOpt('device-seed', v['device-seed'] ?? String(HOMEBREW_BENCH_SEED))!;
    const amp = numberOpt('tone-amplitude', v['tone-amplitude'] ?? '0.5')!;
    floorDbc ??= -70;
    const ex = createVirtualExciter(drawDevice(tol, deviceSeed), { sampleRate: profile.sampleRate, seed: 1 });
    const an = createAnalyzer(ex, {
      seed: numberOpt('seed', v.seed ?? '2')!,
      floorDbc,
      noiseDb: numberOpt('noise', v.noise ?? '0.5')!,
    });
    source = {
      read: (t) => {
        const r = an.readBoth(toneHz, t, amp);
        return [r.sidebandDbc, r.carrierDbc];
      },
    };
    what = `virtual exciter: preset ${(v.preset as string | undefined) ?? 'homebrew-bench'}, device ${deviceSeed}; analyzer floor ${floorDbc} dBc`;
  } else if (input) {
    source = promptSource({
      input,
      output: out,
      count: 2,
      question: `sideband and carrier levels at ${profile.toneHz} Hz, dB, e.g. -43.5 -27.9`,
      describe: (t) =>
        `gain ${t.gainDb.toFixed(4)} dB, phase ${t.phaseDeg.toFixed(4)}°, dcI ${t.dcI.toExponential(4)}, dcQ ${t.dcQ.toExponential(4)} (the stored trims)`,
      label: 'verify reading',
    });
    what = 'readings typed at the prompt';
  } else {
    source = commandSource({
      command: v['measure-command'] as string,
      env: { OT_QUANTITY: 'both', OT_TONE_HZ: String(profile.toneHz) },
      count: 2,
    });
    what = `readings from ${v['measure-command'] as string}`;
  }
  out.write(
    `${cautionsText()}\n\nverify ${v.profile} (made ${profile.created}) at its stored trims; ${what}\n`,
  );
  const readings: VerifyReading[] = [];
  const ac = new AbortController();
  let failures = 0;
  try {
    while (readings.length < n) {
      let r: number[] | SessionCommand;
      try {
        r = await source.read(trims, { index: readings.length + 1, maxReadings: n, signal: ac.signal });
      } catch (e) {
        failures++;
        out.write(`  reading ${readings.length + 1} failed: ${(e as Error)?.message ?? 'no value'}\n`);
        if (failures >= 3)
          throw new UsageError(
            `verify: ${failures} readings failed in a row: check the analyzer or the command`,
          );
        continue;
      }
      if (isCommand(r)) {
        if (r.command === 'retry') continue;
        if (r.command === 'undo') {
          readings.pop();
          continue;
        }
        break;
      }
      failures = 0;
      readings.push({ sidebandDbc: r[0]!, carrierDbc: r[1]! });
      if (!input)
        out.write(
          `  reading ${readings.length}: sideband ${r[0]!.toFixed(2)} dBc, carrier ${r[1]!.toFixed(2)} dBc\n`,
        );
    }
  } finally {
    input?.close();
  }
  if (readings.length === 0)
    throw new UsageError('verify: no reading taken (input ended): nothing to compare');
  const result = judgeDrift(profile, readings, {
    toleranceDb,
    ...(floorDbc !== undefined ? { floorDbc } : {}),
  });
  if (report) {
    let network: Network | null = null;
    try {
      network = profile.network === null ? null : parseNetworkJson(JSON.stringify(profile.network));
    } catch {
      network = null; // a stored network that no longer validates is left out of the report
    }
    writeFileAtomic(
      report,
      benchReportHtml({
        created: new Date().toISOString(),
        title: 'orthotone verify report',
        carrierHz: null,
        network,
        profile,
        check: null,
        filter: null,
        context: [`verify of ${v.profile}: ${what}`],
        cautions: TRANSMIT_CAUTIONS,
        verify: result.lines,
      }),
    );
  }
  if (format === 'json') {
    process.stdout.write(
      `${JSON.stringify({ ...result, readings, drifted: result.recalibrate }, null, 2)}\n`,
    );
  } else {
    process.stdout.write(`\n${result.lines.join('\n')}\n${report ? `wrote ${report}\n` : ''}`);
  }
  return result.recalibrate ? 1 : 0;
}
