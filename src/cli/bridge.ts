/**
 * `orthotone bridge --device PATH --port N`: serves a serial device to a browser page over a local
 * WebSocket (src/node/bridge.ts), until Ctrl-C.
 */
import { OrthotoneError } from '../core/errors.js';
import { startBridge } from '../node/bridge.js';
import { numberOpt, parseCommand, UsageError } from './args.js';

const HELP = `usage: orthotone bridge --device PATH [--port N] [--host ADDR] [--baud N]

Lets a browser page (the demo's device panel, or your own page using orthotone's DeviceLink) reach
a serial device through this computer: the page connects to ws://ADDR:N and the bytes of the link
protocol pass through unchanged. One page at a time; runs until Ctrl-C.

options:
  --device PATH    the serial port (or firmware/virtual-device's pty)
  --port N         TCP port (default 8765; 0 picks a free one and prints it)
  --host ADDR      address to listen on (default 127.0.0.1: this computer only; another address
                   offers your transmitter's controls to the network)
  --baud N         serial line rate (default 115200)
  -h, --help       this help
`;

const OPTIONS = {
  device: { type: 'string' },
  port: { type: 'string' },
  host: { type: 'string' },
  baud: { type: 'string' },
  help: { type: 'boolean', short: 'h' },
} as const;

/**
 * `orthotone bridge` entry point; resolves with the exit status when stopped by SIGINT/SIGTERM.
 * @param argv the command's arguments.
 * @throws {UsageError} for bad options; OrthotoneError DEVICE_LOST when the port cannot be listened on.
 */
export async function run(argv: string[]): Promise<number> {
  const { values: v } = parseCommand(argv, OPTIONS);
  if (v.help) {
    process.stdout.write(HELP);
    return 0;
  }
  if (typeof v.device !== 'string')
    throw new UsageError('bridge needs --device PATH (the serial port to serve)');
  const port = numberOpt('port', v.port ?? '8765')!;
  if (!Number.isInteger(port) || port < 0 || port > 65535) {
    throw new UsageError(`--port ${port} must be a whole number from 0 to 65535`);
  }
  const host = typeof v.host === 'string' ? v.host : '127.0.0.1';
  const baudRate = numberOpt('baud', v.baud ?? '115200')!;
  const bridge = await startBridge({
    devicePath: v.device,
    port,
    host,
    baudRate,
    log: (line) => process.stderr.write(`bridge: ${line}\n`),
  }).catch((e: unknown) => {
    if (e instanceof OrthotoneError) throw new UsageError(e.message);
    throw e;
  });
  // Handlers first, then the address: a caller may signal as soon as it reads the line.
  const stopped = new Promise<void>((resolve) => {
    const stop = () => {
      process.off('SIGINT', stop);
      process.off('SIGTERM', stop);
      resolve();
    };
    process.on('SIGINT', stop);
    process.on('SIGTERM', stop);
  });
  process.stdout.write(`bridge: ${bridge.url} -> ${v.device} (Ctrl-C to stop)\n`);
  await stopped;
  await bridge.close();
  return 0;
}
