// Measuring and simulating: time for one averaged reading of a 65536-sample capture, and the
// virtual exciter's throughput. Baselines run in the same process: a single 65536-point fft.js
// real transform and the averaged spectrum alone (the reading's own first step) for the readings;
// a plain two-channel 64-tap direct-form FIR (the exciter's dominant kernel) for the exciter.
// Figures: ms per reading, samples per second, × real time at 48 kHz, and the share of one
// 128-frame quantum's real-time budget (2.667 ms at 48 kHz).
import { createRequire } from 'node:module';
import {
  computeSpectrum,
  createAnalyzer,
  createVirtualExciter,
  drawDevices,
  homebrewBenchDevice,
  measureSideband,
  measureTones,
  measureTwoTone,
  predictedSuppression,
  TOLERANCE_PRESETS,
} from '../dist/index.js';
import { timeIt } from './util.mjs';

const require = createRequire(import.meta.url);
const FFT = require('fft.js');

const FS = 48000;
const N = 65536;
const QUANTUM = 128;
const QUANTUM_MS = (1000 * QUANTUM) / FS;

function captures() {
  const real = new Float64Array(N);
  const i = new Float64Array(N);
  const q = new Float64Array(N);
  let s = 1;
  const noise = () => {
    s = (s * 16807) % 2147483647;
    return (s / 2147483647 - 0.5) * 2e-5;
  };
  for (let n = 0; n < N; n++) {
    const t = n / FS;
    real[n] = 0.4 * Math.sin(2 * Math.PI * 700 * t) + 0.4 * Math.sin(2 * Math.PI * 1900 * t + 1) + noise();
    i[n] = 0.5 * Math.cos(2 * Math.PI * 1000.3 * t) + 0.001 + noise();
    q[n] = 0.5 * 1.01 * Math.sin(2 * Math.PI * 1000.3 * t + 0.01) + noise();
  }
  return { real, i, q };
}

function directFir(taps, xi, xq, yi, yq) {
  const L = taps.length;
  for (let n = L; n < xi.length; n++) {
    let a = 0;
    let b = 0;
    for (let k = 0; k < L; k++) {
      a += taps[k] * xi[n - k];
      b += taps[k] * xq[n - k];
    }
    yi[n] = a;
    yq[n] = b;
  }
}

export async function run() {
  const { real, i, q } = captures();
  // ---- readings ----
  const fft = new FFT(N);
  const out = fft.createComplexArray();
  const fftMs = timeIt(() => fft.realTransform(out, real));
  const spectrumMs = timeIt(() => computeSpectrum(real, FS, {}));
  const tonesMs = timeIt(() => measureTones(real, FS, [700, 1900, 3100]));
  const sidebandMs = timeIt(() => measureSideband(i, q, FS, { toneHz: 1000 }));
  const twoToneMs = timeIt(() => measureTwoTone(real, FS, [700, 1900]));
  const probe = computeSpectrum(real, FS, {});
  // ---- exciter ----
  const SECONDS = 1;
  const len = FS * SECONDS;
  const xi = new Float32Array(len);
  const xq = new Float32Array(len);
  for (let n = 0; n < len; n++) {
    xi[n] = 0.5 * Math.cos((2 * Math.PI * 1000 * n) / FS);
    xq[n] = 0.5 * Math.sin((2 * Math.PI * 1000 * n) / FS);
  }
  const yr = new Float32Array(len);
  const yi = new Float32Array(len);
  const ex = createVirtualExciter(homebrewBenchDevice(), { sampleRate: FS, seed: 1 });
  const runBlocks = (block) => () => {
    for (let s = 0; s < len; s += block) {
      const e = Math.min(len, s + block);
      ex.process(xi.subarray(s, e), xq.subarray(s, e), yr.subarray(s, e), yi.subarray(s, e));
    }
  };
  const ex128Ms = timeIt(runBlocks(QUANTUM));
  const ex4096Ms = timeIt(runBlocks(4096));
  const taps = new Float64Array(64).map((_, k) => Math.sin(k + 1) / (k + 1));
  const fi = new Float64Array(len);
  const fq = new Float64Array(len);
  const baseMs = timeIt(() => directFir(taps, xi, xq, fi, fq));
  const responseUs =
    (timeIt(() => {
      for (let k = 0; k < 1000; k++) ex.response(700 + k, { gainDb: 0.01, phaseDeg: 0.1 });
    }) /
      1000) *
    1000;
  const an = createAnalyzer(ex, { seed: 1 });
  const analyzerUs = timeIt(() => {
    for (let k = 0; k < 1000; k++) an.readSideband(1000, { gainDb: 0.01 });
  });
  const devices = drawDevices(1000, TOLERANCE_PRESETS['one-percent'], 1);
  const monteCarloMs = timeIt(
    () => {
      for (const d of devices) predictedSuppression(d, [700, 1800, 1900]);
    },
    { minMs: 300, warmup: 1, minRuns: 3 },
  );
  const sps = (ms) => Math.round((len / ms) * 1000);
  return {
    reading: {
      samples: N,
      frameLength: probe.frameLength,
      frames: probe.frames,
      window: probe.window,
      fft65536Ms: +fftMs.toFixed(3),
      spectrumMs: +spectrumMs.toFixed(2),
      measureTones3Ms: +tonesMs.toFixed(2),
      measureSidebandMs: +sidebandMs.toFixed(2),
      measureTwoToneMs: +twoToneMs.toFixed(2),
      sidebandOverSpectrum: +(sidebandMs / spectrumMs).toFixed(2),
      sidebandOverFft: +(sidebandMs / fftMs).toFixed(1),
    },
    exciter: {
      samplesPerSecondBlock128: sps(ex128Ms),
      samplesPerSecondBlock4096: sps(ex4096Ms),
      timesRealTime48k: +(len / FS / (ex128Ms / 1000)).toFixed(1),
      quantumBudgetShare: +(ex128Ms / (len / QUANTUM) / QUANTUM_MS).toFixed(4),
      directFir64x2SamplesPerSecond: sps(baseMs),
      ratioToDirectFir: +(ex128Ms / baseMs).toFixed(2),
      responseMicroseconds: +responseUs.toFixed(2),
      analyzerReadingMicroseconds: +analyzerUs.toFixed(2),
      monteCarlo1000DevicesX3TonesMs: +monteCarloMs.toFixed(1),
    },
  };
}
