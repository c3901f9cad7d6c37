// Firmware kit throughput (issue 10). Two comparisons, each against a baseline run in the same
// process or program:
// 1. C: the kit's ortho_process (section by section over 64-sample chunks) against a plain
//    per-sample cascade of the same sections in the same arithmetic (same tables, rounding and
//    trim stage; bench/firmware_bench.c), both built with cc -std=c99 -O2, for float, q31 and q15.
//    Also operations per sample and the analysis's cycle estimate for a 32-bit MCU with a
//    single-cycle multiply-accumulate.
// 2. JavaScript: the library's all-pass runtime (createNetworkRuntime, 128-sample blocks) against a
//    plain per-sample cascade of the same sections in the same process.
// Network: the 90 dB design for 300-3000 Hz at 48 kHz (9 sections), plus two more draws from the
// stated ranges (60 dB, and 8 kHz voice band) so no figure rests on one design.
import { execFileSync } from 'node:child_process';
import { cpSync, mkdtempSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import {
  analyzeKitArithmetic,
  createNetworkRuntime,
  createQuadratureGenerator,
  designNetwork,
  firmwareKitFiles,
} from '../dist/index.js';
import { timeIt } from './util.mjs';

const here = dirname(fileURLToPath(import.meta.url));
const firmware = join(here, '..', 'firmware');
const FLAGS = ['-std=c99', '-O2', '-Wall', '-Wextra', '-Werror', '-pedantic'];

const SPECS = {
  '90 dB, 300-3000 Hz, 48 kHz': { sampleRate: 48000, band: [300, 3000], targetDb: 90, method: 'allpass' },
  '60 dB, 300-3000 Hz, 48 kHz': { sampleRate: 48000, band: [300, 3000], targetDb: 60, method: 'allpass' },
  '60 dB, 300-3700 Hz, 8 kHz': { sampleRate: 8000, band: [300, 3700], targetDb: 60, method: 'allpass' },
};

function cBench(net, arithmetic) {
  const dir = mkdtempSync(join(tmpdir(), 'ortho-bench-'));
  try {
    const kit = firmwareKitFiles(net, { arithmetic });
    for (const f of readdirSync(firmware))
      if (/^ortho_.*\.[ch]$/.test(f)) cpSync(join(firmware, f), join(dir, f));
    for (const [f, text] of Object.entries(kit.files)) writeFileSync(join(dir, f), text);
    cpSync(join(here, 'firmware_bench.c'), join(dir, 'firmware_bench.c'));
    const exe = join(dir, 'bench');
    execFileSync(
      'cc',
      [...FLAGS, '-o', exe, 'firmware_bench.c', 'ortho_kit.c', 'ortho_coeffs.c', 'ortho_sections.c'],
      { cwd: dir },
    );
    const r = JSON.parse(execFileSync(exe, { encoding: 'utf8' }));
    const a = analyzeKitArithmetic(net, arithmetic);
    return {
      kitNsPerSample: r.kitNsPerSample,
      plainCascadeNsPerSample: r.plainNsPerSample,
      speedupVsPlainCascade: r.plainNsPerSample / r.kitNsPerSample,
      outputsIdentical:
        arithmetic === 'float' ? 'n/a (the kit adds the anti-denormal offset)' : r.mismatches === 0,
      operationsPerSample: a.operationsPerSample,
      cyclesPerSampleEstimateMcu: a.cyclesPerSampleEstimate,
      mcuMHzAtSampleRate: (a.cyclesPerSampleEstimate * net.sampleRate) / 1e6,
    };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/** A plain per-sample cascade in JavaScript: y = a·(x − y[n−m]) + x[n−m], states in arrays. */
function plainCascade(net) {
  const mk = (br) => {
    const a = Float64Array.from(br.sections.map((s) => s.a));
    const m = Uint8Array.from(br.sections.map((s) => s.order));
    const st = new Float64Array(4 * a.length);
    const line = new Float64Array(Math.max(1, br.delay));
    let p = 0;
    const d = br.delay;
    return (x) => {
      let v = x;
      if (d > 0) {
        v = line[p];
        line[p] = x;
        p = p + 1 === d ? 0 : p + 1;
      }
      for (let k = 0; k < a.length; k++) {
        const o = 4 * k;
        const xm = m[k] === 1 ? st[o] : st[o + 1];
        const ym = m[k] === 1 ? st[o + 2] : st[o + 3];
        const y = a[k] * (v - ym) + xm;
        st[o + 1] = st[o];
        st[o] = v;
        st[o + 3] = st[o + 2];
        st[o + 2] = y;
        v = y;
      }
      return v;
    };
  };
  const fi = mk(net.branches.i);
  const fq = mk(net.branches.q);
  return (x, n, oi, oq) => {
    for (let j = 0; j < n; j++) {
      oi[j] = fi(x[j]);
      oq[j] = fq(x[j]);
    }
  };
}

/**
 * A second plain cascade, the way one writes it with objects: each section an object with its
 * coefficient and states as fields (monomorphic, so V8 keeps them in fast properties).
 */
function objectCascade(net) {
  const mk = (br) => {
    const secs = br.sections.map((s) => ({ a: s.a, m: s.order, x1: 0, x2: 0, y1: 0, y2: 0 }));
    const line = new Float64Array(Math.max(1, br.delay));
    let p = 0;
    const d = br.delay;
    return (x) => {
      let v = x;
      if (d > 0) {
        v = line[p];
        line[p] = x;
        p = p + 1 === d ? 0 : p + 1;
      }
      for (const s of secs) {
        if (s.m === 1) {
          const y = s.a * (v - s.y1) + s.x1;
          s.x1 = v;
          s.y1 = y;
          v = y;
        } else {
          const y = s.a * (v - s.y2) + s.x2;
          s.x2 = s.x1;
          s.x1 = v;
          s.y2 = s.y1;
          s.y1 = y;
          v = y;
        }
      }
      return v;
    };
  };
  const fi = mk(net.branches.i);
  const fq = mk(net.branches.q);
  return (x, n, oi, oq) => {
    for (let j = 0; j < n; j++) {
      oi[j] = fi(x[j]);
      oq[j] = fq(x[j]);
    }
  };
}

export function jsBench(net) {
  const N = 48000;
  const x = new Float64Array(N);
  for (let k = 0; k < N; k++) x[k] = Math.sin(k * 0.05) * 0.5 + Math.sin(k * 0.31) * 0.3;
  const oi = new Float64Array(128);
  const oq = new Float64Array(128);
  const rt = createNetworkRuntime(net);
  const plain = plainCascade(net);
  const runRt = () => {
    for (let o = 0; o < N; o += 128) rt.process(x.subarray(o, o + 128), 128, oi, oq);
  };
  const runPlain = () => {
    for (let o = 0; o < N; o += 128) plain(x.subarray(o, o + 128), 128, oi, oq);
  };
  const objects = objectCascade(net);
  const runObjects = () => {
    for (let o = 0; o < N; o += 128) objects(x.subarray(o, o + 128), 128, oi, oq);
  };
  // The generator with default options (network + trim stage), Float32 blocks of 128 as a worklet runs it.
  const gen = createQuadratureGenerator(net);
  const x32 = Float32Array.from(x);
  const gi = new Float32Array(128);
  const gq = new Float32Array(128);
  const runGen = () => {
    for (let o = 0; o < N; o += 128) gen.process(x32.subarray(o, o + 128), gi, gq);
  };
  // Interleave the two several times and keep each one's best median, against drift on a shared machine.
  let tr = Number.POSITIVE_INFINITY;
  let tp = Number.POSITIVE_INFINITY;
  let to = Number.POSITIVE_INFINITY;
  let tg = Number.POSITIVE_INFINITY;
  for (let r = 0; r < 5; r++) {
    tr = Math.min(tr, timeIt(runRt, { minMs: 150 }));
    tp = Math.min(tp, timeIt(runPlain, { minMs: 150 }));
    to = Math.min(to, timeIt(runObjects, { minMs: 150 }));
    tg = Math.min(tg, timeIt(runGen, { minMs: 150 }));
  }
  const base = Math.min(tp, to); // the faster plain cascade is the baseline
  return {
    runtimeNsPerSample: (tr * 1e6) / N,
    generatorDefaultNsPerSample: (tg * 1e6) / N,
    plainCascadeArraysNsPerSample: (tp * 1e6) / N,
    plainCascadeObjectsNsPerSample: (to * 1e6) / N,
    runtimeVsPlainCascade: base / tr,
    generatorDefaultVsPlainCascade: base / tg,
  };
}

export async function run() {
  const out = {};
  for (const [label, spec] of Object.entries(SPECS)) {
    const net = designNetwork(spec);
    const sections = net.branches.i.sections.length + net.branches.q.sections.length;
    out[label] = {
      sections,
      c: { float: cBench(net, 'float'), q31: cBench(net, 'q31'), q15: cBench(net, 'q15') },
      javascript: jsBench(net),
    };
  }
  return out;
}
