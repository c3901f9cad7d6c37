/**
 * `orthotone calibrate`: null the unwanted sideband (gain and phase trims) and the carrier (DC
 * trims) from level readings — taken from a virtual exciter (`--simulate`), typed by a person off
 * an analyzer (`--prompt`), or printed by a command (`--measure-command`). Prints a convergence
 * table and the resulting suppression; writes a profile and a C header on request.
 */
import { accessSync, constants as fsConstants, statSync } from 'node:fs';
import { readFile } from 'node:fs/promises';
import { dirname, resolve } from 'node:path';
import { carrierAxes } from '../calibrate/carrier.js';
import { createCombinedSeeker } from '../calibrate/combined.js';
import type { Diagnosis } from '../calibrate/diagnosis.js';
import { calibrateMultitone, equivalentTrims } from '../calibrate/multitone.js';
import { createProfile, type ProfileReading } from '../calibrate/profile.js';
import {
  mapSource,
  type ReadingSource,
  runSession,
  type SavedSeeker,
  type Seeker,
  type TrimApplier,
} from '../calibrate/session.js';
import { sidebandAxes } from '../calibrate/sideband.js';
import {
  createTrimSeeker,
  type HardwareTrimOptions,
  resultOf,
  seekerFor,
  stepsOf,
  type TrimAxes,
  type TrimCalibrationResult,
  type TrimName,
  validateHardware,
} from '../calibrate/trim-calibration.js';
import { cautionsText } from '../core/cautions.js';
import { isOrthotoneError, OrthotoneError } from '../core/errors.js';
import { type Correction, type Trims, ZERO_TRIMS } from '../core/trims.js';
import { requireSampleRate } from '../core/validate.js';
import type { Network } from '../design/network.js';
import { parseNetworkJson } from '../export/network-json.js';
import { profileToCHeader } from '../export/profile-header.js';
import { profileToJson } from '../export/profile-json.js';
import { convergenceToSvg } from '../export/svg-plot.js';
import { assertDistinctFiles, writeFileAtomic } from '../node/files.js';
import { createAnalyzer } from '../simulate/analyzer.js';
import { createVirtualExciter, type VirtualExciter } from '../simulate/exciter.js';
import {
  drawDevice,
  HOMEBREW_BENCH_SEED,
  TOLERANCE_PRESETS,
  type TolerancePreset,
} from '../simulate/model.js';
import { choiceOpt, lookupOpt, numberOpt, parseCommand, UsageError } from './args.js';
import { commandSource, lineInput, promptSource } from './calibrate-sources.js';
import { createProgress } from './progress.js';
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
                         reading) or 'quit' (stop, keep the best so far, write the profile).
                         Answers may come from a pipe or a file; end of input ends the run
                         like 'quit'. A first level at or above 0 dB asks for confirmation
  --measure-command CMD  runs CMD (in a shell) for each reading with the trims in OT_GAIN_DB,
                         OT_PHASE_DEG, OT_DC_I, OT_DC_Q and what to read in OT_QUANTITY
                         (sideband | carrier), OT_TONE_HZ; CMD prints one level in dB (a decimal
                         number, 'dB' after it allowed) and exits 0. It runs in its own process
                         group, killed whole on --timeout and on Ctrl-C

  --device PATH          set each reading's trims on a device over the link protocol (a serial
                         port, or firmware/virtual-device's pty), confirm them by read-back and
                         wait --settle MS (default 200, at least the device's ramp) before the
                         reading; the best trims are left on the device at the end. The levels
                         still come from one of the three above. --device-timeout MS: one answer
                         (default 1000); --device-reconnect MS: how long to wait for a device that
                         went away (default 5000) before ending the run with the best so far

options:
  --what W               sideband | carrier | both (default both: sideband first, then carrier)
                         | band: across the band, a correction filter on Q from readings of
                         several tones at once (--tones); --prompt asks one level per tone,
                         --measure-command gets OT_QUANTITY=band and OT_TONES_HZ and prints one
                         level per tone
  --tones HZ,...         tones of --what band (default 5 tones spread over --band)
  --band LO:HI           band of the correction, Hz (default the network's, else 300:3000)
  --taps N               correction length, odd (default 31)
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
  --session FILE         save the session after every reading (to continue it with --resume)
  --plot FILE.svg        draw the convergence: each reading and the best so far, per null
  --resume FILE          continue a session saved with --session (same --what, --together, --tone)
  --timeout S            time allowed for one reading, seconds (default 60); three failed
                         readings in a row end the null

exit status: 0 done; 2 bad options; 3 cut short (quit, end of input, failing readings: the best
trims so far are kept and the profile written, its note says which nulls are unfinished); 130 Ctrl-C.
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
  plot: { type: 'string' },
  session: { type: 'string' },
  tones: { type: 'string' },
  band: { type: 'string' },
  taps: { type: 'string' },
  resume: { type: 'string' },
  timeout: { type: 'string' },
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

const fmtAll = (t: Trims): string => `${fmtTrims('sideband', t)}, ${fmtTrims('carrier', t)}`;

/** Hooks for front ends that set the trims themselves (the device link's `calibrate --device`). */
export interface CalibrateExtras {
  /**
   * Sets the trims before each reading and returns those in force (e.g. a device over a serial
   * link, which confirms what it applied). Default: the reading source applies them.
   */
  applier?: TrimApplier;
  /** One line saying what applies the trims, printed before the first reading. */
  applierNote?: string;
  /**
   * Called with the final trims (the best so far when cut short) before the command returns.
   * @throws should not: an error ends the command after the profile is written.
   */
  onFinish?: (trims: Trims) => void;
}

/** What `--session` writes and `--resume` reads. */
interface SessionDocument {
  format: 'orthotone-calibrate-session';
  version: 1;
  what: 'sideband' | 'carrier' | 'both';
  together: boolean;
  toneHz: number;
  /** Saved seekers, by null ('sideband', 'carrier', or 'both' for --together). */
  nulls: Record<string, SavedSeeker>;
}

/**
 * Reads a session file written by `--session`.
 * @throws {UsageError} when it cannot be read or is not a saved calibrate session.
 */
async function readSession(file: string): Promise<SessionDocument> {
  let doc: SessionDocument;
  try {
    doc = JSON.parse(await readFile(file, 'utf8')) as SessionDocument;
  } catch (e) {
    throw new UsageError(
      `--resume ${file} cannot be read: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`,
    );
  }
  if (doc?.format !== 'orthotone-calibrate-session' || doc.version !== 1 || typeof doc.nulls !== 'object') {
    throw new UsageError(
      `--resume ${file} is not a session written by 'calibrate --session': give that file`,
    );
  }
  return doc;
}

/**
 * Refuses an output path that cannot be written (missing folder, a folder, no permission), before any
 * reading is taken.
 * @throws {UsageError} naming the option, the path and the fix.
 */
function checkWritable(option: string, path: string | undefined): void {
  if (path === undefined) return;
  const dir = dirname(resolve(path));
  try {
    if (!statSync(dir).isDirectory()) throw new Error('not a folder');
    accessSync(dir, fsConstants.W_OK);
  } catch {
    throw new UsageError(
      `--${option} ${path}: cannot write into ${dir} (missing or not writable): choose a writable folder`,
    );
  }
  try {
    if (statSync(path).isDirectory())
      throw new UsageError(`--${option} ${path} is a folder: give a file name`);
  } catch (e) {
    if (e instanceof UsageError) throw e;
  }
}

/**
 * Parses a seed option: an integer 0…2³²−1.
 * @throws {UsageError} naming the option and the range.
 */
function seedOpt(name: string, v: unknown, fallback: number): number {
  const x = numberOpt(name, v ?? String(fallback))!;
  if (!(Number.isInteger(x) && x >= 0 && x <= 0xffffffff)) {
    throw new UsageError(`--${name} ${String(v)} must be a whole number from 0 to 4294967295`);
  }
  return x;
}

interface RunOut {
  q: Quantity;
  result: TrimCalibrationResult;
  trueStartDb?: number;
  trueEndDb?: number;
}

/**
 * `orthotone calibrate` entry point; returns the exit status: 0 when every null finished, 3 when the
 * run was cut short (quit, end of input, readings that kept failing: the best so far is kept and
 * written), 130 on Ctrl-C (likewise kept and written).
 * @param argv the command's arguments.
 * @param extras a trim applier for front ends that set the trims themselves (`calibrate --device`).
 * @throws {UsageError} for bad or conflicting options, an unreadable network or session file or an
 *   output that cannot be written (checked before the first reading); OrthotoneError
 *   INVALID_ARGUMENT for calibration or simulator settings the library refuses, OUTPUT_IS_INPUT,
 *   WRITE_FAILED. A failed reading never throws (the run stops with a reason). The CLI's `main`
 *   (through `runGuarded`) turns UsageError and OrthotoneError into one line on stderr and exit 2.
 */
export async function run(argv: string[], extras: CalibrateExtras = {}): Promise<number> {
  // --device PATH (issue 11): src/cli/device.ts opens the link and calls back here with its applier.
  if (!extras.applier && argv.some((a) => a === '--device' || a.startsWith('--device='))) {
    return (await import('./device.js')).calibrateOnDevice(argv, run);
  }
  const { values: v } = parseCommand(argv, OPTIONS);
  if (v.help) {
    process.stdout.write(HELP);
    return 0;
  }
  const modes = [v.simulate, v.prompt, v['measure-command'] !== undefined].filter(Boolean).length;
  if (modes !== 1) {
    throw new UsageError('calibrate needs exactly one of --simulate, --prompt or --measure-command CMD');
  }
  const what = choiceOpt('what', v.what, ['sideband', 'carrier', 'both', 'band'], 'both');
  const format = choiceOpt('format', v.format, ['table', 'json'], 'table');
  const together = v.together === true;
  if (what === 'band' && (v.resume !== undefined || v.session !== undefined)) {
    throw new UsageError('--what band does not save sessions yet: drop --session and --resume');
  }
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
  const timeoutSeconds = numberOpt('timeout', v.timeout ?? '60')!;
  if (!(timeoutSeconds > 0 && timeoutSeconds <= 86_400)) {
    throw new UsageError(`--timeout ${timeoutSeconds} must be a time in seconds above 0 (at most 86400)`);
  }
  const hw: HardwareTrimOptions = { steps: parseSteps(v.steps as string | undefined) };
  validateHardware(hw, ZERO_TRIMS);
  const axesFor = (q: Quantity): TrimAxes =>
    q === 'sideband' ? sidebandAxes(hw) : carrierAxes(toneAmplitude, hw);
  const files = {
    network: v.network as string | undefined,
    resume: v.resume as string | undefined,
    profile: v.profile as string | undefined,
    header: v.header as string | undefined,
    session: v.session as string | undefined,
    plot: v.plot as string | undefined,
  };
  assertDistinctFiles(
    [
      ['--network', files.network],
      ['--resume', files.resume],
    ],
    [
      ['--profile', files.profile],
      ['--header', files.header],
      ['--session', files.session],
      ['--plot', files.plot],
    ],
  );
  checkWritable('profile', files.profile);
  checkWritable('header', files.header);
  checkWritable('session', files.session);
  checkWritable('plot', files.plot);
  const network = files.network !== undefined ? await readNetwork(files.network) : undefined;
  const resumed = files.resume !== undefined ? await readSession(files.resume) : undefined;
  if (resumed && (resumed.what !== what || resumed.together !== together || resumed.toneHz !== toneHz)) {
    throw new UsageError(
      `--resume ${files.resume} was saved for --what ${resumed.what}${resumed.together ? ' --together' : ''} --tone ${resumed.toneHz}: give the same options`,
    );
  }
  const givenRate = numberOpt('rate', v.rate);
  if (givenRate !== undefined) requireSampleRate(givenRate);
  if (network && givenRate !== undefined && givenRate !== network.sampleRate) {
    throw new UsageError(
      `--rate ${givenRate} Hz disagrees with the network ${files.network}, designed for ${network.sampleRate} Hz: drop --rate or give the network's rate`,
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

  let exciter: VirtualExciter | undefined;
  let analyzer: ReturnType<typeof createAnalyzer> | undefined;
  const simAmplitude = toneAmplitude ?? 0.5;
  let simNote = '';
  if (v.simulate) {
    const presetName = (v.preset ?? 'homebrew-bench') as string;
    const preset = lookupOpt('preset', presetName, TOLERANCE_PRESETS, 'homebrew-bench');
    const tol = parseTolerance(v.tolerance as string | undefined, preset);
    const deviceSeed = seedOpt('device-seed', v['device-seed'], HOMEBREW_BENCH_SEED);
    const seed = seedOpt('seed', v.seed, 1);
    exciter = createVirtualExciter(drawDevice(tol, deviceSeed), { sampleRate, seed });
    analyzer = createAnalyzer(exciter, {
      seed,
      floorDbc: floorDb ?? -70,
      noiseDb,
      outlierRate: numberOpt('outliers', v.outliers ?? '0')!,
    });
    simNote = `virtual exciter: preset ${presetName}, device ${deviceSeed}; analyzer floor ${floorDb ?? -70} dBc, noise ${noiseDb} dB, seed ${seed}; tone ${toneHz} Hz at ${simAmplitude} of full scale${toneAmplitude === undefined ? ' (not told to the calibration)' : ''}\n`;
  }
  // The cautions once, before any reading (the trims may go to a transmitter); stderr under JSON.
  (format === 'json' ? process.stderr : process.stdout).write(`${cautionsText()}\n\n`);
  if (network && (toneHz < network.band[0] || toneHz > network.band[1])) {
    out(
      `note: the ${toneHz} Hz tone lies outside the network's band ${network.band[0]}-${network.band[1]} Hz: the trims found there may not hold in the band\n`,
    );
  }
  out(simNote);
  if (extras.applierNote) out(`${extras.applierNote}\n`);
  const input = v.prompt ? lineInput(process.stdin) : undefined;
  if (input) {
    out(
      'Play a single tone at the test frequency into the exciter, into a dummy load, and read the\nunwanted sideband (or the carrier) relative to the wanted tone on your analyzer, in dBc\n(a level below the tone is negative: type -44 for a suppression of 44 dB).\n',
    );
  }
  // Ctrl-C: stop the reading in progress (a command's whole process group), keep the best so far.
  const ctl = new AbortController();
  let interrupted = false;
  const onSigint = (): void => {
    interrupted = true;
    ctl.abort(new OrthotoneError('ABORTED', 'interrupted (Ctrl-C)'));
  };
  process.on('SIGINT', onSigint);

  /** The reading source for one null (count 1) or both (count 2). */
  const sourceFor = (label: string, quantity: string, count: number, describe: (t: Trims) => string) => {
    if (analyzer) {
      const a = analyzer;
      return {
        read: (t: Trims) =>
          count === 2
            ? (() => {
                const r = a.readBoth(toneHz, t, simAmplitude);
                return [r.sidebandDbc, r.carrierDbc];
              })()
            : [
                quantity === 'sideband'
                  ? a.readSideband(toneHz, t, simAmplitude)
                  : a.readCarrier(toneHz, t, simAmplitude),
              ],
      };
    }
    if (input) {
      return promptSource({
        input,
        output: process.stdout,
        count,
        label,
        describe,
        applied: extras.applier !== undefined,
        question:
          count === 2
            ? `sideband and carrier levels at ${toneHz} Hz, dB, e.g. -43.5 -27.9`
            : `${quantity} level at ${toneHz} Hz, dB`,
      });
    }
    return commandSource({
      command: v['measure-command'] as string,
      env: { OT_QUANTITY: quantity, OT_TONE_HZ: String(toneHz) },
      count,
    });
  };
  const sessionOptions = {
    signal: ctl.signal,
    timeoutSeconds,
    maxReadings,
    ...(extras.applier ? { applier: extras.applier } : {}),
    onFailure: (e: unknown, index: number) =>
      out(`  reading ${index} failed: ${(e as Error)?.message ?? 'no value'}\n`),
    onUndo: (d: { index: number } | undefined) =>
      out(d ? `  dropped reading ${d.index}\n` : '  nothing to undo\n'),
  };
  if (what === 'band') {
    try {
      return await runBand({
        v,
        out,
        format,
        sampleRate,
        network,
        analyzer,
        exciter,
        simAmplitude,
        noiseDb,
        maxReadings,
        timeoutSeconds,
        signal: ctl.signal,
        input,
        files,
        extras,
        interrupted: () => interrupted,
      });
    } finally {
      input?.close();
      process.off('SIGINT', onSigint);
    }
  }
  const saved: Record<string, SavedSeeker> = { ...(resumed?.nulls ?? {}) };
  const saveSession = (key: string, s: Seeker<unknown>): void => {
    saved[key] = s.save();
    if (files.session) {
      const doc: SessionDocument = {
        format: 'orthotone-calibrate-session',
        version: 1,
        what,
        together,
        toneHz,
        nulls: saved,
      };
      writeFileAtomic(files.session, `${JSON.stringify(doc, null, 2)}\n`);
    }
  };

  const quantities: Quantity[] = what === 'both' ? ['sideband', 'carrier'] : [what as Quantity];
  const runs: RunOut[] = [];
  const profileReadings: ProfileReading[] = [];
  const unfinished: string[] = [];
  let cutShort: string | undefined;
  let current: Trims = { ...ZERO_TRIMS };
  let sharedReadings: number | undefined;
  const truth = (q: Quantity, t: Trims): number => {
    const r = exciter!.response(toneHz, t, simAmplitude);
    return -(q === 'sideband' ? r.unwantedDbc : r.carrierDbc);
  };
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
      if (resumed?.nulls.both) core.restore(resumed.nulls.both);
      out('\n== sideband and carrier nulls together: gain, phase, dcI and dcQ trims ==\n');
      if (core.count > 0) out(`resumed ${core.count} reading(s) from ${files.resume}\n`);
      const source = mapSource(sourceFor('reading', 'both', 2, fmtAll), (x: number[]) => ({
        sidebandDb: x[0]!,
        carrierDb: x[1]!,
      }));
      const session = await runSession(core, source, {
        ...sessionOptions,
        onReading: (h) => {
          saveSession('both', core);
          if (input) {
            const b = h.best;
            out(
              `  best so far: ${fmtAll(b.trims)} (sideband ${b.levels.sidebandDb.toFixed(1)} dB, carrier ${b.levels.carrierDb.toFixed(1)} dB)\n`,
            );
          }
        },
      });
      if (session.cutShort) {
        cutShort = session.cutShort;
        unfinished.push('sideband', 'carrier');
      }
      const res = core.result(session.lastError);
      const table: string[][] = [['#', 'setting', 'sideband dB', 'carrier dB']];
      res.sideband.history.forEach((h, k) => {
        const c = res.carrier.history[k]!.levelDb;
        const f = (x: number) => (Number.isFinite(x) ? x.toFixed(2) : 'failed');
        table.push([String(h.index), fmtAll(h.trims), f(h.levelDb), f(c)]);
        profileReadings.push(
          { quantity: 'sideband', trims: h.trims, levelDb: Number.isFinite(h.levelDb) ? h.levelDb : null },
          { quantity: 'carrier', trims: h.trims, levelDb: Number.isFinite(c) ? c : null },
        );
      });
      out(formatTable(table));
      for (const [q, result] of [
        ['sideband', res.sideband],
        ['carrier', res.carrier],
      ] as const) {
        const ro: RunOut = { q, result };
        if (exciter) {
          ro.trueStartDb = truth(q, ZERO_TRIMS);
          ro.trueEndDb = truth(q, res.trims);
        }
        runs.push(ro);
        out(`stop (${q}): ${result.stopReason}; result ${fmtTrims(q, result.trims)}\n`);
        for (const d of result.diagnosis) out(`note [${d.code}]: ${d.message}\n`);
      }
      current = res.trims;
      sharedReadings = res.readings;
    }
    for (const q of together ? [] : quantities) {
      if (cutShort) {
        unfinished.push(q);
        continue;
      }
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
      const ts = createTrimSeeker(seeker, axes, start);
      const saved0 = resumed?.nulls[q];
      if (saved0) ts.restore(saved0);
      const startTrims = ts.start;
      out(`\n== ${q} null: ${axes.names.join(' and ')} trims ==\n`);
      if (ts.count > 0) out(`resumed ${ts.count} reading(s) from ${files.resume}\n`);
      const history = (saved0?.readings ?? []).map((r, i) => ({
        index: i + 1,
        trims: r.trims,
        levels: typeof r.levels === 'number' ? r.levels : undefined,
        best: ts.best(),
      }));
      const source = mapSource(
        sourceFor(`${q} reading`, q, 1, (t) => fmtTrims(q, t)),
        (x: number[]) => x[0]!,
      );
      const session = ts.done
        ? { stopReason: ts.stopReason ?? 'budget', history }
        : await runSession(ts, source, {
            ...sessionOptions,
            history,
            onReading: (h) => {
              saveSession(q, ts);
              if (input && h.levels !== undefined) {
                const b = h.best;
                out(`  best so far: ${fmtTrims(q, b.trims)} (${b.levels.toFixed(1)} dB)\n`);
              }
            },
          });
      if ('cutShort' in session && session.cutShort) {
        cutShort = session.cutShort;
        unfinished.push(q);
      }
      const core = ts.core;
      const result = resultOf(
        core,
        axes,
        startTrims,
        stepsOf(core, session.history),
        (session as { lastError?: unknown }).lastError,
      );
      const table: string[][] = [['#', 'role', 'setting', 'read dB', 'weight']];
      const rs = core.readings();
      session.history.forEach((h, k) => {
        const r = rs[k];
        table.push([
          String(k + 1),
          r?.role ?? '',
          fmtTrims(q, h.trims),
          h.levels !== undefined ? h.levels.toFixed(2) : 'failed',
          r?.weight === undefined ? '' : r.weight.toFixed(2),
        ]);
        // The trims in force at each reading, exactly as the reading source saw them.
        profileReadings.push({ quantity: q, trims: h.trims, levelDb: h.levels ?? null });
      });
      out(formatTable(table));
      const ro: RunOut = { q, result };
      if (exciter) {
        ro.trueStartDb = truth(q, startTrims);
        ro.trueEndDb = truth(q, result.trims);
      }
      runs.push(ro);
      current = result.trims;
      out(`stop: ${result.stopReason}; result ${fmtTrims(q, result.trims)}\n`);
      for (const d of result.diagnosis) out(`note [${d.code}]: ${d.message}\n`);
    }
  } finally {
    input?.close();
    process.off('SIGINT', onSigint);
  }

  const fmt1 = (x: number | undefined): string =>
    x !== undefined && Number.isFinite(x) ? x.toFixed(1) : '-';
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
      fmt1(r.result.startLevelDb),
      fmt1(r.result.levelDb),
      String(r.result.readings),
      unfinished.includes(r.q) ? `${r.result.stopReason} (cut short)` : r.result.stopReason,
      ...(exciter ? [`${fmt1(r.trueStartDb)} down`, `${fmt1(r.trueEndDb)} down`] : []),
    ]);
  }
  out(
    `\nresult (levels as read, dBc${exciter ? `; "true" = the virtual exciter's noiseless response` : ''})\n${formatTable(summary)}`,
  );
  if (files.plot && runs.length > 0) {
    const plotRuns = runs.map((r) => ({ label: r.q, levelsDb: r.result.history.map((h) => h.levelDb) }));
    if (plotRuns.some((r) => r.levelsDb.some(Number.isFinite))) {
      writeFileAtomic(files.plot, convergenceToSvg(plotRuns));
      out(`wrote convergence plot ${files.plot}\n`);
    }
  }
  out(
    `trims: gainDb ${current.gainDb.toFixed(5)}, phaseDeg ${current.phaseDeg.toFixed(5)}, dcI ${current.dcI.toExponential(4)}, dcQ ${current.dcQ.toExponential(4)}\n`,
  );
  const why = interrupted
    ? 'interrupted (Ctrl-C)'
    : cutShort === 'end-of-input'
      ? 'input ended'
      : cutShort === 'quit'
        ? 'quit'
        : cutShort === 'failed'
          ? 'readings kept failing'
          : cutShort;
  const note = cutShort
    ? `cut short (${why}): ${unfinished.join(' and ')} null${unfinished.length > 1 ? 's' : ''} unfinished; trims are the best so far`
    : undefined;
  if (note) out(`${note}${files.session ? `; continue with --resume ${files.session}` : ''}\n`);

  const sb = runs.find((r) => r.q === 'sideband');
  const cr = runs.find((r) => r.q === 'carrier');
  const finite = (x: number | undefined): x is number => x !== undefined && Number.isFinite(x);
  const sbDb = exciter ? sb?.trueEndDb : sb ? -sb.result.levelDb : undefined;
  const crDb = exciter ? cr?.trueEndDb : cr ? -cr.result.levelDb : undefined;
  const results = {
    ...(finite(sbDb) ? { sidebandDb: sbDb } : {}),
    ...(finite(crDb) ? { carrierDb: crDb } : {}),
    readingsUsed: sharedReadings ?? runs.reduce((s, r) => s + r.result.readings, 0),
    source: exciter ? ('simulated' as const) : ('fit' as const),
  };
  const profile = createProfile({
    sampleRate,
    toneHz,
    trims: current,
    readings: profileReadings,
    results,
    ...(network ? { network } : {}),
    ...(note ? { note } : {}),
  });
  if (files.profile) {
    writeFileAtomic(files.profile, profileToJson(profile));
    out(`wrote profile ${files.profile}\n`);
  }
  if (files.header) {
    writeFileAtomic(files.header, profileToCHeader(profile));
    out(`wrote C header ${files.header}\n`);
  }
  if (format === 'json') {
    const diag: Diagnosis[] = runs.flatMap((r) => r.result.diagnosis);
    process.stdout.write(
      `${JSON.stringify(
        {
          trims: current,
          ...(cutShort ? { cutShort: why, unfinished } : {}),
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
  extras.onFinish?.(current);
  if (interrupted) return 130;
  return cutShort ? 3 : 0;
}

/** What {@link runBand} needs from `run`. */
interface BandContext {
  v: Record<string, unknown>;
  out: (s: string) => void;
  format: string;
  sampleRate: number;
  network: Network | undefined;
  analyzer: ReturnType<typeof createAnalyzer> | undefined;
  exciter: VirtualExciter | undefined;
  simAmplitude: number;
  noiseDb: number;
  maxReadings: number;
  timeoutSeconds: number;
  signal: AbortSignal;
  input: ReturnType<typeof lineInput> | undefined;
  files: { profile?: string | undefined; header?: string | undefined };
  extras: CalibrateExtras;
  interrupted: () => boolean;
}

/**
 * `calibrate --what band`: the multi-tone calibration (calibrateMultitone) with the CLI's reading
 * source; prints the per-tone nulls and the correction, writes the profile with the correction.
 * @returns the exit status (0 done, 3 cut short, 130 Ctrl-C).
 * @throws {UsageError} for bad --tones, --band or --taps.
 */
async function runBand(c: BandContext): Promise<number> {
  const { v, out, sampleRate } = c;
  const bandOpt = v.band as string | undefined;
  let band: [number, number] = c.network ? [c.network.band[0], c.network.band[1]] : [300, 3000];
  if (bandOpt !== undefined) {
    const parts = bandOpt.split(':').map((x) => numberOpt('band', x)!);
    if (parts.length !== 2 || !(parts[0]! > 0 && parts[1]! > parts[0]! && parts[1]! < sampleRate / 2)) {
      throw new UsageError(`--band ${bandOpt} must be LO:HI in Hz with 0 < LO < HI < ${sampleRate / 2}`);
    }
    band = [parts[0]!, parts[1]!];
  }
  const tonesHz =
    v.tones !== undefined
      ? String(v.tones)
          .split(',')
          .map((x) => numberOpt('tones', x)!)
      : Array.from({ length: 5 }, (_, k) => Math.round(band[0] * (band[1] / band[0]) ** (k / 4)));
  if (tonesHz.length < 2 || !tonesHz.every((f) => f > 0 && f < sampleRate / 2)) {
    throw new UsageError(
      `--tones ${tonesHz.join(',')} must list at least 2 tones in Hz below ${sampleRate / 2}`,
    );
  }
  const taps = numberOpt('taps', v.taps ?? '31')!;
  if (!(Number.isInteger(taps) && taps % 2 === 1 && taps >= 1 && taps <= 255)) {
    throw new UsageError(`--taps ${taps} must be an odd whole number from 1 to 255`);
  }
  out(
    `\n== across the band: ${tonesHz.length} tones at ${tonesHz.join(', ')} Hz, correction of ${taps} taps over ${band[0]}-${band[1]} Hz ==\n`,
  );
  const K = tonesHz.length;
  const an = c.analyzer;
  const simRead = (t: Trims, corr?: Correction): number[] =>
    tonesHz.map((f) => an!.readSideband(f, equivalentTrims(corr, t, f, sampleRate), c.simAmplitude));
  const fmtGP = (t: Trims) =>
    `gain ${t.gainDb >= 0 ? '+' : ''}${t.gainDb.toFixed(4)} dB, phase ${t.phaseDeg >= 0 ? '+' : ''}${t.phaseDeg.toFixed(4)}°`;
  const source: ReadingSource<readonly number[]> = an
    ? { read: (t) => simRead(t) }
    : c.input
      ? promptSource({
          input: c.input,
          output: process.stdout,
          count: K,
          label: 'band reading',
          describe: fmtGP,
          applied: c.extras.applier !== undefined,
          question: `unwanted sideband of each tone (${tonesHz.join(', ')} Hz), dB, in that order`,
        })
      : commandSource({
          command: v['measure-command'] as string,
          env: { OT_QUANTITY: 'band', OT_TONES_HZ: tonesHz.join(',') },
          count: K,
        });
  // Progress on stderr (a terminal only) for the simulated run; typed or scripted readings show their own.
  const progress = an ? createProgress('multi-tone calibration', Math.max(4, c.maxReadings)) : undefined;
  const r = await calibrateMultitone({
    measure: (t, corr) => (an ? simRead(t, corr) : tonesHz.map(() => Number.NaN)),
    ...(progress ? { onReading: (step: { index: number }) => progress.update(step.index) } : {}),
    source,
    ...(c.extras.applier ? { applier: c.extras.applier } : {}),
    tonesHz,
    sampleRate,
    band,
    taps,
    noiseDb: c.noiseDb,
    maxReadings: Math.max(4, c.maxReadings),
    verifyReadings: an ? 1 : 0,
    signal: c.signal,
    timeoutSeconds: c.timeoutSeconds,
    onFailure: (e, index) => out(`  reading ${index} failed: ${(e as Error)?.message ?? 'no value'}\n`),
  })
    .finally(() => progress?.finish())
    .catch((e: unknown) => {
      if (isOrthotoneError(e, 'MEASUREMENT_FAILED')) {
        throw new UsageError(`${e.message}: too few readings for a correction; nothing was written`);
      }
      throw e;
    });
  const table: string[][] = [['#', 'setting', ...tonesHz.map((f) => `${f} Hz dB`)]];
  for (const h of r.history)
    table.push([
      String(h.index),
      fmtGP(h.trims),
      ...h.levelsDb.map((x) => (Number.isFinite(x) ? x.toFixed(2) : 'failed')),
    ]);
  out(formatTable(table));
  const nulls: string[][] = [['tone Hz', 'null gain dB', 'null phase °', 'floor dBc']];
  for (const t of r.tones)
    nulls.push([String(t.frequencyHz), t.gainDb.toFixed(4), t.phaseDeg.toFixed(4), t.floorDb.toFixed(1)]);
  out(`\nper-tone nulls\n${formatTable(nulls)}`);
  out(
    `model: skew ${(r.model.skewSeconds * 1e6).toFixed(3)} µs; predicted worst suppression over the band with the correction ${r.predictedWorstDb.toFixed(1)} dB\n`,
  );
  let trueWorst: { before: number; after: number } | undefined;
  if (c.exciter) {
    const grid = Array.from({ length: 40 }, (_, i) => band[0] * (band[1] / band[0]) ** (i / 39));
    const worst = (corr: Correction | undefined, t: Trims) =>
      Math.min(
        ...grid.map(
          (f) => -c.exciter!.response(f, equivalentTrims(corr, t, f, sampleRate), c.simAmplitude).unwantedDbc,
        ),
      );
    trueWorst = { before: worst(undefined, ZERO_TRIMS), after: worst(r.correction, r.trims) };
    out(
      `true worst over ${band[0]}-${band[1]} Hz (the virtual exciter's noiseless response): ${trueWorst.before.toFixed(1)} dB before, ${trueWorst.after.toFixed(1)} dB with the correction\n`,
    );
  }
  if (r.verification?.warning) out(`note: ${r.verification.warning}\n`);
  const why = c.interrupted()
    ? 'interrupted (Ctrl-C)'
    : r.cutShort === 'end-of-input'
      ? 'input ended'
      : r.cutShort === 'failed'
        ? 'readings kept failing'
        : r.cutShort;
  const note = r.cutShort
    ? `cut short (${why}): the correction is fitted from ${r.readings} reading(s) only`
    : undefined;
  if (note) out(`${note}\n`);
  const profile = createProfile({
    sampleRate,
    toneHz: tonesHz[Math.floor(K / 2)]!,
    tonesHz,
    trims: r.trims,
    correction: r.correction,
    readings: r.history.flatMap((h) =>
      h.levelsDb.map((db, k) => ({
        quantity: `tone:${tonesHz[k]}`,
        trims: h.trims,
        levelDb: Number.isFinite(db) ? db : null,
      })),
    ),
    results: {
      ...(trueWorst
        ? { worstBandDb: trueWorst.after }
        : Number.isFinite(r.predictedWorstDb)
          ? { worstBandDb: r.predictedWorstDb }
          : {}),
      readingsUsed: r.readings,
      source: trueWorst ? 'simulated' : 'fit',
    },
    ...(c.network ? { network: c.network } : {}),
    ...(note ? { note } : {}),
  });
  if (c.files.profile) {
    writeFileAtomic(c.files.profile, profileToJson(profile));
    out(`wrote profile ${c.files.profile}\n`);
  }
  if (c.files.header) {
    writeFileAtomic(c.files.header, profileToCHeader(profile));
    out(`wrote C header ${c.files.header}\n`);
  }
  if (c.format === 'json') {
    process.stdout.write(
      `${JSON.stringify({ tonesHz, band, taps, readings: r.readings, stopReason: r.stopReason, ...(r.cutShort ? { cutShort: why } : {}), tones: r.tones, model: r.model, predictedWorstDb: r.predictedWorstDb, ...(trueWorst ? { trueWorstBeforeDb: trueWorst.before, trueWorstAfterDb: trueWorst.after } : {}), profile }, null, 2)}\n`,
    );
  }
  out(`\n${cautionsText()}\n`);
  if (c.interrupted()) return 130;
  return r.cutShort ? 3 : 0;
}
