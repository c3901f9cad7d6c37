// Files: WAV packing and the streaming commands (issue 12 item 5).
// - Packing: our block encoder (dist/node.js encodeWav) against wavefile's per-sample packing (what
//   the CLI used before; the baseline, measured in the same run), float32 and int24, frames per
//   second and the ratio.
// - render of a tone (float32 and int24, 48 kHz, DURATION_S seconds) as a child process: × real
//   time from the child's CPU time (user + system; the honest figure on a shared machine) and from
//   its wall time, and its peak RSS.
// - Bounded memory: peak RSS of a one-hour render at 192 kHz (float32: 5.5 GB, written as RF64) and
//   of `measure` on a one-hour 48 kHz capture, against a 10-second run of the same command (the
//   ratio shows memory does not grow with length). Goals: < 200 MB; ≥ 200× real time.
// Set FILES_BENCH_SECONDS (default 3600) to shorten the long runs (e.g. 600 for a quick look).
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { designNetwork, networkToJson } from '../dist/index.js';
import { encodeWav } from '../dist/node.js';
import { timeIt } from './util.mjs';

const require = createRequire(import.meta.url);
const wavefile = require('wavefile');
const here = dirname(fileURLToPath(import.meta.url));
const CLI = join(here, '../dist/cli.js');
const LONG_S = Number(process.env.FILES_BENCH_SECONDS ?? 3600);
const DURATION_S = 600;

// Prints the child's resource usage as JSON on its last stderr line.
const HOOK =
  'data:text/javascript,process.on("exit",()=>process.stderr.write("\\nRUSAGE "+JSON.stringify(process.resourceUsage())+"\\n"))';

function child(args) {
  const t0 = performance.now();
  const r = spawnSync(process.execPath, ['--import', HOOK, CLI, ...args], {
    encoding: 'utf8',
    maxBuffer: 1 << 26,
  });
  const wallS = (performance.now() - t0) / 1000;
  const m = /RUSAGE (.*)\n?$/.exec(r.stderr);
  if (r.status !== 0 || !m) throw new Error(`orthotone ${args.join(' ')} failed: ${r.stderr.slice(0, 500)}`);
  const u = JSON.parse(m[1]);
  return {
    wallS,
    cpuS: (u.userCPUTime + u.systemCPUTime) / 1e6,
    peakRssMB: u.maxRSS / 1024,
  };
}

function packing(frames) {
  const i = new Float32Array(frames);
  const q = new Float32Array(frames);
  for (let k = 0; k < frames; k++) {
    i[k] = 0.5 * Math.cos((2 * Math.PI * 1000 * k) / 48000);
    q[k] = 0.5 * Math.sin((2 * Math.PI * 1000 * k) / 48000);
  }
  const out = {};
  for (const enc of ['float32', 'int24']) {
    const ours = timeIt(() => encodeWav([i, q], 48000, enc), { minMs: 500, warmup: 1, minRuns: 3 });
    const theirs = timeIt(
      () => {
        const w = new wavefile.WaveFile();
        if (enc === 'float32') w.fromScratch(2, 48000, '32f', [i, q]);
        else {
          // As the CLI did before: scale to integers, then wavefile packs them sample by sample.
          const ints = [i, q].map((c) => Int32Array.from(c, (x) => Math.round(x * 8388608)));
          w.fromScratch(2, 48000, '24', ints);
        }
        return w.toBuffer();
      },
      { minMs: 500, warmup: 1, minRuns: 3 },
    );
    out[enc] = {
      frames,
      oursFramesPerSecond: Math.round(frames / (ours / 1000)),
      wavefileFramesPerSecond: Math.round(frames / (theirs / 1000)),
      speedupOverWavefile: +(theirs / ours).toFixed(1),
    };
  }
  return out;
}

export async function run() {
  const dir = mkdtempSync(join(tmpdir(), 'orthotone-files-bench-'));
  try {
    const net48 = join(dir, 'net48.json');
    writeFileSync(
      net48,
      networkToJson(designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'auto', targetDb: 60 })),
    );
    const net192 = join(dir, 'net192.json');
    writeFileSync(
      net192,
      networkToJson(designNetwork({ sampleRate: 192000, band: [300, 3000], method: 'auto', targetDb: 60 })),
    );
    const result = { packing: packing(48000 * 10), render48k: {}, memory: {} };
    const out = join(dir, 'out.wav');

    for (const enc of ['float32', 'int24']) {
      const r = child([
        'render',
        net48,
        '--tone',
        '1000',
        '--duration',
        String(DURATION_S),
        '--encoding',
        enc,
        '--out',
        out,
      ]);
      result.render48k[enc] = {
        seconds: DURATION_S,
        realTimeFromCpu: +(DURATION_S / r.cpuS).toFixed(0),
        realTimeFromWall: +(DURATION_S / r.wallS).toFixed(0),
        goalRealTime: 200,
        cpuS: +r.cpuS.toFixed(2),
        wallS: +r.wallS.toFixed(2),
        peakRssMB: +r.peakRssMB.toFixed(1),
      };
    }

    // Memory against length: a short and a long run of each command.
    const short192 = child(['render', net192, '--tone', '1000', '--duration', '10', '--out', out]);
    const long192 = child(['render', net192, '--tone', '1000', '--duration', String(LONG_S), '--out', out]);
    const bytes192 = statSync(out).size;
    rmSync(out);
    result.memory.render192k = {
      seconds: LONG_S,
      fileGB: +(bytes192 / 1e9).toFixed(2),
      peakRssMB: +long192.peakRssMB.toFixed(1),
      peakRssMB10s: +short192.peakRssMB.toFixed(1),
      ratioToShortRun: +(long192.peakRssMB / short192.peakRssMB).toFixed(2),
      goalPeakRssMB: 200,
      realTimeFromCpu: +(LONG_S / long192.cpuS).toFixed(0),
      wallS: +long192.wallS.toFixed(1),
    };

    const cap = join(dir, 'capture.wav');
    child([
      'render',
      net48,
      '--tone',
      '1000',
      '--duration',
      String(LONG_S),
      '--encoding',
      'int16',
      '--out',
      cap,
    ]);
    const capShort = join(dir, 'capture-short.wav');
    child(['render', net48, '--tone', '1000', '--duration', '10', '--encoding', 'int16', '--out', capShort]);
    const mLong = child(['measure', cap, '--tone', '1000', '--iq', '--format', 'json']);
    const mShort = child(['measure', capShort, '--tone', '1000', '--iq', '--format', 'json']);
    result.memory.measure48k = {
      seconds: LONG_S,
      peakRssMB: +mLong.peakRssMB.toFixed(1),
      peakRssMB10s: +mShort.peakRssMB.toFixed(1),
      ratioToShortRun: +(mLong.peakRssMB / mShort.peakRssMB).toFixed(2),
      wallS: +mLong.wallS.toFixed(1),
    };
    return result;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
