/**
 * `orthotone render`: run a test signal or a mono recording through a 90° network and the trims, and
 * write the I/Q result as a stereo WAV (left I, right Q). Prints the signal's levels, the realised
 * output levels read back from what was written, the predicted suppression, and the transmitting
 * cautions.
 */
import { isOrthotoneError } from '../core/errors.js';
import type { Correction, Trims } from '../core/trims.js';
import { validateTrims, ZERO_TRIMS } from '../core/trims.js';
import { ampToDb, dbToAmp, powToDb } from '../core/units.js';
import { equivalentTrims } from '../design/correction.js';
import { designNetwork } from '../design/design-network.js';
import { kitPlan, kitTrimWords } from '../design/kit-arithmetic.js';
import type { Network } from '../design/network.js';
import { KitModel } from '../generate/fixed-point.js';
import { createMultitoneSource } from '../generate/multitone-source.js';
import { predictCarrierDbc, predictOutputPeaks, predictSuppressionDb } from '../generate/prediction.js';
import { createQuadratureGenerator } from '../generate/quadrature-generator.js';
import { createSignalSource, type SignalLevels, type SignalSpec, signalLevels } from '../generate/sources.js';
import type { Sideband } from '../generate/trim-stage.js';
import { assertDistinctFiles, checkFreeSpace, createTextWriter } from '../node/files.js';
import {
  createWavWriter,
  openWavReader,
  WAV_ENCODINGS,
  type WavEncoding,
  type WavReader,
  type WavWriteReport,
} from '../node/wav.js';
import {
  choiceOpt,
  inCliWords,
  numberListOpt,
  numberOpt,
  parseCommand,
  seedOpt,
  UsageError,
} from './args.js';
import { printCautions, readProfileOption } from './cli-output.js';
import { arithmeticOpt, DESIGN_OPTIONS, specFromOptions } from './design.js';
import { disagreementWarning, loadNetworkFile } from './network-file.js';
import { createProgress } from './progress.js';
import { fixed, formatPairs } from './table.js';

const HELP = `usage: orthotone render [NETWORK.json] [options] --out FILE.wav

Runs a test signal (or a mono recording) through a 90° network and the trims and writes the I/Q
result as a stereo WAV file: left channel I, right channel Q. Without a network file, one is
designed from the design options (as 'orthotone design').

signal (one of):
  --tone HZ              single tone
  --two-tone HZ,HZ       two tones, each at --level
  --sweep                logarithmic sweep over the network's band (or --sweep-band LO:HI)
  --noise                noise band-limited to the network's band (--white: white noise)
  --input FILE           a WAV recording (channels averaged to mono)
  --tones HZ,HZ,...      2 to 32 tones at once, equal levels, low-peak-factor phases: the signal the
                         across-the-band calibration (calibrate --tones) reads
levels and length:
  --level DBFS           tone level (each tone for two-tone), noise RMS, or the input's new peak;
                         for --tones the peak of their sum (each tone 20*log10(K) dB lower);
                         defaults: tone -6, two-tone -12 each, sweep -6, noise -20, tones -6,
                         input unchanged
  --duration S           seconds (default 5; an input's own length)
  --seed N               noise seed (default 1)
trims and sideband:
  --sideband S           upper (default) | lower
  --gain-db DB           Q gain relative to I, dB (|x| <= 6)
  --phase-deg DEG        phase trim, degrees (|x| <= 45)
  --skew S               Q delay relative to I, samples, fractional (|x| <= 16)
  --dc-i X, --dc-q X     DC added to I and Q, full-scale units (|x| <= 1)
  --profile FILE         apply a calibration profile (orthotone calibrate --profile): its trims,
                         sideband and correction filter; a trim or --sideband given here wins
output:
  --out FILE.wav         the I/Q file to write (required)
  --encoding E           float32 (default) | float64 | int32 | int24 | int16 | uint8
                         (RF64 when the data passes the 4 GiB limit of a plain WAV)
  --vectors FILE.csv     also write test vectors for a firmware port: n,input,i,q per sample
                         (float32 values, 9 significant digits; trims and network as above)
  --format F             table (default) | json: the report (cautions then go to stderr)
arithmetic:
  --arithmetic A         double (default) | float | q31 | q15: run the firmware kit's arithmetic,
                         bit-exact with 'orthotone firmware' kits (without a network file, the
                         design also meets --target with that arithmetic's coefficients); --vectors
                         then holds the kit's exact output in round-trip digits
  --max-skew N           the kit's skew stage size, whole samples (as 'firmware --max-skew';
                         default: the skew rounded up)
design options (without a network file):
  --rate HZ --band LO:HI --method fir|allpass|auto --target DB --taps N --sections N
  --fir-method remez|kaiser --form first-order|second-order --coefficients float64|float32|q31|q15
  -h, --help             this help
`;

