/**
 * `orthotone calibrate`: null the unwanted sideband (gain and phase trims) and the carrier (DC
 * trims) from level readings — taken from a virtual exciter (`--simulate`), typed by a person off
 * an analyzer (`--prompt`), or printed by a command (`--measure-command`). Prints a convergence
 * table and the resulting suppression; writes a profile and a C header on request.
 */
import { exec } from 'node:child_process';
import { readFile, writeFile } from 'node:fs/promises';
import { createInterface } from 'node:readline/promises';
import { carrierAxes } from '../calibrate/carrier.js';
import { type BothLevels, type CombinedSeeker, createCombinedSeeker } from '../calibrate/combined.js';
import type { Diagnosis } from '../calibrate/diagnosis.js';
import type { NullSeeker } from '../calibrate/null-seeker.js';
import { createProfile, type ProfileReading, profileToJson } from '../calibrate/profile.js';
import { runNullSeeker } from '../calibrate/run-null-seeker.js';
import { sidebandAxes } from '../calibrate/sideband.js';
import {
  type HardwareTrimOptions,
  resultOf,
  seekerFor,
  type TrimAxes,
  type TrimCalibrationResult,
  type TrimName,
  validateHardware,
} from '../calibrate/trim-calibration.js';
import { cautionsText } from '../core/cautions.js';
import { OrthotoneError } from '../core/errors.js';
import { type Trims, ZERO_TRIMS } from '../core/trims.js';
import { requireSampleRate } from '../core/validate.js';
import type { Network } from '../design/network.js';
import { parseNetworkJson } from '../export/network-json.js';
import { profileToCHeader } from '../export/profile-header.js';
import { createAnalyzer } from '../simulate/analyzer.js';
import { createVirtualExciter, type VirtualExciter } from '../simulate/exciter.js';
import {
  drawDevice,
  HOMEBREW_BENCH_SEED,
  TOLERANCE_PRESETS,
  type TolerancePreset,
} from '../simulate/model.js';
import { choiceOpt, lookupOpt, numberOpt, parseCommand, UsageError } from './args.js';
import { formatTable } from './table.js';

const HELP = `usage: orthotone calibrate (--simulate | --prompt | --measure-command CMD) [options]

Finds the gain/phase trims that null the unwanted sideband and the DC trims that null the carrier,
from a handful of level readings (each reading is one sample of a known bowl; the null is fitted).

where the readings come from:
  --simulate             a virtual exciter drawn from --preset and --device-seed, read by a simulated
                         analyzer (floor --floor, noise --noise, seeded by --seed)
  --prompt               you: for each step it says which trims to set (or, with your generator
                         under its control, what it plays) and asks for the level your analyzer
                         shows, in dB. Answer a number, 'retry' (ask again), 'undo' (drop the last
                         reading) or 'quit' (stop and keep the best so far)
  --measure-command CMD  runs CMD (in a shell) for each reading with the trims in OT_GAIN_DB,
                         OT_PHASE_DEG, OT_DC_I, OT_DC_Q and what to read in OT_QUANTITY
                         (sideband | carrier), OT_TONE_HZ; CMD prints one level in dB

options:
  --what W               sideband | carrier | both (default both: sideband first, then carrier)
  --together             with --what both: read the sideband and the carrier at every step (one
                         analyzer display shows both; each reading serves both nulls, so one
                         budget covers the two). --prompt then asks for two numbers, e.g.
                         '-43.5 -27.9'; --measure-command gets OT_QUANTITY=both and prints two
  --tone HZ              test tone (default 1000)
  --rate HZ              sample rate the trims apply at, recorded in the profile (default 48000,
                         or the network's)
  --network FILE         the 90° network document in use: its rate is the calibration's, and the
                         profile carries it
  --tone-amplitude A     peak tone level, full scale 1, if known (fixes the carrier bowl's curvature)
  --max-readings N       budget per null (default 16)
  --steps K=V,...        hardware trims with fixed steps, in their own units, e.g.
                         gainDb=0.05,phaseDeg=0.1,dcI=0.001,dcQ=0.001: every setting asked for lies on the grid
  --target DB            stop a null once the fit puts it this many dB down
  --noise DB             standard deviation of one reading, dB (default 0.5)
  --floor DBC            the analyzer's floor, dBc, if known (otherwise estimated from the readings)
  --preset NAME          ${Object.keys(TOLERANCE_PRESETS).join(' | ')} (simulate; default homebrew-bench)
  --device-seed N        device to draw (simulate; default ${HOMEBREW_BENCH_SEED}: about 34 dB carrier, 44 dB sideband)
  --tolerance K=V,...    override preset tolerances, e.g. resistorPct=1,offsetMv=5 (simulate)
  --seed N               analyzer noise seed (simulate; default 1)
  --outliers RATE        share of readings 10 dB off (simulate; default 0)
  --profile FILE         write the calibration profile (JSON)
  --header FILE          write the profile as a C header
  --format F             table (default) | json
  -h, --help             this help
`;

