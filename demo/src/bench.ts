/**
 * In-page measurement and calibration. The calibration loop drives the live generator node's trims
 * through createTrimReader (src/webaudio), which waits a fixed number of frames for the path to
 * settle between readings; the reading itself and the calibration are the measure/ and calibrate/
 * modules, composed here in the page (webaudio does not import them: layering).
 *
 * Two benches:
 *  - virtual: the generator's own I/Q, captured, run through a virtual exciter (simulate/) of an
 *    invented hand-built bench, and read as its measuring receiver would (measureSideband on I/Q);
 *  - live: receiver audio coming back through the sound card (getUserMedia), read with
 *    measureSideband at the audio offset where the carrier lands.
 */
import {
  type CalibrationStep,
  type CaptureNode,
  type CaptureResult,
  type CombinedCalibrationResult,
  calibrateMultitone,
  calibrateSidebandAndCarrier,
  createCaptureNode,
  createTrimReader,
  createVirtualExciter,
  drawDevice,
  type ExciterModel,
  liveGuard,
  type MultitoneResult,
  measureSideband,
  measureTones,
  type SidebandReading,
  TOLERANCE_PRESETS,
  TRIM_LIMITS,
  type Trims,
} from 'orthotone';
import { type Running, workletUrl } from './engine.js';

/** Both levels of one reading, dBc. */
export interface Levels {
  sidebandDb: number;
  carrierDb: number;
  /** The wanted tone, dBFS, when the reading knows it (live readings: the guard checks it). */
  wantedDbfs?: number;
}

/** Samples a virtual reading analyses after the exciter has settled (measure/ picks the frames). */
const READ_SAMPLES = 6144;

/**
 * The invented benches the virtual exciter can stand for: the command line's preset name (its
 * `--preset`, simulate/ TOLERANCE_PRESETS), the option text (that name and plain words), a
 * description. `skew-bench` changes its imbalance across the band (skew τ gives a phase error of
 * 2πfτ, docs/REFERENCES.md §6): one pair of trims cannot null the whole band; the correction filter can.
 */
export const VIRTUAL_BENCHES: [string, string, string][] = [
  ['homebrew-bench', 'homebrew-bench: hand-built', '0.5% resistors, 6 mV offsets, 16-bit codec, DC-coupled.'],
  ['one-percent', 'one-percent: kit build', '1% resistors, 2 mV offsets, 16-bit codec.'],
  ['precision', 'precision: careful build', '0.1% resistors, 0.5 mV offsets, 24-bit codec.'],
  [
    'skew-bench',
    'skew-bench: skewed codec',
    'The hand-built bench plus up to 2 µs between the codec channels and ±10% on its filter corners: its imbalance changes across the band.',
  ],
];

/** A device drawn from a preset and a seed. */
export function virtualDevice(preset: string, seed: number): ExciterModel {
  return drawDevice(TOLERANCE_PRESETS[preset] ?? TOLERANCE_PRESETS['homebrew-bench']!, seed);
}

/**
 * Samples the virtual exciter needs to settle on a fresh capture: its latency, its FIR length, and
 * ten time constants of the lowest coupling high-pass (e^−10: −87 dB) when it is AC-coupled.
 */
function settleSamples(model: ExciterModel, fs: number): number {
  const hp = Math.min(...model.couplingHighPassHz.filter((f) => f > 0));
  const tau = Number.isFinite(hp) ? 1 / (2 * Math.PI * hp) : 0;
  return 24 + 64 + 32 + Math.ceil(10 * tau * fs);
}

/** Capture length a virtual reading needs, seconds: the settling span plus the samples read. */
export function virtualCaptureSeconds(model: ExciterModel, fs: number): number {
  return (settleSamples(model, fs) + READ_SAMPLES) / fs;
}

/**
 * Runs each capture of the generator's I/Q through a fresh virtual exciter (its own noise seed per
 * reading, so readings are independent) and returns the receiver's complex baseband after the
 * exciter has settled.
 */