/** Complex tone amplitude of I + jQ at `hz` with a Hann window: `|X|/Σw` (docs/REFERENCES.md §4). */
function complexToneAmplitude(
  i: Float32Array,
  q: Float32Array,
  from: number,
  n: number,
  hz: number,
  fs: number,
): number {
  let re = 0;
  let im = 0;
  let sw = 0;
  const w0 = (2 * Math.PI * hz) / fs;
  for (let k = 0; k < n; k++) {
    const w = 0.5 - 0.5 * Math.cos((2 * Math.PI * k) / n);
    const c = Math.cos(w0 * k);
    const s = Math.sin(w0 * k);
    const a = i[from + k]!;
    const b = q[from + k]!;
    // (a + jb)·e^{−jω0k}
    re += w * (a * c + b * s);
    im += w * (b * c - a * s);
    sw += w;
  }
  return Math.hypot(re, im) / sw;
}

/** Frames generated and written per block: memory stays bounded whatever the duration. */
const BLOCK = 16384;
/** Longest signal rendered, s. */
const MAX_DURATION_S = 3600;
/** Library keys of a signal spec and the options that set them. */
const SIGNAL_NAMES: Readonly<Record<string, string>> = Object.freeze({
  levelDbfs: '--level',
  'frequenciesHz\\[\\d\\]': '--two-tone',
  frequenciesHz: '--two-tone',
  frequencyHz: '--tone',
  durationSeconds: '--duration',
  startHz: '--sweep-band',
  endHz: '--sweep-band',
  seed: '--seed',
});

const dbText = (x: number, digits = 2): string =>
  Number.isFinite(x) ? fixed(x, digits) : x > 0 ? 'inf' : '-inf';

function signalFromOptions(v: Record<string, unknown>, net: Network): SignalSpec | null {
  const chosen = ['tone', 'two-tone', 'sweep', 'noise', 'input'].filter(
    (k) => v[k] !== undefined && v[k] !== false,
  );
  if (chosen.length !== 1) {
    throw new UsageError(
      chosen.length === 0
        ? 'choose a signal: --tone HZ, --two-tone HZ,HZ, --sweep, --noise or --input FILE'
        : `choose one signal, not ${chosen.map((c) => `--${c}`).join(' and ')}`,
    );
  }
  const level = numberOpt('level', v.level);
  if (v.tone !== undefined) {
    return { kind: 'tone', frequencyHz: numberOpt('tone', v.tone)!, levelDbfs: level ?? -6 };
  }
  if (v['two-tone'] !== undefined) {
    const f = numberListOpt('two-tone', v['two-tone'], ',', 2) as [number, number];
    return { kind: 'two-tone', frequenciesHz: f, levelDbfs: level ?? -12 };
  }
  if (v.sweep) {
    const band =
      (numberListOpt('sweep-band', v['sweep-band'], ':', 2) as [number, number] | undefined) ?? net.band;
    const duration = numberOpt('duration', v.duration) ?? 5;
    return {
      kind: 'sweep',
      startHz: band[0],
      endHz: band[1],
      durationSeconds: duration,
      levelDbfs: level ?? -6,
    };
  }
  if (v.noise) {
    const seed = seedOpt('seed', v.seed, 1);
    return v.white
      ? { kind: 'noise', levelDbfs: level ?? -20, seed }
      : { kind: 'noise', levelDbfs: level ?? -20, seed, band: net.band };
  }
  return null;
}

