/**
 * `orthotone simulate`: run an I/Q WAV file (I left, Q right) through the virtual exciter and write
 * what a measuring receiver would capture: its I/Q baseband around the carrier, or its audio with
 * the carrier at a chosen offset. Prints the drawn device and its predicted suppression.
 */
import type { CalibrationProfile } from '../calibrate/profile.js';
import { isOrthotoneError } from '../core/errors.js';
import { equivalentTrims } from '../design/correction.js';
import { TrimStage } from '../generate/trim-stage.js';
import { assertDistinctFiles } from '../node/files.js';
import { createWavWriter, openWavReader, type WavReader } from '../node/wav.js';
import { createVirtualExciter } from '../simulate/exciter.js';
import { drawDevice, HOMEBREW_BENCH_SEED, TOLERANCE_PRESETS } from '../simulate/model.js';
import { predictedSuppression, responseLevels, toneResponse } from '../simulate/response.js';
import { choiceOpt, inCliWords, lookupOpt, numberOpt, parseCommand, seedOpt, UsageError } from './args.js';
import { readProfileOption } from './cli-output.js';
import { fixed, formatPairs, formatTable } from './table.js';

const HELP = `usage: orthotone simulate IN.wav --out OUT.wav [options]

Plays an I/Q file (I left, Q right) into a virtual exciter — an imperfect analog chain and four-phase
commutating mixer drawn from component tolerances — and writes what a receiver would capture.

  --out FILE             output WAV (32-bit float)
  --preset NAME          ${Object.keys(TOLERANCE_PRESETS).join(' | ')} (default homebrew-bench)
  --device-seed N        which device to draw from the preset (default ${HOMEBREW_BENCH_SEED}, the bench
                         that shows about 34 dB carrier and 44 dB sideband suppression)
  --seed N               seed of the converter and receiver noise (default 1)
  --floor DBC            receiver noise floor, dBc per hertz re a full-scale tone (default -130)
  --harmonic N           receive around the N-th LO harmonic (default 1)
  --offset HZ            write receiver audio (mono) with the carrier at HZ, instead of I/Q (stereo)
  --profile FILE         apply a calibration profile's trims and correction to the I/Q before the
                         exciter (for a file rendered without them), and predict with them
  --format F             table (default) | json: the device and its predicted suppression
  -h, --help             this help
`;

const OPTIONS = {
  out: { type: 'string' },
  preset: { type: 'string' },
  'device-seed': { type: 'string' },
  seed: { type: 'string' },
  floor: { type: 'string' },
  harmonic: { type: 'string' },
  offset: { type: 'string' },
  format: { type: 'string' },
  profile: { type: 'string' },
  help: { type: 'boolean', short: 'h' },
} as const;

/**
 * `orthotone simulate` entry point; returns the exit status (0).
 * @throws {UsageError} for bad options, an unreadable or mono input file, or an `--offset` outside
 *   0 … Nyquist; OrthotoneError INVALID_ARGUMENT for a file that is not WAV or a device or receiver
 *   setting the simulator refuses;
 *   a Node file-system error when an output file cannot be written. The CLI's `main` (through
 *   `runGuarded`) turns UsageError and OrthotoneError into one line on stderr and exit status 2.
 */