function virtualPath(
  model: ExciterModel,
  opts: { sampleRate: number; seed: number },
): (cap: { channels: Float32Array[] }) => { re: Float32Array; im: Float32Array } {
  let count = 0;
  const skip = settleSamples(model, opts.sampleRate);
  return (cap) => {
    const [i, q] = cap.channels as [Float32Array, Float32Array];
    const exciter = createVirtualExciter(model, {
      sampleRate: opts.sampleRate,
      seed: opts.seed + 7919 * count++,
    });
    const re = new Float32Array(i.length);
    const im = new Float32Array(i.length);
    exciter.process(i, q, re, im);
    return { re: re.subarray(skip), im: im.subarray(skip) };
  };
}

/** Reads captured I/Q through a virtual exciter and its receiver: sideband and carrier, dBc. */
export function virtualReader(
  model: ExciterModel,
  opts: { sampleRate: number; seed: number; toneHz: number; sideband: 'upper' | 'lower' },
): (cap: { channels: Float32Array[] }) => Levels {
  const path = virtualPath(model, opts);
  return (cap) => {
    const { re, im } = path(cap);
    const r = measureSideband(re, im, opts.sampleRate, { toneHz: opts.toneHz, sideband: opts.sideband });
    return { sidebandDb: r.unwantedDbc, carrierDb: r.carrierDbc };
  };
}

/**
 * Reads a multi-tone capture through a virtual exciter: the unwanted sideband of each tone (its
 * mirror about the carrier) relative to that tone, dBc, in the order of `tonesHz`.
 */
export function virtualToneReader(
  model: ExciterModel,
  opts: { sampleRate: number; seed: number; tonesHz: readonly number[]; sideband: 'upper' | 'lower' },
): (cap: { channels: Float32Array[] }) => number[] {
  const path = virtualPath(model, opts);
  const s = opts.sideband === 'upper' ? 1 : -1;
  const freqs = [...opts.tonesHz.map((f) => s * f), ...opts.tonesHz.map((f) => -s * f)];
  const K = opts.tonesHz.length;
  return (cap) => {
    const { re, im } = path(cap);
    const r = measureTones({ i: re, q: im }, opts.sampleRate, freqs);
    return opts.tonesHz.map((_, k) => r[K + k]!.levelDbfs - r[k]!.levelDbfs);
  };
}

/** Receiver-audio options: where the carrier lands and how the receiver demodulates. */
export interface AudioReadingOptions {
  toneHz: number;
  sideband: 'upper' | 'lower';
  offsetHz: number;
  receiverSideband: 'upper' | 'lower';
}

/** Reads receiver audio (mono) with the carrier at `offsetHz`: the whole sideband reading. */
export function readReceiverAudio(
  samples: Float32Array,
  fs: number,
  opts: AudioReadingOptions,
): SidebandReading {
  return measureSideband(samples, null, fs, opts);
}

/** Reads receiver audio (mono) with the carrier at `offsetHz`: sideband and carrier, dBc. */
export function audioReader(
  opts: AudioReadingOptions,
): (cap: { channels: Float32Array[] }, sampleRate: number) => Levels {
  return (cap, fs) => {
    const r = readReceiverAudio(cap.channels[0]!, fs, opts);
    return { sidebandDb: r.unwantedDbc, carrierDb: r.carrierDbc, wantedDbfs: r.wanted.levelDbfs };
  };
}

/**
 * Checks that a tone and a carrier offset put the carrier, the wanted and the unwanted tone inside
 * a receiver's audio (0…Nyquist), and says what to change when they do not; null when they fit.
 */
