/**
 * `orthotone start` (what `npm start` runs): a guided first run on an invented bench of our own.
 * Designs a 90° network for 300–3000 Hz at 48 kHz, renders a two-tone, calibrates a seeded virtual
 * exciter that starts near 34 dB carrier and 44 dB opposite-sideband suppression (figures a
 * hand-tuned home-built exciter reached; common practice, no source), prints a before/after table
 * and writes the network, the profile, C headers and the I/Q WAV into ./out; ends with the
 * transmitting cautions.
 */
import { mkdir } from 'node:fs/promises';
import { resolve } from 'node:path';
import { calibrateSidebandAndCarrier } from '../calibrate/combined.js';
import { createProfile, type ProfileReading } from '../calibrate/profile.js';
import { cautionsText } from '../core/cautions.js';
import { ZERO_TRIMS } from '../core/trims.js';
import { designNetwork } from '../design/design-network.js';
import { networkToCHeader } from '../export/c-header.js';
import { networkToJson } from '../export/network-json.js';
import { profileToCHeader } from '../export/profile-header.js';
import { profileToJson } from '../export/profile-json.js';
import { createQuadratureGenerator } from '../generate/quadrature-generator.js';
import { createSignalSource } from '../generate/sources.js';
import { writeFileSet } from '../node/files.js';
import { encodeWav } from '../node/wav.js';
import { createAnalyzer } from '../simulate/analyzer.js';
import { createVirtualExciter } from '../simulate/exciter.js';
import { HOMEBREW_BENCH_SEED, homebrewBenchDevice } from '../simulate/model.js';
import { parseCommand, seedOpt } from './args.js';
import { formatTable } from './table.js';

const HELP = `usage: orthotone start [--out DIR] [--seed N]

A first run on an invented bench: designs a 90° network (300-3000 Hz at 48 kHz), renders a
two-tone (700 and 1900 Hz), calibrates a virtual hand-built exciter from simulated analyzer
readings, prints the suppression before and after, and writes into DIR (default ./out):
  network.json, network.h      the 90° network document and its C header
  profile.json, calibration.h  the calibration profile and its C header
  two-tone-iq.wav              the two-tone as I/Q (I left, Q right), trims applied, 32-bit float

  --out DIR   output folder (default ./out)
  --seed N    seed of the simulated analyzer's reading noise (default 1)
`;

const OPTIONS = {
  out: { type: 'string' },
  seed: { type: 'string' },
  help: { type: 'boolean', short: 'h' },
} as const;

const FS = 48000;
const BAND: [number, number] = [300, 3000];
const TONE_HZ = 1000;
const TONE_AMPLITUDE = 0.5;

/**
 * `orthotone start` entry point; returns the exit status (0).
 * @throws {UsageError} for bad options; OrthotoneError only on an internal fault (the demo's own
 *   settings are fixed and valid);
 *   a Node file-system error when an output file cannot be written. The CLI's `main` (through
 *   `runGuarded`) turns UsageError and OrthotoneError into one line on stderr and exit status 2.
 */