export async function run(argv: string[]): Promise<number> {
  const { values: v, positionals } = parseCommand(argv, OPTIONS, true);
  if (v.help) {
    process.stdout.write(HELP);
    return 0;
  }
  if (positionals.length !== 1)
    throw new UsageError('simulate needs one I/Q WAV file: orthotone simulate IN.wav --out OUT.wav');
  if (v.out === undefined) throw new UsageError('simulate needs --out FILE for the receiver capture');
  const format = choiceOpt('format', v.format, ['table', 'json'], 'table');
  const presetName = (v.preset ?? 'homebrew-bench') as string;
  const preset = lookupOpt('preset', presetName, TOLERANCE_PRESETS, 'homebrew-bench');
  const deviceSeed = seedOpt('device-seed', v['device-seed'], HOMEBREW_BENCH_SEED);
  const seed = seedOpt('seed', v.seed, 1);
  const floorDbc = numberOpt('floor', v.floor ?? '-130')!;
  const harmonic = numberOpt('harmonic', v.harmonic ?? '1')!;
  const offset = numberOpt('offset', v.offset);
  const inFile = positionals[0]!;
  const outFile = v.out as string;
  const profileFile = typeof v.profile === 'string' ? v.profile : undefined;
  assertDistinctFiles(
    [
      ['IN.wav', inFile],
      ['--profile', profileFile],
    ],
    [['--out', outFile]],
  );
  let wav: WavReader;
  try {
    wav = openWavReader(inFile);
  } catch (e) {
    if (isOrthotoneError(e)) throw e;
    throw new UsageError(
      `cannot read ${inFile}: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`,
    );
  }
  let n: number;
  let fs: number;
  let ex: ReturnType<typeof createVirtualExciter>;
  let model: ReturnType<typeof drawDevice>;
  let profile: CalibrationProfile | null = null;
  let trimStage: TrimStage | null = null;
  try {
    const nc = wav.info.channels;
    if (nc !== 2) {
      throw new UsageError(
        `${inFile} has ${nc} channel${nc === 1 ? '' : 's'}: simulate needs an I/Q file of exactly two (I left, Q right)`,
      );
    }
    fs = wav.info.sampleRate;
    if (offset !== undefined && !(offset > 0 && offset < fs / 2)) {
      throw new UsageError(`--offset ${offset} Hz must lie between 0 and ${fs / 2} Hz (Nyquist)`);
    }
    model = inCliWords(() => drawDevice(preset, deviceSeed), { seed: '--device-seed' });
    profile = profileFile === undefined ? null : readProfileOption(profileFile, fs);
    // The profile's trims and correction act on the I/Q before the exciter, as the generator's would.
    trimStage = profile
      ? new TrimStage(fs, { trims: profile.trims, correction: profile.correction, rampSeconds: 0 })
      : null;
    ex = inCliWords(() => createVirtualExciter(model, { sampleRate: fs, seed, floorDbc, harmonic }), {
      seed: '--seed',
      harmonic: '--harmonic',
    });
    n = wav.info.frames;
    // In blocks from the file, through the exciter, into the file: bounded memory for any length.
    const block = 16384;
    const i = new Float32Array(block);
    const q = new Float32Array(block);
    const re = new Float32Array(block);
    const im = new Float32Array(block);
    const audio = new Float32Array(block);
    const w = offset === undefined ? 0 : (2 * Math.PI * offset) / fs;
    const writer = createWavWriter(outFile, {
      channels: offset === undefined ? 2 : 1,
      sampleRate: fs,
      encoding: 'float32',
    });
    try {
      for (let s = 0; s < n; s += block) {
        const m = wav.read([i, q], Math.min(block, n - s));
        for (let k = 0; k < m; k++) {
          if (!Number.isFinite(i[k]!) || !Number.isFinite(q[k]!)) {
            throw new UsageError(
              `${inFile} holds a non-finite sample (${Number.isFinite(i[k]!) ? q[k] : i[k]}) at frame ${s + k}: the file is damaged`,
            );
          }
        }
        if (trimStage) {
          // re/im serve as scratch for the trimmed I/Q before the exciter overwrites them.
          trimStage.process(i.subarray(0, m), q.subarray(0, m), re.subarray(0, m), im.subarray(0, m));
          i.set(re.subarray(0, m));
          q.set(im.subarray(0, m));
        }
        ex.process(i.subarray(0, m), q.subarray(0, m), re.subarray(0, m), im.subarray(0, m));
        if (offset !== undefined) {
          // A receiver on its upper sideband tuned `offset` below the carrier: audio = Re{z·e^{j2π·offset·t}}.
          for (let k = 0; k < m; k++) {
            const t = w * (s + k);
            audio[k] = re[k]! * Math.cos(t) - im[k]! * Math.sin(t);
          }
          writer.write([audio], m);
        } else writer.write([re, im], m);
        if (m === 0) break;
      }
      writer.close();
    } catch (e) {
      writer.abort();
      throw e;
    }
  } finally {
    wav.close();
  }
  const freqs = [300, 700, 1000, 1800, 1900, 3000].filter((f) => f < 0.45 * fs);
  const pred = profile
    ? freqs.map((f) => {
        const t = equivalentTrims(profile.correction ?? undefined, profile.trims, f, fs);
        const l = responseLevels(toneResponse(model, f, t, 1, fs));
        return { frequencyHz: f, sidebandDb: -l.unwantedDbc, carrierDb: -l.carrierDbc };
      })
    : predictedSuppression(model, freqs);
  if (format === 'json') {
    process.stdout.write(
      `${JSON.stringify({ preset: presetName, deviceSeed, seed, floorDbc, harmonic, sampleRate: fs, samples: n, latencySamples: ex.latencySamples, model, profile: profileFile ?? null, trims: profile ? profile.trims : null, predicted: pred }, null, 2)}\n`,
    );
    return 0;
  }
  const ph = ['0°', '90°', '180°', '270°'];
  process.stdout.write(
    `wrote ${v.out} (${offset !== undefined ? `receiver audio, carrier at ${offset} Hz` : 'receiver I/Q, I left, Q right'}; ${n} samples at ${fs} Hz, delayed ${ex.latencySamples} samples)\n\n` +
      `device: preset ${presetName}, device seed ${deviceSeed}\n` +
      formatTable([
        ['phase', 'gain', 'offset mV'],
        ...ph.map((p, k) => [
          p,
          fixed(model.phaseGain[k as 0]!, 5),
          fixed(model.phaseOffsetVolts[k as 0]! * 1000, 3),
        ]),
      ]) +
      formatPairs([
        ['codec gains I/Q', `${fixed(model.codecGain[0], 5)} / ${fixed(model.codecGain[1], 5)}`],
        ['skew (Q after I)', `${fixed(model.skewSeconds * 1e9, 2)} ns`],
        [
          'low-pass corners I/Q',
          `${fixed(model.antiImagingLowPassHz[0], 0)} / ${fixed(model.antiImagingLowPassHz[1], 0)} Hz`,
        ],
        [
          'coupling corners I/Q',
          `${fixed(model.couplingHighPassHz[0], 2)} / ${fixed(model.couplingHighPassHz[1], 2)} Hz (0 = DC-coupled)`,
        ],
      ]) +
      (profile
        ? `\npredicted with the trims${profile.correction ? ' and correction' : ''} of ${profileFile} (full-scale tone):\n`
        : '\npredicted with zero trims (full-scale tone):\n') +
      formatTable([
        ['tone Hz', 'sideband dB', 'carrier dB'],
        ...pred.map((p) => [String(p.frequencyHz), fixed(p.sidebandDb, 2), fixed(p.carrierDb, 2)]),
      ]),
  );
  return 0;
}