function trimsFromOptions(v: Record<string, unknown>): Partial<Trims> {
  const t: Partial<Trims> = {};
  const map = [
    ['gain-db', 'gainDb'],
    ['phase-deg', 'phaseDeg'],
    ['skew', 'skewSamples'],
    ['dc-i', 'dcI'],
    ['dc-q', 'dcQ'],
  ] as const;
  for (const [opt, key] of map) {
    const x = numberOpt(opt, v[opt]);
    if (x !== undefined) t[key] = x;
  }
  return validateTrims(t);
}

/**
 * Runs `orthotone render`; returns the exit status (0).
 * @throws {UsageError} for bad options, an unreadable or silent input, or an unreadable network
 *   file; OrthotoneError (INVALID_DOCUMENT for a bad network document, INVALID_ARGUMENT for trims,
 *   signal settings or a WAV encoding the library refuses, INVALID_BAND / UNREACHABLE_TARGET from
 *   designing the network);
 *   a Node file-system error when an output file cannot be written. The CLI's `main` (through
 *   `runGuarded`) turns UsageError and OrthotoneError into one line on stderr and exit status 2.
 */
export async function run(argv: string[]): Promise<number> {
  const { values: v, positionals } = parseCommand(
    argv,
    {
      ...DESIGN_OPTIONS,
      tone: { type: 'string' },
      'two-tone': { type: 'string' },
      sweep: { type: 'boolean' },
      'sweep-band': { type: 'string' },
      noise: { type: 'boolean' },
      white: { type: 'boolean' },
      input: { type: 'string' },
      level: { type: 'string' },
      duration: { type: 'string' },
      seed: { type: 'string' },
      sideband: { type: 'string' },
      'gain-db': { type: 'string' },
      'phase-deg': { type: 'string' },
      skew: { type: 'string' },
      'dc-i': { type: 'string' },
      'dc-q': { type: 'string' },
      out: { type: 'string' },
      encoding: { type: 'string' },
      vectors: { type: 'string' },
      tones: { type: 'string' },
      profile: { type: 'string' },
      format: { type: 'string' },
      'max-skew': { type: 'string' },
      help: { type: 'boolean', short: 'h' },
    },
    true,
  );
  if (v.help) {
    process.stdout.write(HELP);
    return 0;
  }
  if (positionals.length > 1) throw new UsageError('give at most one network FILE');
  if (typeof v.out !== 'string') throw new UsageError('give the output file: --out FILE.wav');

  const outFile = v.out;
  const vectorsFile = typeof v.vectors === 'string' ? v.vectors : undefined;
  const inputFile = typeof v.input === 'string' ? v.input : undefined;
  const netFile = positionals[0];
  // Before any work: no output may be an input or another output.
  assertDistinctFiles(
    [
      ['NETWORK', netFile],
      ['--input', inputFile],
      ['--profile', typeof v.profile === 'string' ? v.profile : undefined],
    ],
    [
      ['--out', outFile],
      ['--vectors', vectorsFile],
    ],
  );

  // Input recording first: without a network file its rate sets the design rate. It is read in
  // blocks, twice (levels first, then the render), never held whole.
  let input: WavReader | null = null;
  if (inputFile !== undefined) {
    try {
      input = openWavReader(inputFile);
    } catch (e) {
      if (isOrthotoneError(e)) throw new UsageError(`--input ${e.message}`);
      throw new UsageError(
        `cannot read --input ${inputFile}: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`,
      );
    }
  }
  try {
    return await renderWith(v, positionals, input, outFile, vectorsFile);
  } finally {
    input?.close();
  }
}