export function offsetProblem(toneHz: number, offsetHz: number, fs: number): string | null {
  if (!(toneHz > 0) || !(offsetHz > 0))
    return 'give the test tone and the carrier offset in Hz (both above 0)';
  if (offsetHz - toneHz <= 0 || offsetHz + toneHz >= fs / 2) {
    return `with a ${toneHz} Hz tone and the carrier at ${offsetHz} Hz, one sideband falls outside the receiver audio: put the carrier between ${toneHz} and ${fs / 2 - toneHz} Hz, e.g. a 700 Hz tone with the carrier at 1500 Hz (tones at 800 and 2200 Hz)`;
  }
  return null;
}

/** One reading of the calibration as the page reports it. */
export type RunStep = CalibrationStep & {
  carrierDb: number;
  /** Time from setting the trims to the first captured sample, ms (audio-thread frames). */
  waitedMs: number;
};

export interface CalibrationRun {
  result: CombinedCalibrationResult;
  /** A fresh reading with the final trims (longer capture), dBc. */
  verified: Levels;
  /** The reading with the start trims, dBc. */
  start: Levels;
}

export interface RunOptions {
  running: Running;
  /** Where readings come from: the generator's I/Q capture (virtual) or a receiver capture (live). */
  capture: CaptureNode;
  read: (cap: { channels: Float32Array[] }, sampleRate: number) => Levels;
  maxReadings: number;
  noiseDb: number;
  settleSeconds: number;
  captureSeconds: number;
  signal?: AbortSignal;
  onReading?: (step: RunStep) => void;
  /**
   * Live runs: the largest move of each trim from the start (gain dB, phase °, DC full scale); every
   * setting the seeker asks for stays inside. And the guard: stop when the wanted tone is missing
   * or too weak, or a reading is NaN (liveGuard).
   */
  live?: { gainDb: number; phaseDeg: number; dc: number; minWantedDbfs: number };
}

/**
 * Wraps the node and the reader so that each reading also reports how long it actually waited:
 * the context frame when the trims were set, and the first captured frame.
 */
function timed<T>(
  running: Running,
  read: (cap: CaptureResult, fs: number) => T,
): {
  node: Pick<Running['node'], 'setTrims' | 'sampleRate'>;
  read: (cap: CaptureResult, fs: number) => T;
  waits: number[];
} {
  const fs = running.ctx.sampleRate;
  let setFrame = 0;
  const waits: number[] = [];
  return {
    node: {
      sampleRate: running.node.sampleRate,
      setTrims(t, o) {
        setFrame = Math.round(running.ctx.currentTime * fs);
        running.node.setTrims(t, o);
      },
    },
    read(cap, rate) {
      waits.push((1000 * (cap.startFrame - setFrame)) / fs);
      return read(cap, rate);
    },
    waits,
  };
}

/** Runs the combined sideband and carrier calibration on the live node. */
export async function runCalibration(o: RunOptions): Promise<CalibrationRun> {
  const node = o.running.node;
  const t = timed(o.running, o.read);
  const measure = createTrimReader<Levels>({
    node: t.node,
    capture: o.capture,
    read: t.read,
    rampSeconds: 0.01,
    settleSeconds: o.settleSeconds,
    captureSeconds: o.captureSeconds,
    signal: o.signal,
  });
  const startTrims: Trims = node.getTrims();
  const around = (x: number, r: number, lim: number): [number, number] => [
    Math.max(-lim, x - r),
    Math.min(lim, x + r),
  ];
  const live = o.live;
  const result = await calibrateSidebandAndCarrier({
    measure,
    start: startTrims,
    ...(live
      ? {
          bounds: {
            gainDb: around(startTrims.gainDb, live.gainDb, TRIM_LIMITS.gainDb),
            phaseDeg: around(startTrims.phaseDeg, live.phaseDeg, TRIM_LIMITS.phaseDeg),
            dcI: around(startTrims.dcI, live.dc, TRIM_LIMITS.dc),
            dcQ: around(startTrims.dcQ, live.dc, TRIM_LIMITS.dc),
          },
          check: liveGuard(live.minWantedDbfs),
        }
      : {}),
    noiseDb: o.noiseDb,
    maxReadings: o.maxReadings,
    signal: o.signal,
    onReading: (step) => o.onReading?.({ ...step, waitedMs: t.waits[t.waits.length - 1] ?? Number.NaN }),
  });
  if (result.refusal !== undefined) {
    // Nothing a refused run read can be trusted: back to the trims in force before it.
    node.setTrims(startTrims, { rampSeconds: 0.01 });
    throw new Error(`Stopped: ${result.refusal}.`);
  }
  const first = result.sideband.history[0];
  const firstCarrier = result.carrier.history[0];
  node.setTrims(result.trims, { rampSeconds: 0.01 });
  const verify = createTrimReader<Levels>({
    node,
    capture: o.capture,
    read: o.read,
    settleSeconds: o.settleSeconds,
    captureSeconds: Math.max(0.25, o.captureSeconds),
  });
  const verified = await verify(result.trims);
  return {
    result,
    verified,
    start: { sidebandDb: first?.levelDb ?? Number.NaN, carrierDb: firstCarrier?.levelDb ?? Number.NaN },
  };
}

