/**
 * The `orthotone` command. Each subcommand lives in its own module exporting
 * `run(argv): Promise<number>` (the exit status); its one-line summary is listed here.
 */
import { cautionsText } from '../core/cautions.js';
import { runGuarded } from './args.js';

interface Command {
  summary: string;
  load: () => Promise<{ run(argv: string[]): Promise<number> }>;
}

const COMMANDS: Record<string, Command> = {
  // Each command registers here: name → module.
  start: {
    summary: 'a first run: design, render a two-tone, calibrate a virtual exciter, write ./out',
    load: () => import('./start.js'),
  },
  design: {
    summary: 'design a Hilbert FIR or all-pass 90° network for a band and sample rate',
    load: () => import('./design.js'),
  },
  analyze: {
    summary: 'evaluate a network file: phase/gain error, suppression, group delay, cost',
    load: () => import('./analyze.js'),
  },
  render: {
    summary: 'run a test signal or recording through a network and trims into an I/Q WAV',
    load: () => import('./render.js'),
  },
  firmware: {
    summary: 'write a C99 firmware kit (network and trims in float, Q31 or Q15) with host-check and README',
    load: () => import('./firmware.js'),
  },
  'port-check': {
    summary: "compare a firmware port's captured output with 'render --vectors' test vectors",
    load: () => import('./port-check.js'),
  },
  device: {
    summary: 'talk to a microcontroller over the link protocol: identify, trims, set, load, store',
    load: () => import('./device.js'),
  },
  bridge: {
    summary: 'serve a serial device to a browser page over a local WebSocket',
    load: () => import('./bridge.js'),
  },
  simulate: {
    summary: 'run an I/Q file through a virtual exciter and write what a receiver captures',
    load: () => import('./simulate.js'),
  },
  measure: {
    summary: 'read sideband, carrier, two-tone products or tone levels from a WAV capture',
    load: () => import('./measure.js'),
  },
  calibrate: {
    summary: 'null the unwanted sideband and the carrier from level readings (simulated, typed or scripted)',
    load: () => import('./calibrate.js'),
  },
  verify: {
    summary: "a few readings at a saved profile's trims: has the exciter drifted, re-calibrate?",
    load: () => import('./verify.js'),
  },
  emissions: {
    summary:
      'check every emission (carrier, sideband, IMD, mixer harmonics) against limits; exit 1 if any fails',
    load: () => import('./emissions.js'),
  },
  'output-filter': {
    summary: 'design the RF output low-pass ladder (Butterworth/Chebyshev, E12/E24 capacitors)',
    load: () => import('./output-filter.js'),
  },
};

function usage(): string {
  const width = Math.max(...Object.keys(COMMANDS).map((n) => n.length));
  const rows = Object.entries(COMMANDS).map(([n, c]) => `  ${n.padEnd(width)}  ${c.summary}`);
  return [
    'orthotone: design, run, measure and calibrate 90° networks for phasing SSB and I/Q exciters',
    '',
    'usage: orthotone <command> [options]      (orthotone <command> --help for its options)',
    '',
    'commands:',
    ...rows,
    '',
    cautionsText(),
    '',
  ].join('\n');
}

async function main(argv: string[]): Promise<number> {
  const [name, ...rest] = argv;
  if (name === undefined || name === '--help' || name === '-h' || name === 'help') {
    process.stdout.write(usage());
    return name === undefined ? 2 : 0;
  }
  if (name === '--version') {
    process.stdout.write('orthotone 0.1.0\n');
    return 0;
  }
  const cmd = COMMANDS[name];
  if (!cmd) {
    process.stderr.write(`orthotone: unknown command '${name}': run 'orthotone --help' for the list\n`);
    return 2;
  }
  const mod = await cmd.load();
  return runGuarded(() => mod.run(rest));
}

// A reader that stops early (`orthotone analyze … | head`) closes the pipe: that ends the run
// quietly, as the reader wanted, instead of an EPIPE stack trace.
for (const stream of [process.stdout, process.stderr]) {
  stream.on('error', (e: NodeJS.ErrnoException) => {
    if (e.code === 'EPIPE') process.exit(0);
    throw e;
  });
}

main(process.argv.slice(2)).then(
  (code) => {
    process.exitCode = code;
  },
  (e: unknown) => {
    process.stderr.write(`orthotone: internal error: ${(e as Error)?.stack ?? String(e)}\n`);
    process.exitCode = 1;
  },
);