async function renderWith(
  v: Record<string, unknown>,
  positionals: string[],
  input: WavReader | null,
  outFile: string,
  vectorsFile: string | undefined,
): Promise<number> {
  const encoding = choiceOpt<WavEncoding>('encoding', v.encoding, WAV_ENCODINGS, 'float32');
  const format = choiceOpt('format', v.format, ['table', 'json'], 'table');
  let sideband = choiceOpt<Sideband>('sideband', v.sideband, ['upper', 'lower'], 'upper');
  let trims = inCliWords(() => trimsFromOptions(v));
  const inputRate = input?.info.sampleRate ?? 0;
  const inputFile = v.input as string | undefined;

  let net: Network;
  let disagreements: string[] = [];
  const file = positionals[0];
  if (file !== undefined) {
    const designGiven = Object.keys(DESIGN_OPTIONS).filter((k) => k !== 'arithmetic' && v[k] !== undefined);
    if (designGiven.length > 0) {
      throw new UsageError(
        `a network file was given: drop the design options (--${designGiven.join(', --')})`,
      );
    }
    const checked = loadNetworkFile(file);
    net = checked.net;
    disagreements = checked.disagreements;
  } else {
    const opts = { ...v };
    if (input && opts.rate === undefined) opts.rate = String(inputRate);
    net = inCliWords(() => designNetwork(specFromOptions(opts)));
  }
  const fs = net.sampleRate;
  if (!Number.isInteger(fs)) {
    throw new UsageError(
      `the network runs at ${fs} Hz, which a WAV file cannot hold: design it for a whole number of Hz`,
    );
  }
  if (input && inputRate !== fs) {
    throw new UsageError(
      `${inputFile} is at ${inputRate} Hz but the network runs at ${fs} Hz: resample the input or design for ${inputRate} Hz`,
    );
  }

  // A profile gives trims, sideband and correction; options given here win over it.
  let correction: Correction | null = null;
  let profileNote: string | undefined;
  if (typeof v.profile === 'string') {
    const p = readProfileOption(v.profile, fs);
    trims = { ...p.trims, ...trims };
    if (v.sideband === undefined) sideband = p.sideband;
    correction = p.correction;
    profileNote = `${v.profile} (made ${p.created}${correction ? `, correction ${correction.qFromQ.length} taps` : ''})`;
  }

  const multitone = numberListOpt('tones', v.tones, ',');
  if (multitone !== undefined && (v.tone ?? v['two-tone'] ?? v.sweep ?? v.noise ?? v.input) !== undefined) {
    throw new UsageError('choose one signal: --tones cannot go with another signal option');
  }
  const spec = multitone === undefined ? signalFromOptions(v, net) : null;
  const toneSet =
    multitone === undefined
      ? null
      : inCliWords(() => createMultitoneSource(multitone, fs, numberOpt('level', v.level) ?? -6), {
          frequenciesHz: '--tones',
        });
  let levels: SignalLevels;
  let frames: number;
  let inputGain = 1;
  if (spec || toneSet) {
    if (spec) {
      if (spec.kind === 'tone' || spec.kind === 'two-tone') {
        const tones = spec.kind === 'tone' ? [spec.frequencyHz] : spec.frequenciesHz;
        const opt = spec.kind === 'tone' ? 'tone' : 'two-tone';
        for (const f of tones) {
          if (!(f > 0 && f < fs / 2))
            throw new UsageError(`--${opt} ${f} Hz must lie above 0 Hz and below Nyquist ${fs / 2} Hz`);
        }
        if (tones.length === 2 && tones[0] === tones[1])
          throw new UsageError(
            `--two-tone ${tones[0]},${tones[1]} is one tone twice: give two different frequencies`,
          );
      }
      levels = inCliWords(() => signalLevels(spec, fs), SIGNAL_NAMES);
    } else {
      const ts = toneSet!;
      const k = ts.frequenciesHz.length;
      const amp = dbToAmp(ts.toneDbfs);
      levels = {
        toneDbfs: ts.frequenciesHz.map(() => ts.toneDbfs),
        pepDbfs: ampToDb(k * amp),
        rmsDbfs: ts.toneDbfs + powToDb(k),
        peak: k * amp,
      };
    }
    const duration = numberOpt('duration', v.duration) ?? 5;
    if (!(duration > 0 && duration <= MAX_DURATION_S))
      throw new UsageError(`--duration ${duration} s must be more than 0 and at most ${MAX_DURATION_S} s`);
    frames = Math.round(duration * fs);
    if (frames < 1)
      throw new UsageError(
        `--duration ${duration} s is shorter than one sample at ${fs} Hz: give at least ${1 / fs} s`,
      );
  } else {
    // Pass 1 over the input: levels, and no damaged (non-finite) samples.
    const r = input!;
    frames = r.info.frames;
    if (frames === 0) throw new UsageError(`--input ${inputFile} holds no samples`);
    const nc = r.info.channels;
    const bufs = Array.from({ length: nc }, () => new Float32Array(BLOCK));
    const mono = new Float32Array(BLOCK);
    let peak = 0;
    let pow = 0;
    for (let o = 0; o < frames; o += BLOCK) {
      const n = r.read(bufs, Math.min(BLOCK, frames - o));
      for (let c = 0; c < nc; c++) {
        const b = bufs[c]!;
        for (let k = 0; k < n; k++) {
          if (!Number.isFinite(b[k]!)) {
            throw new UsageError(
              `--input ${inputFile} holds a non-finite sample (${b[k]}) at frame ${o + k}, channel ${c}: the file is damaged`,
            );
          }
        }
      }
      toMonoBlock(bufs, n, mono);
      for (let k = 0; k < n; k++) {
        const a = Math.abs(mono[k]!);
        if (a > peak) peak = a;
        pow += mono[k]! * mono[k]!;
      }
      if (n === 0) break;
    }
    const level = numberOpt('level', v.level);
    if (level !== undefined) {
      if (peak === 0) throw new UsageError(`${inputFile} is silent: --level cannot scale it`);
      inputGain = dbToAmp(level) / peak;
      pow *= inputGain * inputGain;
      peak *= inputGain;
    }
    levels = {
      toneDbfs: [],
      pepDbfs: Number.NaN,
      rmsDbfs: powToDb((2 * pow) / Math.max(1, frames)),
      peak,
    };
    r.seek(0);
  }

  // Before rendering: will signal plus trims exceed full scale? Will the file fit on the disk?
  const predictedPeaks = predictOutputPeaks(levels.peak, trims, net);
  const width = { uint8: 1, int16: 2, int24: 3, int32: 4, float32: 4, float64: 8 }[encoding];
  const dataBytes = frames * 2 * width;
  checkFreeSpace(outFile, dataBytes + 1024, '--out');
  // A vectors row is at most about 50 characters (index and three 9-digit values).
  if (vectorsFile !== undefined) checkFreeSpace(vectorsFile, frames * 50, '--vectors');

  const arithmetic = arithmeticOpt(v.arithmetic);
  if (correction && arithmetic !== 'double') {
    throw new UsageError(
      `--profile ${String(v.profile)} carries a correction filter, which runs in double arithmetic only: drop --arithmetic ${arithmetic}`,
    );
  }
  const maxSkew = numberOpt('max-skew', v['max-skew']) ?? Math.ceil(Math.abs(trims.skewSamples ?? 0));
  const gen = createQuadratureGenerator(
    net,
    arithmetic === 'double'
      ? { trims, sideband, correction }
      : { trims, sideband, arithmetic, maxSkewSamples: maxSkew },
  );
  // With a kit arithmetic the vectors hold the kit's own output exactly (Q31 does not fit the
  // float32 samples the generator returns), in digits that round-trip a double.
  const kit =
    arithmetic === 'double' || vectorsFile === undefined
      ? null
      : new KitModel(
          kitPlan(net, arithmetic),
          maxSkew,
          kitTrimWords({ ...ZERO_TRIMS, ...trims }, sideband === 'lower', arithmetic, maxSkew),
        );
  const kx = new Float64Array(kit ? BLOCK : 0);
  const ki = new Float64Array(kit ? BLOCK : 0);
  const kq = new Float64Array(kit ? BLOCK : 0);
  // Realised levels are read back from what is written; the tone readback keeps one window of it.
  const settle = Math.min(Math.floor(frames / 2), Math.round(0.05 * fs) + 4 * gen.trimLatencySamples);
  const nRead = Math.min(frames - settle, 1 << 17);
  const winI = new Float32Array(Math.max(0, nRead));
  const winQ = new Float32Array(Math.max(0, nRead));
  const x = new Float32Array(BLOCK);
  const i = new Float32Array(BLOCK);
  const q = new Float32Array(BLOCK);
  const inBufs = input ? Array.from({ length: input.info.channels }, () => new Float32Array(BLOCK)) : [];
  const src = spec ? createSignalSource(spec, fs) : toneSet;
  const progress = createProgress('render', frames);
  const writer = createWavWriter(outFile, { channels: 2, sampleRate: fs, encoding });
  const vectors = vectorsFile === undefined ? null : createTextWriter(vectorsFile);
  let peakI = 0;
  let peakQ = 0;
  let peakEnv = 0;
  let powI = 0;
  let powQ = 0;
  let report: WavWriteReport;
  try {
    vectors?.write('n,input,i,q\n');
    const g = (val: number): string => String(Number(val.toPrecision(9)));
    for (let o = 0; o < frames; o += BLOCK) {
      const n = Math.min(BLOCK, frames - o);
      const xb = x.subarray(0, n);
      if (src) src.fill(xb);
      else {
        const got = input!.read(inBufs, n);
        toMonoBlock(inBufs, got, x);
        for (let k = 0; k < n; k++) x[k] = k < got ? x[k]! * inputGain : 0;
      }
      gen.process(xb, i.subarray(0, n), q.subarray(0, n));
      writer.write([i, q], n);
      for (let k = 0; k < n; k++) {
        const a = i[k]!;
        const b = q[k]!;
        const aa = Math.abs(a);
        const ab = Math.abs(b);
        if (aa > peakI) peakI = aa;
        if (ab > peakQ) peakQ = ab;
        const e = a * a + b * b;
        if (e > peakEnv) peakEnv = e;
        powI += a * a;
        powQ += b * b;
      }
      // Copy the part of this block that falls in the readback window.
      const from = Math.max(o, settle);
      const to = Math.min(o + n, settle + nRead);
      if (to > from) {
        winI.set(i.subarray(from - o, to - o), from - settle);
        winQ.set(q.subarray(from - o, to - o), from - settle);
      }
      progress.update(o + n);
      if (vectors && kit) {
        for (let k = 0; k < n; k++) kx[k] = kit.sampleFromFullScale(x[k]!);
        kit.processSamples(kx, ki, kq, n);
        let text = '';
        for (let k = 0; k < n; k++) {
          text += `${o + k},${String(x[k]!)},${String(kit.sampleToFullScale(ki[k]!))},${String(kit.sampleToFullScale(kq[k]!))}\n`;
        }
        vectors.write(text);
      } else if (vectors) {
        let text = '';
        for (let k = 0; k < n; k++) text += `${o + k},${g(x[k]!)},${g(i[k]!)},${g(q[k]!)}\n`;
        vectors.write(text);
      }
    }
    report = writer.close();
    vectors?.close();
    progress.finish();
  } catch (e) {
    progress.finish();
    writer.abort();
    vectors?.abort();
    throw e;
  }
  peakEnv = Math.sqrt(peakEnv);
  const stats = { ...gen.stats };

  const rmsDbfs = (p: number) => powToDb((2 * p) / Math.max(1, frames));
  const tones =
    spec?.kind === 'tone'
      ? [spec.frequencyHz]
      : spec?.kind === 'two-tone'
        ? spec.frequenciesHz
        : (toneSet?.frequenciesHz ?? []);
  const sign = sideband === 'lower' ? -1 : 1;
  const toneRows = tones.map((f) => {
    const wanted = nRead > 256 ? complexToneAmplitude(winI, winQ, 0, nRead, sign * f, fs) : Number.NaN;
    const image = nRead > 256 ? complexToneAmplitude(winI, winQ, 0, nRead, -sign * f, fs) : Number.NaN;
    return {
      frequencyHz: f,
      wantedDbfs: ampToDb(wanted),
      unwantedDbc: ampToDb(image / wanted),
      predictedSuppressionDb: predictSuppressionDb(
        net,
        f,
        equivalentTrims(correction ?? undefined, trims, f, fs),
        sideband,
      ),
      predictedCarrierDbc: predictCarrierDbc(trims, dbToAmp(levels.toneDbfs[tones.indexOf(f)] ?? 0)),
    };
  });
  const carrierDbfs = nRead > 256 ? ampToDb(complexToneAmplitude(winI, winQ, 0, nRead, 0, fs)) : Number.NaN;

  const warnings: string[] = [];
  if (disagreements.length > 0) warnings.push(disagreementWarning(positionals[0]!, disagreements));
  if (predictedPeaks.overFullScale || stats.overFullScale > 0) {
    warnings.push(
      `WARNING: signal plus trims exceed full scale: predicted peak ${dbText(predictedPeaks.peakDbfs)} dBFS, ` +
        `${stats.overFullScale} output samples over full scale (peak ${dbText(ampToDb(stats.peak))} dBFS). ` +
        (encoding.startsWith('float')
          ? 'The float file keeps them, but a DAC or player will clip: lower --level or the gain trim.'
          : `${report.clippedSamples} samples were clipped in the ${encoding} file: lower --level or the gain trim.`),
    );
  }
  if (stats.nonFiniteInputs > 0)
    warnings.push(`WARNING: ${stats.nonFiniteInputs} non-finite input samples were replaced by 0.`);
  const rf64 = 44 + dataBytes > 0xffffffff;

  const result = {
    out: outFile,
    encoding,
    container: rf64 ? 'RF64' : 'RIFF',
    sampleRate: fs,
    frames,
    network: {
      kind: net.kind,
      band: net.band,
      predicted: net.predicted,
      latencySamples: net.cost.latencySamples,
      storedFiguresAgree: disagreements.length === 0,
    },
    signal:
      spec ??
      (toneSet
        ? {
            kind: 'multitone',
            frequenciesHz: toneSet.frequenciesHz,
            levelDbfs: numberOpt('level', v.level) ?? -6,
          }
        : { kind: 'input', file: inputFile }),
    profile: typeof v.profile === 'string' ? v.profile : null,
    correctionTaps: correction ? correction.qFromQ.length : 0,
    signalLevels: levels,
    trims: { gainDb: 0, phaseDeg: 0, skewSamples: 0, dcI: 0, dcQ: 0, ...trims },
    sideband,
    predictedPeaks,
    realised: {
      peakIDbfs: ampToDb(peakI),
      peakQDbfs: ampToDb(peakQ),
      envelopePeakDbfs: ampToDb(peakEnv),
      rmsIDbfs: rmsDbfs(powI),
      rmsQDbfs: rmsDbfs(powQ),
      carrierDbfs,
      tones: toneRows,
      overFullScale: stats.overFullScale,
      clippedSamples: report.clippedSamples,
      nonFiniteInputs: stats.nonFiniteInputs,
    },
    warnings,
  };
  if (format === 'json') {
    process.stdout.write(`${JSON.stringify(result, null, 2)}\n`);
  } else {
    const pairs: [string, string][] = [
      [
        'network',
        `${net.kind}, band ${net.band[0]}-${net.band[1]} Hz at ${fs} Hz; worst suppression ${dbText(net.predicted.worstSuppressionDb)} dB over the band (computed from the coefficients)`,
      ],
      [
        'signal',
        toneSet
          ? `${toneSet.frequenciesHz.length} tones ${toneSet.frequenciesHz.join(', ')} Hz, ${dbText(toneSet.toneDbfs)} dBFS each, sum peak ${dbText(ampToDb(levels.peak))} dBFS`
          : describeSignal(spec, levels, inputFile),
      ],
      [
        'trims',
        `gain ${fixed(result.trims.gainDb, 3)} dB, phase ${fixed(result.trims.phaseDeg, 3)} deg, skew ${fixed(result.trims.skewSamples, 3)} samples, DC I ${result.trims.dcI}, DC Q ${result.trims.dcQ}; ${sideband} sideband` +
          (profileNote ? `; from profile ${profileNote}` : ''),
      ],
      [
        'realised',
        `I peak ${dbText(ampToDb(peakI))} dBFS, Q peak ${dbText(ampToDb(peakQ))} dBFS, envelope peak (PEP) ${dbText(ampToDb(peakEnv))} dBFS, RMS I ${dbText(rmsDbfs(powI))} / Q ${dbText(rmsDbfs(powQ))} dBFS`,
      ],
    ];
    for (const t of toneRows) {
      pairs.push([
        `tone ${t.frequencyHz} Hz`,
        `wanted ${dbText(t.wantedDbfs)} dBFS; opposite sideband ${dbText(t.unwantedDbc, 1)} dBc read, predicted ${dbText(-t.predictedSuppressionDb, 1)} dBc`,
      ]);
    }
    if (tones.length > 0) {
      pairs.push([
        'carrier',
        `${carrierDbfs < -200 ? 'below -200' : dbText(carrierDbfs, 1)} dBFS read; DC trims predict ${dbText(toneRows[0]!.predictedCarrierDbc, 1)} dBc re the first tone`,
      ]);
    }
    pairs.push([
      'wrote',
      `${outFile} (${encoding}${rf64 ? ', RF64: the data passes the 4 GiB limit of a plain WAV' : ''}, stereo: left I, right Q, ${fs} Hz, ${frames} frames, ${fixed(frames / fs, 3)} s; I/Q delay through the trims ${gen.trimLatencySamples} samples)`,
    ]);
    if (vectorsFile !== undefined) pairs.push(['vectors', `${vectorsFile} (${frames} rows: n,input,i,q)`]);
    process.stdout.write(formatPairs(pairs));
  }
  for (const w of warnings) process.stderr.write(`${w}\n`);
  // The file may be played into a transmitter: the cautions, once, off stdout when it is JSON.
  printCautions(format === 'json');
  return 0;
}