const OPTIONS = {
  simulate: { type: 'boolean' },
  prompt: { type: 'boolean' },
  'measure-command': { type: 'string' },
  what: { type: 'string' },
  together: { type: 'boolean' },
  tone: { type: 'string' },
  rate: { type: 'string' },
  network: { type: 'string' },
  'tone-amplitude': { type: 'string' },
  'max-readings': { type: 'string' },
  target: { type: 'string' },
  noise: { type: 'string' },
  floor: { type: 'string' },
  preset: { type: 'string' },
  'device-seed': { type: 'string' },
  tolerance: { type: 'string' },
  steps: { type: 'string' },
  seed: { type: 'string' },
  outliers: { type: 'string' },
  profile: { type: 'string' },
  header: { type: 'string' },
  format: { type: 'string' },
  help: { type: 'boolean', short: 'h' },
} as const;

type Quantity = 'sideband' | 'carrier';

/**
 * Parses `--tolerance resistorPct=1,offsetMv=5` over a preset (units as the preset's fields: %, mV,
 * V, bits, dBFS, seconds, dB). Ranges are checked later, by `validateTolerance`.
 * @throws {UsageError} for a part that is not KEY=VALUE with a known KEY, or a value that is not a
 *   number (except `distribution`, taken as text).
 */
export function parseTolerance(text: string | undefined, base: Readonly<TolerancePreset>): TolerancePreset {
  const t: TolerancePreset = { ...base };
  if (!text) return t;
  for (const part of text.split(',')) {
    const [k, v] = part.split('=');
    if (!k || v === undefined || !(k in base)) {
      throw new UsageError(
        `--tolerance ${JSON.stringify(part)} must be KEY=VALUE with KEY one of ${Object.keys(base).join(', ')}`,
      );
    }
    if (k === 'distribution') (t as unknown as Record<string, unknown>)[k] = v;
    else (t as unknown as Record<string, number>)[k] = numberOpt(`tolerance ${k}`, v)!;
  }
  return t;
}

/**
 * Parses `--steps gainDb=0.05,phaseDeg=0.1,dcI=0.001,dcQ=0.001` (dB, degrees, full scale).
 * Ranges are checked by `validateHardware`.
 * @throws {UsageError} for a part that is not KEY=VALUE with KEY a trim, or a value that is not a number.
 */
export function parseSteps(text: string | undefined): Partial<Record<TrimName, number>> {
  const out: Partial<Record<TrimName, number>> = {};
  if (!text) return out;
  const names: readonly TrimName[] = ['gainDb', 'phaseDeg', 'dcI', 'dcQ'];
  for (const part of text.split(',')) {
    const [k, x] = part.split('=');
    if (!k || x === undefined || !(names as readonly string[]).includes(k)) {
      throw new UsageError(
        `--steps ${JSON.stringify(part)} must be KEY=VALUE with KEY one of ${names.join(', ')}`,
      );
    }
    out[k as TrimName] = numberOpt(`steps ${k}`, x)!;
  }
  return out;
}

const fmtTrims = (q: Quantity, t: Trims): string =>
  q === 'sideband'
    ? `gain ${t.gainDb >= 0 ? '+' : ''}${t.gainDb.toFixed(4)} dB, phase ${t.phaseDeg >= 0 ? '+' : ''}${t.phaseDeg.toFixed(4)}°`
    : `dcI ${t.dcI >= 0 ? '+' : ''}${t.dcI.toFixed(6)}, dcQ ${t.dcQ >= 0 ? '+' : ''}${t.dcQ.toFixed(6)}`;

