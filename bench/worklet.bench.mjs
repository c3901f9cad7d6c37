// Cost of the AudioWorklet processor in real headless Chromium (Debian's /usr/bin/chromium, driven by
// playwright-core), measured in the page: wall time of OfflineAudioContext renders through the built
// dist/worklet/processor.js, per 128-frame render quantum, as a share of the quantum's real-time
// budget (128 / 48000 s = 2.67 ms; goal: at most 2% for a 60 dB all-pass network, STYLE.md habit 10).
// Baselines in the same run and page: a graph with no worklet (OscillatorNode → destination) and an
// empty worklet (the capture processor passing silence through), so the generator's own share is
// the difference. Needs `npm run build` first (npm run bench does it).
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import http from 'node:http';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { chromium } from 'playwright-core';
import { designNetwork } from '../dist/index.js';

const here = dirname(fileURLToPath(import.meta.url));
const PROCESSOR = join(here, '../dist/worklet/processor.js');
const FS = 48000;
const SECONDS = 20;
const REPEATS = 5;
const QUANTUM_BUDGET_US = (128 / FS) * 1e6;
const GOAL_PCT = 2;

// Runs in the page: median wall time (ms) of `repeats` offline renders of `seconds` for one graph.
async function pageMeasure({ kind, network, seconds, repeats, sampleRate }) {
  const times = [];
  for (let r = 0; r <= repeats; r++) {
    const ctx = new OfflineAudioContext({ numberOfChannels: 2, length: seconds * sampleRate, sampleRate });
    await ctx.audioWorklet.addModule('/processor.js');
    if (kind === 'none') {
      const osc = new OscillatorNode(ctx, { frequency: 1000 });
      osc.connect(ctx.destination);
      osc.start();
    } else if (kind === 'empty') {
      const n = new AudioWorkletNode(ctx, 'orthotone-capture', {
        numberOfInputs: 1,
        numberOfOutputs: 1,
        outputChannelCount: [2],
        channelCount: 2,
        channelCountMode: 'explicit',
        processorOptions: { channels: 2 },
      });
      const osc = new OscillatorNode(ctx, { frequency: 1000 });
      osc.connect(n);
      n.connect(ctx.destination);
      osc.start();
    } else {
      const n = new AudioWorkletNode(ctx, 'orthotone-quadrature', {
        numberOfInputs: 1,
        numberOfOutputs: 1,
        outputChannelCount: [2],
        channelCount: 1,
        channelCountMode: 'explicit',
        parameterData: { levelDb: -6 },
        processorOptions: {
          network,
          sideband: 'upper',
          correction: null,
          source: { kind: 'tone', frequencyHz: 1000 },
          crossfadeSamples: 1024,
        },
      });
      n.connect(ctx.destination);
    }
    const t0 = performance.now();
    await ctx.startRendering();
    const ms = performance.now() - t0;
    if (r > 0) times.push(ms); // the first render warms up the JIT
  }
  times.sort((a, b) => a - b);
  return times[Math.floor(times.length / 2)];
}

export async function run() {
  if (!existsSync(PROCESSOR)) throw new Error(`${PROCESSOR} is missing: run npm run build first`);
  const body = readFileSync(PROCESSOR);
  const server = http.createServer((req, res) => {
    if (req.url === '/processor.js') {
      res.setHeader('content-type', 'text/javascript');
      res.end(body);
    } else {
      res.setHeader('content-type', 'text/html');
      res.end('<!doctype html><html><head><link rel="icon" href="data:,"></head><body>bench</body></html>');
    }
  });
  await new Promise((r) => server.listen(0, '127.0.0.1', r));
  const port = server.address().port;
  const dir = mkdtempSync(join(tmpdir(), 'orthotone-bench-'));
  const context = await chromium.launchPersistentContext(dir, {
    executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
    headless: true,
    args: [
      '--no-sandbox',
      '--disable-gpu',
      '--disable-quic',
      '--no-first-run',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
    ],
  });
  try {
    const page = context.pages()[0] ?? (await context.newPage());
    await page.goto(`http://127.0.0.1:${port}/`);
    const allpass60 = designNetwork({ sampleRate: FS, band: [300, 3000], method: 'allpass', targetDb: 60 });
    const fir60 = designNetwork({ sampleRate: FS, band: [300, 3000], method: 'fir', targetDb: 60 });
    const quanta = (SECONDS * FS) / 128;
    const measure = async (kind, network) => {
      const ms = await page.evaluate(pageMeasure, {
        kind,
        network,
        seconds: SECONDS,
        repeats: REPEATS,
        sampleRate: FS,
      });
      return { renderMs: ms, perQuantumUs: (ms * 1000) / quanta };
    };
    const none = await measure('none');
    const empty = await measure('empty');
    const ap = await measure('quadrature', allpass60);
    const fir = await measure('quadrature', fir60);
    const report = (m, net) => {
      const ownUs = m.perQuantumUs - empty.perQuantumUs;
      return {
        network: `${net.kind}, ${net.kind === 'fir' ? `${net.taps.length} taps` : `${net.branches.i.sections.length + net.branches.q.sections.length} sections`}, ${net.predicted.worstSuppressionDb.toFixed(1)} dB, ${net.cost.multipliesPerSample} multiplies/sample`,
        perQuantumUs: round(m.perQuantumUs),
        processUsAboveEmptyWorklet: round(ownUs),
        budgetPct: round((100 * m.perQuantumUs) / QUANTUM_BUDGET_US),
        processBudgetPct: round((100 * ownUs) / QUANTUM_BUDGET_US),
        ratioToEmptyWorklet: round(m.perQuantumUs / empty.perQuantumUs),
      };
    };
    const allpass = report(ap, allpass60);
    return {
      method: `median of ${REPEATS} OfflineAudioContext renders of ${SECONDS} s at ${FS} Hz in headless Chromium; per 128-frame quantum`,
      quantumBudgetUs: round(QUANTUM_BUDGET_US),
      browser: context.browser()?.version() ?? 'chromium',
      noWorklet: { perQuantumUs: round(none.perQuantumUs) },
      emptyWorklet: { perQuantumUs: round(empty.perQuantumUs) },
      allpass60: allpass,
      fir60: report(fir, fir60),
      goal: `process() of the 60 dB all-pass network ≤ ${GOAL_PCT}% of the quantum budget`,
      meetsGoal: allpass.processBudgetPct <= GOAL_PCT,
    };
  } finally {
    await context.close();
    rmSync(dir, { recursive: true, force: true });
    server.close();
  }
}

function round(x) {
  return Math.round(x * 1000) / 1000;
}
