// Design time of the closed-form 90° all-pass pair (goal: under 1 ms per design, search included)
// and of designNetwork ('allpass', and 'auto', which also designs the Hilbert FIR candidate).
// Baseline in the same run: the analog prototype's poles computed with @stdlib's ellipk/ellipj
// (a general-purpose library, devDependency) against the library's own AGM/Landen functions.
import { createRequire } from 'node:module';
import { analogAllpassPrototype, analyzeNetwork, designAllpassPair, designNetwork } from '../dist/index.js';
import { timeIt } from './util.mjs';

const require = createRequire(import.meta.url);

const GOAL_MS = 1;

const SPECS = [
  { name: 'voice 48k 300-3000 60dB', spec: { sampleRate: 48000, band: [300, 3000], targetDb: 60 } },
  {
    name: 'voice 8k 300-3400 50dB z^-2',
    spec: { sampleRate: 8000, band: [300, 3400], targetDb: 50, form: 'second-order' },
  },
  {
    name: 'wide 44.1k 20-22030 44dB z^-2',
    spec: { sampleRate: 44100, band: [20, 22030], targetDb: 44, form: 'second-order' },
  },
  { name: 'wide 96k 20-40000 100dB', spec: { sampleRate: 96000, band: [20, 40000], targetDb: 100 } },
];

async function stdlibPoles() {
  // @stdlib packages are ESM-default exports in their main build; load them via require for Node.
  const ellipk = require('@stdlib/math-base-special-ellipk');
  const ellipj = require('@stdlib/math-base-special-ellipj');
  return (n, B) => {
    const kp = 1 / B;
    const m = 1 - kp * kp;
    const K = ellipk(m);
    const poles = [];
    for (let j = 1; j <= n; j++) {
      const [sn, cn] = ellipj(((2 * j - 1) * K) / (2 * n), m);
      poles.push((Math.sqrt(kp) * sn) / cn);
    }
    return poles;
  };
}

export async function run() {
  const out = { goalMsPerDesign: GOAL_MS, designAllpassPair: {}, designNetwork: {} };

  for (const { name, spec } of SPECS) {
    let sections = 0;
    const ms = timeIt(() => {
      sections = designAllpassPair(spec).sections;
    });
    out.designAllpassPair[name] = { ms, sections, ratioToGoal: ms / GOAL_MS };
  }

  const poles = await stdlibPoles();
  const oursMs = timeIt(() => analogAllpassPrototype(12, 500));
  const stdlibMs = timeIt(() => poles(12, 500));
  out.prototypePoles = { n: 12, bandRatio: 500, oursMs, stdlibMs, ratioOursToStdlib: oursMs / stdlibMs };

  const allpassSpec = { sampleRate: 48000, band: [300, 3000], method: 'allpass', targetDb: 60 };
  const apMs = timeIt(() => designNetwork(allpassSpec));
  out.designNetwork['allpass 48k 300-3000 60dB'] = { ms: apMs, ratioToGoal: apMs / GOAL_MS };
  // 'auto' designs the Hilbert FIR candidate too; its share is shown by timing method 'fir' alone.
  for (const [name, spec] of [
    ['48k 300-3000 60dB', { sampleRate: 48000, band: [300, 3000], targetDb: 60 }],
    ['8k 300-3400 50dB', { sampleRate: 8000, band: [300, 3400], targetDb: 50 }],
  ]) {
    let chosen = '';
    const opts = { minMs: 1000, minRuns: 5, warmup: 5 };
    const ms = timeIt(() => {
      const net = designNetwork({ ...spec, method: 'auto' });
      chosen = `${net.kind} ${net.cost.multipliesPerSample} mult`;
    }, opts);
    const firMs = timeIt(() => designNetwork({ ...spec, method: 'fir' }), opts);
    out.designNetwork[`auto ${name}`] = { ms, chosen, firCandidateMs: firMs, firShare: firMs / ms };
  }
  const net = designNetwork(allpassSpec);
  out.analyzeNetwork512Ms = timeIt(() => analyzeNetwork(net));
  return out;
}
