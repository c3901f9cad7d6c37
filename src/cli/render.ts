/**
 * `orthotone render`: run a test signal or a mono recording through a 90° network and the trims, and
 * write the I/Q result as a stereo WAV (left I, right Q). Prints the signal's levels, the realised
 * output levels read back from what was written, the predicted suppression, and the transmitting
 * cautions.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { cautionsText } from '../core/cautions.js';
import { OrthotoneError } from '../core/errors.js';
import type { Trims } from '../core/trims.js';
import { validateTrims, ZERO_TRIMS } from '../core/trims.js';
import { ampToDb, dbToAmp, powToDb } from '../core/units.js';
import { designNetwork } from '../design/design-network.js';
import type { Network } from '../design/network.js';
import { parseNetworkJson } from '../export/network-json.js';
import { renderKit } from '../generate/fixed-point.js';
import { predictCarrierDbc, predictOutputPeaks, predictSuppressionDb } from '../generate/prediction.js';
import { createQuadratureGenerator } from '../generate/quadrature-generator.js';
import { createSignalSource, type SignalLevels, type SignalSpec, signalLevels } from '../generate/sources.js';
import type { Sideband } from '../generate/trim-stage.js';
import { readWavFile, toMono, type WavEncoding, writeIqWavFile } from '../node/wav.js';
import { choiceOpt, numberListOpt, numberOpt, parseCommand, UsageError } from './args.js';
import { arithmeticOpt, DESIGN_OPTIONS, specFromOptions } from './design.js';
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
levels and length:
  --level DBFS           tone level (each tone for two-tone), noise RMS, or the input's new peak;
                         defaults: tone -6, two-tone -12 each, sweep -6, noise -20, input unchanged
  --duration S           seconds (default 5; an input's own length)
  --seed N               noise seed (default 1)
trims and sideband:
  --sideband S           upper (default) | lower
  --gain-db DB           Q gain relative to I, dB (|x| <= 6)
  --phase-deg DEG        phase trim, degrees (|x| <= 45)
  --skew S               Q delay relative to I, samples, fractional (|x| <= 16)
  --dc-i X, --dc-q X     DC added to I and Q, full-scale units (|x| <= 1)
output:
  --out FILE.wav         the I/Q file to write (required)
  --encoding E           float32 (default) | int24 | int16
  --vectors FILE.csv     also write test vectors for a firmware port: n,input,i,q per sample
                         (float32 values, 9 significant digits; trims and network as above;
                         with --arithmetic, the kit's exact output in round-trip digits)
arithmetic:
  --arithmetic A         double (default) | float | q31 | q15: run the firmware kit's arithmetic,
                         bit-exact with 'orthotone firmware' kits (without a network file, the
                         design also meets --target with that arithmetic's coefficients)
  --max-skew N           the kit's skew stage size, whole samples (as 'firmware --max-skew';
                         default: the skew rounded up)
  --json                 print the report as JSON
design options (without a network file):
  --rate HZ --band LO:HI --method fir|allpass|auto --target DB --taps N --sections N
  --fir-method remez|kaiser --form first-order|second-order --coefficients float64|float32|q31|q15
  -h, --help             this help
`;

/** Complex tone amplitude of I + jQ at `hz` with a Hann window: `|X|/Σw` (REFERENCES.md §4). */
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
    const seed = numberOpt('seed', v.seed) ?? 1;
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
 * Writes firmware test vectors as CSV: `n,input,i,q`, one row per sample, float32 values at 9
 * significant digits (enough to round-trip binary32), RFC 4180 layout.
 * @throws Node file-system errors when FILE cannot be written (reported as one line by the CLI).
 */