/** Mean of the channels into `out` (the first `n` frames). */
function toMonoBlock(chans: Float32Array[], n: number, out: Float32Array): void {
  const nc = chans.length;
  if (nc === 1) {
    out.set(chans[0]!.subarray(0, n));
    return;
  }
  out.fill(0, 0, n);
  for (const c of chans) for (let k = 0; k < n; k++) out[k]! += c[k]! / nc;
}

function describeSignal(spec: SignalSpec | null, l: SignalLevels, input?: string): string {
  if (!spec)
    return `input ${input}, mono, peak ${dbText(ampToDb(l.peak))} dBFS, RMS ${dbText(l.rmsDbfs)} dBFS`;
  switch (spec.kind) {
    case 'tone':
      return `tone ${spec.frequencyHz} Hz at ${dbText(l.toneDbfs[0]!)} dBFS`;
    case 'two-tone':
      return `two-tone ${spec.frequenciesHz[0]} Hz + ${spec.frequenciesHz[1]} Hz, ${dbText(l.toneDbfs[0]!)} and ${dbText(l.toneDbfs[1]!)} dBFS each, PEP ${dbText(l.pepDbfs)} dBFS`;
    case 'sweep':
      return `log sweep ${spec.startHz}-${spec.endHz} Hz every ${spec.durationSeconds} s at ${dbText(spec.levelDbfs)} dBFS`;
    case 'noise':
      return `${spec.band ? `noise ${spec.band[0]}-${spec.band[1]} Hz` : 'white noise'}, RMS ${dbText(spec.levelDbfs)} dBFS, seed ${spec.seed ?? 1}`;
  }
}