/**
 * Reads `count` levels from a person on one line (numbers in dB, a `dB`/`dBc` after each allowed,
 * separated by spaces or commas); resolves to the numbers, or 'retry' | 'undo' | 'quit'.
 */
async function askLevels(
  rl: ReturnType<typeof createInterface>,
  question: string,
  count: number,
): Promise<number[] | 'retry' | 'undo' | 'quit'> {
  for (;;) {
    let line: string;
    try {
      line = (await rl.question(question)).trim().toLowerCase();
    } catch {
      return 'quit'; // input closed
    }
    if (line === 'retry' || line === 'undo' || line === 'quit') return line;
    const parts = line
      .replace(/(\d)\s*dbc?\b/g, '$1 ')
      .split(/[\s,;]+/)
      .filter((x) => x !== '');
    const xs = parts.map(Number);
    if (xs.length === count && xs.every(Number.isFinite)) return xs;
    const want =
      count === 1
        ? 'a number in dB (e.g. -42.5)'
        : 'the sideband and the carrier level in dB (e.g. -43.5 -27.9)';
    process.stdout.write(
      `  '${line}' is not ${count === 1 ? 'a level' : 'two levels'}: type ${want}, retry, undo or quit\n`,
    );
  }
}

/** Reads one level from a person; resolves to a number, or 'retry' | 'undo' | 'quit'. */
async function ask(
  rl: ReturnType<typeof createInterface>,
  question: string,
): Promise<number | 'retry' | 'undo' | 'quit'> {
  const a = await askLevels(rl, question, 1);
  return typeof a === 'string' ? a : a[0]!;
}

const fmtAll = (t: Trims): string => `${fmtTrims('sideband', t)}, ${fmtTrims('carrier', t)}`;

/**
 * Runs a combined calibration (both levels from each reading) by prompting a person, with retry,
 * undo and quit.
 */
async function promptBothLoop(
  core: CombinedSeeker,
  maxReadings: number,
  toneHz: number,
  rl: ReturnType<typeof createInterface>,
): Promise<void> {
  for (;;) {
    const t = core.next();
    if (!t) return;
    const n = core.count + 1;
    process.stdout.write(`\n[reading ${n} of at most ${maxReadings}] set ${fmtAll(t)}\n`);
    const a = await askLevels(
      rl,
      `  sideband and carrier levels at ${toneHz} Hz, dB, e.g. -43.5 -27.9 (retry | undo | quit): `,
      2,
    );
    if (a === 'retry') continue;
    if (a === 'quit') {
      core.stop('aborted');
      return;
    }
    if (a === 'undo') {
      if (core.count === 0) process.stdout.write('  nothing to undo\n');
      else {
        core.undo();
        process.stdout.write(`  dropped reading ${n - 1}\n`);
      }
      continue;
    }
    core.tell({ sidebandDb: a[0]!, carrierDb: a[1]! });
    const b = core.best();
    process.stdout.write(
      `  best so far: ${fmtAll(b.trims)} (sideband ${b.sidebandDb.toFixed(1)} dB, carrier ${b.carrierDb.toFixed(1)} dB)\n`,
    );
  }
}

/** Runs a seeker by prompting a person, with retry and undo. */
async function promptLoop(
  seeker: NullSeeker,
  axes: TrimAxes,
  start: Trims,
  q: Quantity,
  toneHz: number,
  rl: ReturnType<typeof createInterface>,
): Promise<void> {
  for (;;) {
    const p = seeker.next();
    if (!p) return;
    const t = axes.toTrims(p, start);
    const n = seeker.count + 1;
    process.stdout.write(
      `\n[${q} reading ${n} of at most ${seeker.options.maxReadings}] set ${fmtTrims(q, t)}\n`,
    );
    const a = await ask(rl, `  ${q} level at ${toneHz} Hz, dB (retry | undo | quit): `);
    if (a === 'retry') continue;
    if (a === 'quit') {
      seeker.stop('aborted');
      return;
    }
    if (a === 'undo') {
      if (seeker.count === 0) process.stdout.write('  nothing to undo\n');
      else {
        seeker.undo();
        process.stdout.write(`  dropped reading ${n - 1}\n`);
      }
      continue;
    }
    seeker.tell(p, a);
    const b = seeker.best();
    process.stdout.write(
      `  best so far: ${fmtTrims(q, axes.toTrims(b.point, start))} (${b.levelDb.toFixed(1)} dB, ${b.source})\n`,
    );
  }
}

