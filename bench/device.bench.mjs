// Device link benchmark, on the compiled virtual device (firmware/protocol.c + virtual_device.c,
// built with make) over a real pseudo-terminal through serialport:
// - set-and-read-back round trip (`set` then `trims`, as calibrate --device does per reading):
//   median and 99th percentile, against a baseline measured in the same run: one bare `hello`
//   line written and its answer read on the same port without the link (the transport's floor);
// - readings per minute of a whole `calibrate --device --simulate --together` run (16 readings)
//   with a 200 ms settle, against the bound 60000 / (200 ms + round trip); the CLI's start-up
//   (one `device trims` call, same run) is reported and taken out.
import { execFileSync, spawn } from 'node:child_process';
import { cpSync, mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { performance } from 'node:perf_hooks';
import { openDeviceLink, openSerialChannel, serialConnector } from '../dist/node.js';

const quantile = (xs, p) => {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.max(0, Math.ceil(p * s.length) - 1))];
};
const r3 = (x) => Number(x.toFixed(3));

function build() {
  const dir = mkdtempSync(join(tmpdir(), 'ot-fw-bench-'));
  cpSync(resolve('firmware'), dir, { recursive: true, filter: (p) => !/\.o$|virtual-device$/.test(p) });
  execFileSync('make', ['-s', '-C', dir, 'virtual-device'], { stdio: 'pipe' });
  return dir;
}

function start(dir) {
  const proc = spawn(join(dir, 'virtual-device'), [], { stdio: ['ignore', 'pipe', 'inherit'] });
  return new Promise((res, rej) => {
    let out = '';
    proc.stdout.on('data', (b) => {
      out += b;
      const nl = out.indexOf('\n');
      if (nl >= 0) res({ proc, path: out.slice(0, nl) });
    });
    proc.once('exit', (c) => rej(new Error(`virtual-device exited ${c}`)));
  });
}

async function rawRoundTrips(path, n) {
  const ch = await openSerialChannel(path);
  let text = '';
  let wake;
  ch.start({
    data: (b) => {
      text += String.fromCharCode(...b);
      wake?.();
    },
    closed: () => undefined,
  });
  const times = [];
  for (let k = 1; k <= n; k++) {
    text = '';
    const t0 = performance.now();
    await ch.write(new TextEncoder().encode(`${k} trims\n`));
    while (!text.includes('\n')) await new Promise((r) => (wake = r));
    times.push(performance.now() - t0);
  }
  await ch.close();
  return times;
}

export async function run() {
  const dir = build();
  const dev = await start(dir);
  try {
    const N = 300;
    const raw = await rawRoundTrips(dev.path, N);
    const link = await openDeviceLink(serialConnector(dev.path));
    const times = [];
    for (let k = 0; k < N; k++) {
      const t0 = performance.now();
      const a = await link.setTrims({ gainDb: (k % 20) * 0.01, phaseDeg: -(k % 7) * 0.1 });
      const b = await link.readTrims();
      if (a.gainDb !== b.gainDb) throw new Error('read-back differs');
      times.push(performance.now() - t0);
    }
    await link.close();
    const rtMedian = quantile(times, 0.5);
    // a whole calibration with a 200 ms settle (levels from the simulated analyzer)
    const t0 = performance.now();
    const out = execFileSync(
      'node',
      [
        'dist/cli.js',
        'calibrate',
        '--device',
        dev.path,
        '--settle',
        '200',
        '--simulate',
        '--what',
        'both',
        '--together',
        '--max-readings',
        '16',
        '--format',
        'json',
      ],
      { encoding: 'utf8' },
    );
    const elapsedMs = performance.now() - t0;
    const readings = JSON.parse(out).runs[0].readings;
    // the CLI's own start-up and link opening, measured in the same run: one `device trims` call
    const s0 = performance.now();
    execFileSync('node', ['dist/cli.js', 'device', dev.path, 'trims'], { encoding: 'utf8' });
    const startupMs = performance.now() - s0;
    const perMinute = (readings / elapsedMs) * 60000;
    const perMinuteRun = (readings / Math.max(1, elapsedMs - startupMs)) * 60000;
    const bound = 60000 / (200 + rtMedian);
    return {
      roundTrip: {
        what: 'set + read-back over the pty through serialport and DeviceLink, ms',
        n: N,
        medianMs: r3(rtMedian),
        p99Ms: r3(quantile(times, 0.99)),
        baselineOneLineMedianMs: r3(quantile(raw, 0.5)),
        baselineOneLineP99Ms: r3(quantile(raw, 0.99)),
        ratioToBaseline: r3(rtMedian / quantile(raw, 0.5)),
      },
      calibration: {
        what: 'calibrate --device --simulate --together, budget 16 readings, 200 ms settle; the simulated analyzer renders and analyses each reading, which the bound leaves out',
        readings,
        elapsedMs: Math.round(elapsedMs),
        readingsPerMinute: Number(perMinute.toFixed(1)),
        startupMs: Math.round(startupMs),
        readingsPerMinuteWithoutStartup: Number(perMinuteRun.toFixed(1)),
        boundPerMinute: Number(bound.toFixed(1)),
        ratioToBound: r3(perMinuteRun / bound),
      },
    };
  } finally {
    dev.proc.kill('SIGKILL');
  }
}