function writeVectors(file: string, x: Float32Array, i: Float32Array, q: Float32Array): void {
  const g = (v: number): string => String(Number(v.toPrecision(9)));
  const rows = new Array<string>(x.length + 1);
  rows[0] = 'n,input,i,q';
  for (let k = 0; k < x.length; k++) rows[k + 1] = `${k},${g(x[k]!)},${g(i[k]!)},${g(q[k]!)}`;
  writeFileSync(file, `${rows.join('\n')}\n`);
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
      'max-skew': { type: 'string' },
      json: { type: 'boolean' },
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
  const encoding = choiceOpt<WavEncoding>('encoding', v.encoding, ['float32', 'int24', 'int16'], 'float32');
  const sideband = choiceOpt<Sideband>('sideband', v.sideband, ['upper', 'lower'], 'upper');
  const trims = trimsFromOptions(v);

  // Input recording first: without a network file its rate sets the design rate.
  let input: Float32Array | null = null;
  let inputRate = 0;
  if (typeof v.input === 'string') {
    let d: Awaited<ReturnType<typeof readWavFile>>;
    try {
      d = await readWavFile(v.input);
    } catch (e) {
      if (e instanceof OrthotoneError) throw e;
      throw new UsageError(
        `cannot read ${v.input}: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`,
      );
    }
    input = toMono(d);
    inputRate = d.sampleRate;
  }

  let net: Network;
  const file = positionals[0];
  if (file !== undefined) {
    const designGiven = Object.keys(DESIGN_OPTIONS).filter((k) => k !== 'arithmetic' && v[k] !== undefined);
    if (designGiven.length > 0) {
      throw new UsageError(
        `a network file was given: drop the design options (--${designGiven.join(', --')})`,
      );
    }
    let text: string;
    try {
      text = readFileSync(file, 'utf8');
    } catch (e) {
      throw new UsageError(
        `cannot read ${file}: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`,
      );
    }
    net = parseNetworkJson(text);
  } else {
    const opts = { ...v };
    if (input && opts.rate === undefined) opts.rate = String(inputRate);
    net = designNetwork(specFromOptions(opts));
  }
  const fs = net.sampleRate;
  if (input && inputRate !== fs) {
    throw new UsageError(
      `${v.input as string} is at ${inputRate} Hz but the network runs at ${fs} Hz: resample the input or design for ${inputRate} Hz`,
    );
  }

  const spec = signalFromOptions(v, net);
  let levels: SignalLevels;
  let frames: number;
  if (spec) {
    levels = signalLevels(spec, fs);
    const duration = numberOpt('duration', v.duration) ?? 5;
    if (!(duration > 0 && duration <= 3600))
      throw new UsageError(`--duration ${duration} must be from 0 to 3600 s`);
    frames = Math.round(duration * fs);
  } else {
    const x = input!;
    let peak = 0;
    let pow = 0;
    for (let k = 0; k < x.length; k++) {
      const a = Math.abs(x[k]!);
      if (a > peak) peak = a;
      pow += x[k]! * x[k]!;
    }
    const level = numberOpt('level', v.level);
    if (level !== undefined) {
      if (peak === 0) throw new UsageError(`${v.input as string} is silent: --level cannot scale it`);
      const g = dbToAmp(level) / peak;
      for (let k = 0; k < x.length; k++) x[k]! *= g;
      pow *= g * g;
      peak *= g;
    }
    levels = {
      toneDbfs: [],
      pepDbfs: Number.NaN,
      rmsDbfs: powToDb((2 * pow) / Math.max(1, x.length)),
      peak,
    };
    frames = x.length;
  }

  // Before rendering: will signal plus trims exceed full scale?
  const predictedPeaks = predictOutputPeaks(levels.peak, trims, net);

  const arithmetic = arithmeticOpt(v.arithmetic);
  const maxSkew = numberOpt('max-skew', v['max-skew']) ?? Math.ceil(Math.abs(trims.skewSamples ?? 0));
  const gen = createQuadratureGenerator(
    net,
    arithmetic === 'double' ? { trims, sideband } : { trims, sideband, arithmetic, maxSkewSamples: maxSkew },
  );
  const i = new Float32Array(frames);
  const q = new Float32Array(frames);
  const x = spec ? new Float32Array(frames) : input!;
  if (spec) {
    const src = createSignalSource(spec, fs);
    for (let o = 0; o < frames; o += 4096) {
      const n = Math.min(4096, frames - o);
      const b = x.subarray(o, o + n);
      src.fill(b);
      gen.process(b, i.subarray(o, o + n), q.subarray(o, o + n));
    }
  } else {
    gen.process(x, i, q);
  }
  const stats = { ...gen.stats };
  const report = await writeIqWavFile(v.out, i, q, fs, encoding);
  if (typeof v.vectors === 'string') {
    if (arithmetic === 'double') writeVectors(v.vectors, x, i, q);
    else {
      // The kit's own output, exactly (Q31 does not fit the float32 WAV samples), in digits that
      // round-trip a double, so a host-check or firmware fed the same input can match bit for bit.
      const k = renderKit(net, arithmetic, { ...ZERO_TRIMS, ...trims }, sideband === 'lower', maxSkew, x);
      const rows = new Array<string>(x.length + 1);
      rows[0] = 'n,input,i,q';
      for (let n = 0; n < x.length; n++)
        rows[n + 1] = `${n},${String(x[n])},${String(k.i[n])},${String(k.q[n])}`;
      writeFileSync(v.vectors, `${rows.join('\n')}\n`);
    }
  }

  // Realised levels, read back from the output.
  let peakI = 0;
  let peakQ = 0;
  let peakEnv = 0;
  let powI = 0;
  let powQ = 0;
  for (let k = 0; k < frames; k++) {
    const a = i[k]!;
    const b = q[k]!;
    peakI = Math.max(peakI, Math.abs(a));
    peakQ = Math.max(peakQ, Math.abs(b));
    peakEnv = Math.max(peakEnv, Math.hypot(a, b));
    powI += a * a;
    powQ += b * b;
  }
  const rmsDbfs = (p: number) => powToDb((2 * p) / Math.max(1, frames));
  const tones =
    spec?.kind === 'tone' ? [spec.frequencyHz] : spec?.kind === 'two-tone' ? spec.frequenciesHz : [];
  // Skip the switch-on transient (network and trim delays, several times over).
  const settle = Math.min(Math.floor(frames / 2), Math.round(0.05 * fs) + 4 * gen.trimLatencySamples);
  const nRead = Math.min(frames - settle, 1 << 17);
  const sign = sideband === 'lower' ? -1 : 1;
  const toneRows = tones.map((f) => {
    const wanted = nRead > 256 ? complexToneAmplitude(i, q, settle, nRead, sign * f, fs) : Number.NaN;
    const image = nRead > 256 ? complexToneAmplitude(i, q, settle, nRead, -sign * f, fs) : Number.NaN;
    return {
      frequencyHz: f,
      wantedDbfs: ampToDb(wanted),
      unwantedDbc: ampToDb(image / wanted),
      predictedSuppressionDb: predictSuppressionDb(net, f, trims, sideband),
      predictedCarrierDbc: predictCarrierDbc(trims, dbToAmp(levels.toneDbfs[tones.indexOf(f)] ?? 0)),
    };
  });
  const carrierDbfs = nRead > 256 ? ampToDb(complexToneAmplitude(i, q, settle, nRead, 0, fs)) : Number.NaN;

  const warnings: string[] = [];
  if (predictedPeaks.overFullScale || stats.overFullScale > 0) {
    warnings.push(
      `WARNING: signal plus trims exceed full scale: predicted peak ${dbText(predictedPeaks.peakDbfs)} dBFS, ` +
        `${stats.overFullScale} output samples over full scale (peak ${dbText(ampToDb(stats.peak))} dBFS). ` +
        (encoding === 'float32'
          ? 'The float file keeps them, but a DAC or player will clip: lower --level or the gain trim.'
          : `${report.clippedSamples} samples were clipped in the ${encoding} file: lower --level or the gain trim.`),
    );
  }
  if (stats.nonFiniteInputs > 0)
    warnings.push(`WARNING: ${stats.nonFiniteInputs} non-finite input samples were replaced by 0.`);

  const result = {
    out: v.out,
    encoding,
    sampleRate: fs,
    frames,
    network: {
      kind: net.kind,
      band: net.band,
      predicted: net.predicted,
      latencySamples: net.cost.latencySamples,
    },
    signal: spec ?? { kind: 'input', file: v.input },
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
  if (v.json) {
    process.stdout.write(`${JSON.stringify(result, null, 2)}\n`);
  } else {
    const pairs: [string, string][] = [
      [
        'network',
        `${net.kind}, band ${net.band[0]}-${net.band[1]} Hz at ${fs} Hz; predicted worst suppression ${dbText(net.predicted.worstSuppressionDb)} dB over the band`,
      ],
      ['signal', describeSignal(spec, levels, v.input as string | undefined)],
      [
        'trims',
        `gain ${fixed(result.trims.gainDb, 3)} dB, phase ${fixed(result.trims.phaseDeg, 3)} deg, skew ${fixed(result.trims.skewSamples, 3)} samples, DC I ${result.trims.dcI}, DC Q ${result.trims.dcQ}; ${sideband} sideband`,
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
      `${v.out} (${encoding}, stereo: left I, right Q, ${fs} Hz, ${frames} frames, ${fixed(frames / fs, 3)} s; I/Q delay through the trims ${gen.trimLatencySamples} samples)`,
    ]);
    if (typeof v.vectors === 'string') pairs.push(['vectors', `${v.vectors} (${frames} rows: n,input,i,q)`]);
    process.stdout.write(formatPairs(pairs));
  }
  for (const w of warnings) process.stderr.write(`${w}\n`);
  process.stdout.write(`\n${cautionsText()}\n`);
  return 0;
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