/**
 * Reads and validates a network document file.
 * @throws {UsageError} when the file cannot be read; {OrthotoneError} INVALID_DOCUMENT when it is
 *   not a network document.
 */
async function readNetwork(file: string): Promise<Network> {
  let text: string;
  try {
    text = await readFile(file, 'utf8');
  } catch (e) {
    throw new UsageError(`cannot read ${file}: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`);
  }
  try {
    return parseNetworkJson(text);
  } catch (e) {
    if (e instanceof OrthotoneError) {
      throw new UsageError(`--network ${file} is not a valid network document: ${e.message}`);
    }
    throw e;
  }
}

/** Runs a shell command and parses the first `count` numbers it prints. */
function commandReadings(cmd: string, env: Record<string, string>, count: number): Promise<number[]> {
  return new Promise((resolve, reject) => {
    exec(cmd, { env: { ...process.env, ...env }, timeout: 120_000 }, (err, stdout) => {
      if (err) return reject(new Error(`measure command failed: ${err.message.split('\n')[0]}`));
      const m = stdout.match(/[-+]?\d+(\.\d+)?([eE][-+]?\d+)?/g) ?? [];
      if (m.length < count) {
        return reject(
          new Error(
            `measure command printed ${m.length === 0 ? 'no number' : `${m.length} number(s), not ${count}`}: ${JSON.stringify(stdout.slice(0, 80))}`,
          ),
        );
      }
      resolve(m.slice(0, count).map(Number));
    });
  });
}

/** Runs a shell command and parses the first number it prints. */
async function commandReading(cmd: string, env: Record<string, string>): Promise<number> {
  return (await commandReadings(cmd, env, 1))[0]!;
}

const trimEnv = (t: Trims): Record<string, string> => ({
  OT_GAIN_DB: String(t.gainDb),
  OT_PHASE_DEG: String(t.phaseDeg),
  OT_DC_I: String(t.dcI),
  OT_DC_Q: String(t.dcQ),
});

interface RunOut {
  q: Quantity;
  result: TrimCalibrationResult;
  trueStartDb?: number;
  trueEndDb?: number;
}

/**
 * `orthotone calibrate` entry point; returns the exit status.
 * @throws {UsageError} for bad or conflicting options or an unreadable network file;
 *   OrthotoneError INVALID_ARGUMENT for calibration or simulator settings the library refuses,
 *   INVALID_DOCUMENT for a profile that fails validation. A failed reading never throws (the run stops with a reason);
 *   a Node file-system error when an output file cannot be written. The CLI's `main` (through
 *   `runGuarded`) turns UsageError and OrthotoneError into one line on stderr and exit status 2.
 */
