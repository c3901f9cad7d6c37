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
import { type CombinedCalibrationResult, calibrateSidebandAndCarrier } from '../../src/calibrate/combined.js';
import type { CalibrationStep } from '../../src/calibrate/trim-calibration.js';
import type { Trims } from '../../src/core/trims.js';
import { measureSideband } from '../../src/measure/sideband.js';
import { createVirtualExciter } from '../../src/simulate/exciter.js';
import { drawDevice, type ExciterModel, TOLERANCE_PRESETS } from '../../src/simulate/model.js';
import { type CaptureNode, createCaptureNode } from '../../src/webaudio/capture-node.js';
import { createTrimReader } from '../../src/webaudio/trim-reader.js';
import { type Running, workletUrl } from './engine.js';

/** Both levels of one reading, dBc. */
export interface Levels {
  sidebandDb: number;
  carrierDb: number;
}

/**
 * Frames of 4096 samples: the measure module's longer power-of-two frames (8192, 16384) were seen
 * to read the unwanted tone a bin or two off while this demo was written; 4096 reads it exactly.
 */
const FRAME = 4096;

/** The invented benches the virtual exciter can stand for (tolerance presets of simulate/). */
export const VIRTUAL_BENCHES: [string, string][] = [
  ['homebrew-bench', 'Hand-built bench: 0.5% resistors, 6 mV offsets, 16-bit codec'],
  ['one-percent', 'Kit build: 1% resistors, 2 mV offsets, 16-bit codec'],
  ['precision', 'Precision build: 0.1% resistors, 0.5 mV offsets, 24-bit codec'],
];

/** A device drawn from a preset and a seed. */
export function virtualDevice(preset: string, seed: number): ExciterModel {
  const t = TOLERANCE_PRESETS[preset] ?? TOLERANCE_PRESETS['homebrew-bench']!;
  return drawDevice(t, seed);
}

/** Reads captured I/Q through a virtual exciter and its receiver (continuous between readings). */
export function virtualReader(
  model: ExciterModel,
  opts: { sampleRate: number; seed: number; toneHz: number; sideband: 'upper' | 'lower' },
): (cap: { channels: Float32Array[] }) => Levels {
  const exciter = createVirtualExciter(model, { sampleRate: opts.sampleRate, seed: opts.seed });
  let re = new Float32Array(0);
  let im = new Float32Array(0);
  return (cap) => {
    const [i, q] = cap.channels as [Float32Array, Float32Array];
    if (re.length !== i.length) {
      re = new Float32Array(i.length);
      im = new Float32Array(i.length);
    }
    exciter.process(i, q, re, im);
    // Each capture starts where the last one stopped: skip the exciter's filter transient.
    const skip = 256 + exciter.latencySamples;
    const r = measureSideband(re.subarray(skip), im.subarray(skip), opts.sampleRate, {
      toneHz: opts.toneHz,
      sideband: opts.sideband,
      frameLength: FRAME,
    });
    return { sidebandDb: r.unwantedDbc, carrierDb: r.carrierDbc };
  };
}

/** Reads receiver audio (mono) with the carrier at `offsetHz`. */
export function audioReader(opts: {
  toneHz: number;
  sideband: 'upper' | 'lower';
  offsetHz: number;
  receiverSideband: 'upper' | 'lower';
}): (cap: { channels: Float32Array[] }, sampleRate: number) => Levels {
  return (cap, fs) => {
    const r = measureSideband(cap.channels[0]!, null, fs, { ...opts, frameLength: FRAME });
    return { sidebandDb: r.unwantedDbc, carrierDb: r.carrierDbc };
  };
}

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
  onReading?: (step: CalibrationStep & { carrierDb: number }) => void;
}

/** Runs the combined sideband and carrier calibration on the live node. */
export async function runCalibration(o: RunOptions): Promise<CalibrationRun> {
  const node = o.running.node;
  const measure = createTrimReader<Levels>({
    node,
    capture: o.capture,
    read: o.read,
    rampSeconds: 0.01,
    settleSeconds: o.settleSeconds,
    captureSeconds: o.captureSeconds,
    signal: o.signal,
  });
  const startTrims: Trims = node.getTrims();
  const result = await calibrateSidebandAndCarrier({
    measure,
    start: startTrims,
    noiseDb: o.noiseDb,
    maxReadings: o.maxReadings,
    signal: o.signal,
    onReading: o.onReading,
  });
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
  return {
    capture,
    stop() {
      for (const t of stream.getTracks()) t.stop();
      capture.dispose();
      src.disconnect();
    },
  };
}