export async function run(argv: string[]): Promise<number> {
  const { values: v } = parseCommand(argv, OPTIONS);
  if (v.help) {
    process.stdout.write(HELP);
    return 0;
  }
  const outDir = resolve((v.out as string | undefined) ?? 'out');
  const seed = seedOpt('seed', v.seed, 1);
  const say = (s: string): void => {
    process.stdout.write(s);
  };
  // The cautions are printed once, at the end beside the files that may be played into a transmitter.

  // 1. The network.
  const net = designNetwork({ sampleRate: FS, band: BAND, method: 'auto', targetDb: 60 });
  say(
    `1. network: ${net.kind}, ${BAND[0]}-${BAND[1]} Hz at ${FS} Hz, predicted worst suppression ${net.predicted.worstSuppressionDb.toFixed(1)} dB, ${net.cost.multipliesPerSample} multiplies/sample, latency ${net.cost.latencySamples.toFixed(1)} samples\n`,
  );

  // 2. The bench: a seeded virtual exciter near the hand-built figures, and an analyzer.
  const model = homebrewBenchDevice();
  const exciter = createVirtualExciter(model, { sampleRate: FS, seed });
  const analyzer = createAnalyzer(exciter, { seed, floorDbc: -70, noiseDb: 0.5 });
  const before = exciter.response(TONE_HZ, ZERO_TRIMS, 1);
  say(
    `2. bench: virtual hand-built exciter (homebrew-bench device ${HOMEBREW_BENCH_SEED}); analyzer floor -70 dBc, reading noise 0.5 dB\n`,
  );

  // 3. Calibration: each reading returns both levels; the tone level is not told.
  say(`3. calibrating at ${TONE_HZ} Hz from analyzer readings (each reading serves both nulls)...\n`);
  const cal = await calibrateSidebandAndCarrier({
    maxReadings: 16,
    measure: (t) => {
      const r = analyzer.readBoth(TONE_HZ, t, TONE_AMPLITUDE);
      return { sidebandDb: r.sidebandDbc, carrierDb: r.carrierDbc };
    },
    onReading: (s) => {
      say(
        `   reading ${String(s.index).padStart(2)}: sideband ${s.levelDb.toFixed(1).padStart(6)} dBc, carrier ${s.carrierDb.toFixed(1).padStart(6)} dBc\n`,
      );
    },
  });
  const after = exciter.response(TONE_HZ, cal.trims, 1);
  const at = (hz: number, t = cal.trims) => -exciter.response(hz, t, 1).unwantedDbc;
  say('\n');
  say(
    formatTable([
      ['at 1 kHz, full-scale tone', 'before', 'after'],
      [
        'carrier suppression',
        `${(-before.carrierDbc).toFixed(1)} dB`,
        `${(-after.carrierDbc).toFixed(1)} dB`,
      ],
      [
        'unwanted sideband suppression',
        `${(-before.unwantedDbc).toFixed(1)} dB`,
        `${(-after.unwantedDbc).toFixed(1)} dB`,
      ],
      [
        'two-tone: sideband at 700 / 1900 Hz',
        `${at(700, ZERO_TRIMS).toFixed(1)} / ${at(1900, ZERO_TRIMS).toFixed(1)} dB`,
        `${at(700).toFixed(1)} / ${at(1900).toFixed(1)} dB`,
      ],
      ['readings used', '', String(cal.readings)],
    ]),
  );
  say(
    "   (figures from the virtual exciter's noiseless response; the analyzer itself reads no deeper than its -70 dBc floor)\n",
  );
  for (const d of [...cal.sideband.diagnosis, ...cal.carrier.diagnosis])
    say(`   note [${d.code}]: ${d.message}\n`);
  say(
    `   trims: gain ${cal.trims.gainDb.toFixed(4)} dB, phase ${cal.trims.phaseDeg.toFixed(4)}°, dcI ${cal.trims.dcI.toExponential(3)}, dcQ ${cal.trims.dcQ.toExponential(3)} (full scale)\n`,
  );

  // 4. The two-tone, through the generator with the trims.
  const seconds = 2;
  const n = FS * seconds;
  const source = createSignalSource({ kind: 'two-tone', frequenciesHz: [700, 1900], levelDbfs: -7 }, FS);
  const gen = createQuadratureGenerator(net, { trims: cal.trims });
  const block = 512;
  const audio = new Float32Array(block);
  const i = new Float32Array(n);
  const q = new Float32Array(n);
  for (let k = 0; k < n; k += block) {
    const m = Math.min(block, n - k);
    const a = audio.subarray(0, m);
    source.fill(a);
    gen.process(a, i.subarray(k, k + m), q.subarray(k, k + m));
  }

  // 5. Files.
  await mkdir(outDir, { recursive: true });
  const readings: ProfileReading[] = [
    ...cal.sideband.history.map((h) => ({ quantity: 'sideband', trims: h.trims, levelDb: h.levelDb })),
    ...cal.carrier.history.map((h) => ({ quantity: 'carrier', trims: h.trims, levelDb: h.levelDb })),
  ].map((r) => ({ ...r, levelDb: Number.isFinite(r.levelDb) ? r.levelDb : null }));
  const profile = createProfile({
    sampleRate: FS,
    toneHz: TONE_HZ,
    trims: cal.trims,
    network: net,
    readings,
    results: {
      sidebandDb: -after.unwantedDbc,
      carrierDb: -after.carrierDbc,
      readingsUsed: cal.readings,
      source: 'simulated',
    },
    note: 'orthotone start: virtual hand-built exciter (invented bench), simulated analyzer readings',
  });
  const files: [string, string][] = [
    ['network.json', networkToJson(net)],
    ['network.h', networkToCHeader(net)],
    ['profile.json', profileToJson(profile)],
    ['calibration.h', profileToCHeader(profile)],
  ];
  writeFileSet(outDir, [
    ...files.map(([name, text]) => [name, Buffer.from(text, 'utf8')] as [string, Uint8Array]),
    ['two-tone-iq.wav', encodeWav([i, q], FS, 'float32').bytes],
  ]);
  say(`\n4. wrote ${outDir}: ${[...files.map(([f]) => f), 'two-tone-iq.wav'].join(', ')}\n`);
  say(
    "   next: 'orthotone calibrate --prompt' to calibrate a real exciter from your analyzer readings,\n   'orthotone calibrate --simulate' to rehearse on other virtual devices.\n\n",
  );
  say(`${cautionsText()}\n`);
  return 0;
}