export async function run(argv: string[]): Promise<number> {
  const { values: v } = parseCommand(argv, OPTIONS);
  if (v.help) {
    process.stdout.write(HELP);
    return 0;
  }
  const modes = [v.simulate, v.prompt, v['measure-command'] !== undefined].filter(Boolean).length;
  if (modes !== 1) {
    throw new UsageError('calibrate needs exactly one of --simulate, --prompt or --measure-command CMD');
  }
  const what = choiceOpt('what', v.what, ['sideband', 'carrier', 'both'], 'both');
  const format = choiceOpt('format', v.format, ['table', 'json'], 'table');
  const together = v.together === true;
  if (together && what !== 'both') {
    throw new UsageError(
      `--together reads the sideband and the carrier at each step: use it with --what both, not ${what}`,
    );
  }
  const toneHz = numberOpt('tone', v.tone ?? '1000')!;
  const toneAmplitude = numberOpt('tone-amplitude', v['tone-amplitude']);
  const maxReadings = numberOpt('max-readings', v['max-readings'] ?? '16')!;
  const targetDb = numberOpt('target', v.target);
  const noiseDb = numberOpt('noise', v.noise ?? '0.5')!;
  const floorDb = numberOpt('floor', v.floor);
  const hw: HardwareTrimOptions = { steps: parseSteps(v.steps as string | undefined) };
  validateHardware(hw, ZERO_TRIMS);
  const axesFor = (q: Quantity): TrimAxes =>
    q === 'sideband' ? sidebandAxes(hw) : carrierAxes(toneAmplitude, hw);
  const network = typeof v.network === 'string' ? await readNetwork(v.network) : undefined;
  const givenRate = numberOpt('rate', v.rate);
  if (givenRate !== undefined) requireSampleRate(givenRate);
  if (network && givenRate !== undefined && givenRate !== network.sampleRate) {
    throw new UsageError(
      `--rate ${givenRate} Hz disagrees with the network ${v.network as string}, designed for ${network.sampleRate} Hz: drop --rate or give the network's rate`,
    );
  }
  const sampleRate = network?.sampleRate ?? givenRate ?? 48000;
  if (!(toneHz > 0 && toneHz < sampleRate / 2)) {
    throw new UsageError(
      `--tone ${toneHz} Hz must lie below the Nyquist frequency ${sampleRate / 2} Hz of the ${sampleRate} Hz rate`,
    );
  }
  const out = (s: string): void => {
    if (format === 'table') process.stdout.write(s);
  };
  out(`${cautionsText()}\n\n`);
  if (network && (toneHz < network.band[0] || toneHz > network.band[1])) {
    out(
      `note: the ${toneHz} Hz tone lies outside the network's band ${network.band[0]}-${network.band[1]} Hz: the trims found there may not hold in the band\n`,
    );
  }

  let exciter: VirtualExciter | undefined;
  let analyzer: ReturnType<typeof createAnalyzer> | undefined;
  const simAmplitude = toneAmplitude ?? 0.5;
  if (v.simulate) {
    const presetName = (v.preset ?? 'homebrew-bench') as string;
    const preset = lookupOpt('preset', presetName, TOLERANCE_PRESETS, 'homebrew-bench');
    const tol = parseTolerance(v.tolerance as string | undefined, preset);
    const deviceSeed = numberOpt('device-seed', v['device-seed'] ?? String(HOMEBREW_BENCH_SEED))!;
    const seed = numberOpt('seed', v.seed ?? '1')!;
    exciter = createVirtualExciter(drawDevice(tol, deviceSeed), { sampleRate, seed });
    analyzer = createAnalyzer(exciter, {
      seed,
      floorDbc: floorDb ?? -70,
      noiseDb,
      outlierRate: numberOpt('outliers', v.outliers ?? '0')!,
    });
    out(
      `virtual exciter: preset ${presetName}, device ${deviceSeed}; analyzer floor ${floorDb ?? -70} dBc, noise ${noiseDb} dB, seed ${seed}; tone ${toneHz} Hz at ${simAmplitude} of full scale${toneAmplitude === undefined ? ' (not told to the calibration)' : ''}\n`,
    );
  }
  const rl = v.prompt
    ? createInterface({ input: process.stdin, output: process.stdout, terminal: false })
    : undefined;
  if (rl) {
    out(
      'Play a single tone at the test frequency into the exciter, into a dummy load, and read the\nunwanted sideband (or the carrier) relative to the wanted tone on your analyzer, in dBc.\n',
    );
  }

  const quantities: Quantity[] = what === 'both' ? ['sideband', 'carrier'] : [what as Quantity];
  const runs: RunOut[] = [];
  let current: Trims = { ...ZERO_TRIMS };
  let sharedReadings: number | undefined;
  try {
    if (together) {
      const core = createCombinedSeeker({
        ...hw,
        noiseDb,
        maxReadings,
        ...(targetDb !== undefined ? { targetDb } : {}),
        ...(floorDb !== undefined ? { floorDb } : {}),
        ...(toneAmplitude !== undefined ? { toneAmplitude } : {}),
      });
      out('\n== sideband and carrier nulls together: gain, phase, dcI and dcQ trims ==\n');
      let lastError: unknown;
      if (rl) await promptBothLoop(core, maxReadings, toneHz, rl);
      else {
        for (let t = core.next(); t; t = core.next()) {
          let levels: BothLevels;
          let error: unknown;
          try {
            if (analyzer) {
              const r = analyzer.readBoth(toneHz, t, simAmplitude);
              levels = { sidebandDb: r.sidebandDbc, carrierDb: r.carrierDbc };
            } else {
              const [a, b] = await commandReadings(
                v['measure-command'] as string,
                { OT_QUANTITY: 'both', OT_TONE_HZ: String(toneHz), ...trimEnv(t) },
                2,
              );
              levels = { sidebandDb: a!, carrierDb: b! };
            }
          } catch (e) {
            error = e;
            lastError = e;
            levels = { sidebandDb: Number.NaN, carrierDb: Number.NaN };
            out(`  reading ${core.count + 1} failed: ${(e as Error)?.message ?? 'no value'}\n`);
          }
          core.tell(levels, error);
        }
      }
      const res = core.result(lastError);
      const table: string[][] = [['#', 'setting', 'sideband dB', 'carrier dB']];
      res.sideband.history.forEach((h, k) => {
        const c = res.carrier.history[k]!.levelDb;
        const f = (x: number) => (Number.isFinite(x) ? x.toFixed(2) : 'failed');
        table.push([String(h.index), fmtAll(h.trims), f(h.levelDb), f(c)]);
      });
      out(formatTable(table));
      for (const [q, result] of [
        ['sideband', res.sideband],
        ['carrier', res.carrier],
      ] as const) {
        const ro: RunOut = { q, result };
        if (exciter) {
          const pick = (t: Trims) => {
            const r = exciter!.response(toneHz, t, simAmplitude);
            return -(q === 'sideband' ? r.unwantedDbc : r.carrierDbc);
          };
          ro.trueStartDb = pick(ZERO_TRIMS);
          ro.trueEndDb = pick(res.trims);
        }
        runs.push(ro);
        out(`stop (${q}): ${result.stopReason}; result ${fmtTrims(q, result.trims)}\n`);
        for (const d of result.diagnosis) out(`note [${d.code}]: ${d.message}\n`);
      }
      current = res.trims;
      sharedReadings = res.readings;
    }
    for (const q of together ? [] : quantities) {
      const axes = axesFor(q);
      const { seeker, start } = seekerFor(
        {
          ...hw,
          measure: () => 0,
          start: current,
          noiseDb,
          maxReadings,
          ...(targetDb !== undefined ? { targetDb } : {}),
          ...(floorDb !== undefined ? { floorDb } : {}),
        },
        axes,
      );
      out(`\n== ${q} null: ${axes.names.join(' and ')} trims ==\n`);
      if (rl) {
        await promptLoop(seeker, axes, start, q, toneHz, rl);
      } else {
        const measure = async (p: [number, number]): Promise<number> => {
          const t = axes.toTrims(p, start);
          if (analyzer) {
            return q === 'sideband'
              ? analyzer.readSideband(toneHz, t, simAmplitude)
              : analyzer.readCarrier(toneHz, t, simAmplitude);
          }
          return commandReading(v['measure-command'] as string, {
            OT_QUANTITY: q,
            OT_TONE_HZ: String(toneHz),
            ...trimEnv(t),
          });
        };
        await runNullSeeker(seeker, measure, {
          onReading: (r) => {
            if (Number.isNaN(r.db))
              out(`  reading ${r.index} failed: ${(r.error as Error)?.message ?? 'no value'}\n`);
          },
        });
      }
      const result = resultOf(seeker, axes, start, [], undefined);
      const table: string[][] = [['#', 'role', 'setting', 'read dB', 'weight']];
      seeker.readings().forEach((r, k) => {
        table.push([
          String(k + 1),
          r.role,
          fmtTrims(q, axes.toTrims(r.point, start)),
          Number.isFinite(r.db) ? r.db.toFixed(2) : 'failed',
          r.weight === undefined ? '' : r.weight.toFixed(2),
        ]);
      });
      out(formatTable(table));
      const ro: RunOut = { q, result };
      if (exciter) {
        const pick = (t: Trims) => {
          const r = exciter!.response(toneHz, t, simAmplitude);
          return -(q === 'sideband' ? r.unwantedDbc : r.carrierDbc);
        };
        ro.trueStartDb = pick(start);
        ro.trueEndDb = pick(result.trims);
      }
      runs.push(ro);
      current = result.trims;
      out(`stop: ${result.stopReason}; result ${fmtTrims(q, result.trims)}\n`);
      for (const d of result.diagnosis) out(`note [${d.code}]: ${d.message}\n`);
    }
  } finally {
    rl?.close();
  }

  const summary: string[][] = [
    [
      'null',
      'start read dB',
      'end dB (fit)',
      'readings',
      'stop',
      ...(exciter ? ['true start dB', 'true end dB'] : []),
    ],
  ];
  for (const r of runs) {
    summary.push([
      r.q,
      r.result.startLevelDb.toFixed(1),
      r.result.levelDb.toFixed(1),
      String(r.result.readings),
      r.result.stopReason,
      ...(exciter ? [`${r.trueStartDb!.toFixed(1)} down`, `${r.trueEndDb!.toFixed(1)} down`] : []),
    ]);
  }
  out(
    `\nresult (levels as read, dBc${exciter ? `; "true" = the virtual exciter's noiseless response` : ''})\n${formatTable(summary)}`,
  );
  out(
    `trims: gainDb ${current.gainDb.toFixed(5)}, phaseDeg ${current.phaseDeg.toFixed(5)}, dcI ${current.dcI.toExponential(4)}, dcQ ${current.dcQ.toExponential(4)}\n`,
  );

  const readings: ProfileReading[] = runs.flatMap((r) =>
    together
      ? r.result.history.map((h) => ({
          quantity: r.q,
          trims: h.trims,
          levelDb: Number.isFinite(h.levelDb) ? h.levelDb : null,
        }))
      : r.result.state.readings.map((x) => ({
          quantity: r.q,
          trims: axesFor(r.q).toTrims(x.point, ZERO_TRIMS),
          levelDb: x.db,
        })),
  );
  const sb = runs.find((r) => r.q === 'sideband');
  const cr = runs.find((r) => r.q === 'carrier');
  const results = exciter
    ? {
        ...(sb ? { sidebandDb: sb.trueEndDb! } : {}),
        ...(cr ? { carrierDb: cr.trueEndDb! } : {}),
        readingsUsed: sharedReadings ?? runs.reduce((s, r) => s + r.result.readings, 0),
        source: 'simulated' as const,
      }
    : {
        ...(sb ? { sidebandDb: -sb.result.levelDb } : {}),
        ...(cr ? { carrierDb: -cr.result.levelDb } : {}),
        readingsUsed: sharedReadings ?? runs.reduce((s, r) => s + r.result.readings, 0),
        source: 'fit' as const,
      };
  const profile = createProfile({
    sampleRate,
    toneHz,
    trims: current,
    readings,
    results,
    ...(network ? { network } : {}),
  });
  if (v.profile) {
    await writeFile(v.profile as string, profileToJson(profile));
    out(`wrote profile ${v.profile}\n`);
  }
  if (v.header) {
    await writeFile(v.header as string, profileToCHeader(profile));
    out(`wrote C header ${v.header}\n`);
  }
  if (format === 'json') {
    const diag: Diagnosis[] = runs.flatMap((r) => r.result.diagnosis);
    process.stdout.write(
      `${JSON.stringify(
        {
          trims: current,
          runs: runs.map((r) => ({
            quantity: r.q,
            readings: r.result.readings,
            startLevelDb: r.result.startLevelDb,
            levelDb: r.result.levelDb,
            stopReason: r.result.stopReason,
            ...(r.trueEndDb !== undefined ? { trueStartDb: r.trueStartDb, trueEndDb: r.trueEndDb } : {}),
          })),
          diagnosis: diag,
          profile,
        },
        null,
        2,
      )}\n`,
    );
  }
  out(`\n${cautionsText()}\n`);
  return 0;
}