/** `count` tones spread evenly on a log scale over `band` (edges included). */
export function logTones(band: readonly [number, number], count: number): number[] {
  const [lo, hi] = band;
  return Array.from({ length: count }, (_, k) => Math.round(lo * (hi / lo) ** (k / (count - 1))));
}

/** Suppression per verification tone, dB (positive), for three states of the generator. */
export interface MultitoneRun {
  result: MultitoneResult;
  verifyHz: number[];
  /** Start trims, no correction. */
  before: number[];
  /** The best single gain/phase setting for all tones (the centroid of the per-tone nulls), no correction. */
  single: number[];
  singleTrims: Trims;
  /** The correction filter (and the result's trims). */
  after: number[];
}

export interface MultitoneRunOptions {
  running: Running;
  model: ExciterModel;
  seed: number;
  tonesHz: number[];
  verifyHz: number[];
  band: [number, number];
  taps: number;
  maxReadings: number;
  noiseDb: number;
  sideband: 'upper' | 'lower';
  signal?: AbortSignal;
  onReading?: (step: { index: number; trims: Trims; levelsDb: number[] }) => void;
  onStage?: (text: string) => void;
}

/**
 * Multi-tone calibration on the live node against the in-page virtual exciter: the node plays the
 * calibration tones together (its `multitone` source), each reading sets gain and phase, waits,
 * captures the I/Q and reads every tone's unwanted sideband; calibrateMultitone fits the per-tone
 * nulls and designs the correction filter, which is then sent to the node (setCorrection). The
 * band is checked before and after with a denser set of tones.
 */
export async function runMultitoneCalibration(o: MultitoneRunOptions): Promise<MultitoneRun> {
  const { node, ctx, iq } = o.running;
  const fs = ctx.sampleRate;
  const captureSeconds = virtualCaptureSeconds(o.model, fs);
  const settleSeconds = 0.05;
  const verifyRead = virtualToneReader(o.model, {
    sampleRate: fs,
    seed: o.seed + 1,
    tonesHz: o.verifyHz,
    sideband: o.sideband,
  });
  const verifyReader = createTrimReader<number[]>({
    node,
    capture: iq,
    read: verifyRead,
    settleSeconds,
    captureSeconds,
    signal: o.signal,
  });
  const check = async (trims: Partial<Trims>): Promise<number[]> =>
    (await verifyReader(trims)).map((db) => -db);
  o.onStage?.('Reading the band with the start trims…');
  await node.setCorrection(null);
  const start = node.getTrims();
  await node.setSource({ kind: 'multitone', frequenciesHz: o.verifyHz });
  const before = await check(start);
  o.onStage?.(`Reading ${o.tonesHz.length} tones together while the seeker moves gain and phase…`);
  await node.setSource({ kind: 'multitone', frequenciesHz: o.tonesHz });
  const measure = createTrimReader<number[]>({
    node,
    capture: iq,
    read: virtualToneReader(o.model, {
      sampleRate: fs,
      seed: o.seed,
      tonesHz: o.tonesHz,
      sideband: o.sideband,
    }),
    settleSeconds,
    captureSeconds,
    signal: o.signal,
  });
  const result = await calibrateMultitone({
    measure,
    tonesHz: o.tonesHz,
    sampleRate: fs,
    band: o.band,
    taps: o.taps,
    start,
    noiseDb: o.noiseDb,
    maxReadings: o.maxReadings,
    // This measure cannot apply a correction (the node gets it only below), so no verification
    // readings here: the band check below reads the correction running in the node.
    verifyReadings: 0,
    signal: o.signal,
    onReading: o.onReading,
  });
  o.onStage?.('Checking the band: best single trims, then the correction filter…');
  await node.setSource({ kind: 'multitone', frequenciesHz: o.verifyHz });
  const singleTrims = centroidTrims(result, start);
  const single = await check(singleTrims);
  await node.setCorrection(result.correction);
  const after = await check(result.trims);
  return { result, verifyHz: o.verifyHz, before, single, singleTrims, after };
}

/**
 * The single gain/phase setting that minimises the mean image power over the calibration tones:
 * each tone's image power grows as the squared distance from its own null (a bowl of the same
 * curvature, DESIGN.md §6), so the sum is least at the centroid of the nulls. Averaged in dB and
 * degrees, which are linear in the natural units to well within a percent at these sizes.
 */
function centroidTrims(r: MultitoneResult, start: Trims): Trims {
  const n = r.tones.length;
  return {
    ...start,
    gainDb: r.tones.reduce((s, t) => s + t.gainDb, 0) / n,
    phaseDeg: r.tones.reduce((s, t) => s + t.phaseDeg, 0) / n,
  };
}

/**
 * Waits until a freshly opened input delivers a steady signal: an input stream starts some time
 * after it is connected (silence first, then the device's start-up), and a reading whose window
 * straddles that start misreads the sideband through the changed window shape. Reads 0.1 s blocks
 * until two in a row agree in RMS within 0.5 dB (at most 2 s); a silent or unsteady input is left to
 * the run's own guards, which name the problem.
 */
async function waitForSteadyInput(capture: CaptureNode, sampleRate: number): Promise<void> {
  const frames = Math.round(0.1 * sampleRate);
  let last = Number.NaN;
  for (let k = 0; k < 20; k++) {
    const x = (await capture.capture(frames)).channels[0]!;
    let e = 0;
    for (let n = 0; n < x.length; n++) e += x[n]! * x[n]!;
    const db = 10 * Math.log10(e / x.length + 1e-30);
    if (db > -120 && Math.abs(db - last) < 0.5) return;
    last = db;
  }
}

/** A capture node for receiver audio from the sound card input (getUserMedia), mono. */
export async function receiverCapture(
  running: Running,
  deviceId?: string,
): Promise<{ capture: CaptureNode; stop(): void }> {
  const stream = await navigator.mediaDevices.getUserMedia({
    audio: {
      deviceId: deviceId ? { exact: deviceId } : undefined,
      echoCancellation: false,
      noiseSuppression: false,
      autoGainControl: false,
    },
  });
  const src = new MediaStreamAudioSourceNode(running.ctx, { mediaStream: stream });
  const capture = await createCaptureNode(running.ctx, { moduleUrl: workletUrl, channels: 1 });
  const sink = new GainNode(running.ctx, { gain: 0 });
  src.connect(capture.node as unknown as AudioNode);
  (capture.node as unknown as AudioNode).connect(sink);
  sink.connect(running.ctx.destination);
  await waitForSteadyInput(capture, running.ctx.sampleRate);
  return {
    capture,
    stop() {
      for (const t of stream.getTracks()) t.stop();
      capture.dispose();
      src.disconnect();
      sink.disconnect();
    },
  };
}
