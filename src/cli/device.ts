/**
 * `orthotone device PATH …`: talk to a device over the link protocol (docs/protocol.md): identify,
 * read or set the trims, choose the sideband and the source, load a network, store. Also the glue
 * for `orthotone calibrate --device PATH`: a trim applier that sets each reading's trims on the
 * device, confirms them by read-back, waits for the ramp, and leaves the best trims on the device.
 */
import { readFile } from 'node:fs/promises';
import type { TrimApplier } from '../calibrate/session.js';
import { cautionsText } from '../core/cautions.js';
import { OrthotoneError } from '../core/errors.js';
import type { Trims } from '../core/trims.js';
import { type DeviceLink, openDeviceLink } from '../device/link.js';
import type { DeviceSource, DeviceTrims } from '../device/protocol.js';
import { parseNetworkJson } from '../export/network-json.js';
import { serialConnector } from '../node/serial-transport.js';
import { choiceOpt, numberOpt, parseCommand, UsageError } from './args.js';
import type { CalibrateExtras } from './calibrate.js';

const HELP = `usage: orthotone device PATH ACTION [options]

Talks to a microcontroller (or firmware/virtual-device) that speaks the orthotone link protocol
(docs/protocol.md) on the serial port PATH.

actions:
  identify                        the greeting: protocol version, sample rate, arithmetic, trim
                                  resolution and limits
  trims                           the trims the device applies (read back)
  set gain=DB phase=DEG dci=FS dcq=FS
                                  set any of the trims (atomic, ramped by the device); prints
                                  what the device applied
  sideband upper|lower            choose the sideband
  source tone HZ [AMP] | source two HZ HZ [AMP] | source input
                                  the test source: tone, two-tone (AMP each, default 0.5, 0.25),
                                  or the external input
  load NET.json                   load a network document in the device's arithmetic (it switches
                                  at a block boundary, cross-faded)
  store                           keep trims, network, sideband and source over a power cycle

options:
  --baud N         serial line rate (default 115200; USB devices ignore it)
  --timeout MS     time allowed for one answer (default 1000)
  --format F       table (default) | json
  -h, --help       this help
`;

const OPTIONS = {
  baud: { type: 'string' },
  timeout: { type: 'string' },
  format: { type: 'string' },
  help: { type: 'boolean', short: 'h' },
} as const;

const TRIM_KEYS: Record<string, keyof DeviceTrims> = {
  gain: 'gainDb',
  phase: 'phaseDeg',
  dci: 'dcI',
  dcq: 'dcQ',
};

/**
 * Parses `gain=0.3 dcq=-0.001` words into trims.
 * @throws {UsageError} for a word that is not KEY=NUMBER with KEY gain, phase, dci or dcq.
 */
function parseTrimWords(words: string[]): Partial<DeviceTrims> {
  const out: Partial<DeviceTrims> = {};
  if (words.length === 0) throw new UsageError('set needs at least one of gain=DB phase=DEG dci=FS dcq=FS');
  for (const w of words) {
    const [k, x] = w.split('=');
    const key = k !== undefined ? TRIM_KEYS[k] : undefined;
    if (!key || x === undefined) {
      throw new UsageError(`set: ${JSON.stringify(w)} must be KEY=VALUE with KEY gain, phase, dci or dcq`);
    }
    out[key] = numberOpt(`set ${k}`, x)!;
  }
  return out;
}

const fmtTrims = (t: DeviceTrims): string =>
  `gain ${t.gainDb.toFixed(6)} dB, phase ${t.phaseDeg.toFixed(6)}°, dcI ${t.dcI.toFixed(9)}, dcQ ${t.dcQ.toFixed(9)}`;

/** Opens the link for a command, with the CLI's time-out and line rate. */
async function openFor(
  path: string,
  baud: number | undefined,
  timeoutMs: number | undefined,
): Promise<DeviceLink> {
  return openDeviceLink(serialConnector(path, baud !== undefined ? { baudRate: baud } : {}), {
    ...(timeoutMs !== undefined ? { timeoutMs } : {}),
  });
}

/**
 * `orthotone device` entry point; returns the exit status (0 done, 2 bad usage, 1 device error).
 * @param argv the command's arguments.
 * @throws {UsageError} for bad usage; OrthotoneError for the library's refusals (both become one
 *   line and exit 2 through `runGuarded`). Device errors (time-out, lost, refused) print one line
 *   and return 1.
 */
export async function run(argv: string[]): Promise<number> {
  const { values: v, positionals } = parseCommand(argv, OPTIONS, true);
  if (v.help) {
    process.stdout.write(HELP);
    return 0;
  }
  const [path, action, ...rest] = positionals;
  if (!path || !action)
    throw new UsageError("device needs a port and an action, e.g. 'orthotone device /dev/ttyACM0 identify'");
  const format = choiceOpt('format', v.format, ['table', 'json'], 'table');
  const baud = numberOpt('baud', v.baud);
  const timeoutMs = numberOpt('timeout', v.timeout);
  if (timeoutMs !== undefined && !(timeoutMs >= 10))
    throw new UsageError(`--timeout ${timeoutMs} ms must be at least 10`);
  // Validate what can be validated before touching the port.
  let trims: Partial<DeviceTrims> | undefined;
  let source: DeviceSource | undefined;
  let networkText: string | undefined;
  switch (action) {
    case 'identify':
    case 'trims':
    case 'store':
      if (rest.length) throw new UsageError(`${action} takes no arguments (got ${rest.join(' ')})`);
      break;
    case 'set':
      trims = parseTrimWords(rest);
      break;
    case 'sideband':
      if (rest.length !== 1 || (rest[0] !== 'upper' && rest[0] !== 'lower')) {
        throw new UsageError('sideband takes upper or lower');
      }
      break;
    case 'source': {
      const [kind, ...nums] = rest;
      const n = nums.map((x, i) => numberOpt(`source value ${i + 1}`, x)!);
      if (kind === 'input' && n.length === 0) source = { kind: 'input' };
      else if (kind === 'tone' && (n.length === 1 || n.length === 2))
        source = { kind: 'tone', toneHz: n[0]!, amplitude: n[1] ?? 0.5 };
      else if (kind === 'two' && (n.length === 2 || n.length === 3))
        source = { kind: 'two-tone', toneHz: n[0]!, secondHz: n[1]!, amplitude: n[2] ?? 0.25 };
      else throw new UsageError('source takes: tone HZ [AMP] | two HZ HZ [AMP] | input');
      break;
    }
    case 'load': {
      if (rest.length !== 1) throw new UsageError('load takes one network file, e.g. load net.json');
      try {
        networkText = await readFile(rest[0]!, 'utf8');
      } catch (e) {
        throw new UsageError(
          `cannot read ${rest[0]}: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`,
        );
      }
      break;
    }
    default:
      throw new UsageError(
        `unknown action '${action}': use identify, trims, set, sideband, source, load or store`,
      );
  }
  const net = networkText !== undefined ? parseNetworkJson(networkText) : undefined;

  let link: DeviceLink | undefined;
  const say = (text: string, json: unknown) =>
    process.stdout.write(format === 'json' ? `${JSON.stringify(json, null, 2)}\n` : `${text}\n`);
  try {
    link = await openFor(path, baud, timeoutMs);
    const info = link.info;
    switch (action) {
      case 'identify':
        say(
          [
            `device ${info.name || '(unnamed)'} on ${path}: link protocol ${info.link}`,
            `sample rate ${info.sampleRate} Hz, arithmetic ${info.arithmetic}`,
            `trim resolution: gain ${info.resolution.gainDb} dB, phase ${info.resolution.phaseDeg}°, DC ${info.resolution.dc} of full scale`,
            `trim limits: ±${info.limits.gainDb} dB, ±${info.limits.phaseDeg}°, DC ±${info.limits.dc}; ramp ${info.rampMs} ms`,
            `largest network: ${info.maxTaps} FIR taps, ${info.maxSections} all-pass sections per branch`,
          ].join('\n'),
          info,
        );
        break;
      case 'trims': {
        const t = await link.readTrims();
        say(`applied: ${fmtTrims(t)}`, t);
        break;
      }
      case 'set': {
        process.stderr.write(`${cautionsText()}\n`);
        const t = await link.setTrims(trims!);
        say(`applied: ${fmtTrims(t)}`, t);
        break;
      }
      case 'sideband':
        await link.setSideband(rest[0] as 'upper' | 'lower');
        say(`sideband ${rest[0]}`, { sideband: rest[0] });
        break;
      case 'source':
        process.stderr.write(`${cautionsText()}\n`);
        await link.setSource(source!);
        say(`source ${source!.kind}`, source);
        break;
      case 'load': {
        const crc = await link.loadNetwork(net!);
        const hex = crc.toString(16).toUpperCase().padStart(4, '0');
        say(`loaded the ${net!.kind} network (${info.arithmetic}, checksum ${hex})`, {
          kind: net!.kind,
          crc: hex,
        });
        break;
      }
      case 'store':
        await link.store();
        say('stored', { stored: true });
        break;
    }
    return 0;
  } catch (e) {
    if (e instanceof OrthotoneError && e.code.startsWith('DEVICE_')) {
      process.stderr.write(`orthotone: ${e.message}\n`);
      return 1;
    }
    throw e;
  } finally {
    await link?.close();
  }
}

/** Removes `--NAME VALUE` / `--NAME=VALUE` from argv and returns the value. */
function takeOption(argv: string[], name: string): string | undefined {
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i]!;
    if (a === `--${name}`) {
      const value = argv[i + 1];
      if (value === undefined || value.startsWith('--')) throw new UsageError(`--${name} needs a value`);
      argv.splice(i, 2);
      return value;
    }
    if (a.startsWith(`--${name}=`)) {
      argv.splice(i, 1);
      return a.slice(name.length + 3);
    }
  }
  return undefined;
}

/**
 * A trim applier over an open link: sets the trims, reads them back and checks they agree with
 * what the device said it applied, waits `settleMs` (at least the device's ramp), and returns the
 * trims in force (skew as asked; the device has none).
 * @param link an open link.
 * @param settleMs wait after each setting, ms.
 * @returns the applier for the calibration session driver.
 * @throws never (apply rejects with DEVICE_* errors, which the driver counts as failed readings).
 */
export function deviceApplier(link: DeviceLink, settleMs: number): TrimApplier {
  return {
    async apply(t: Trims, signal: AbortSignal): Promise<Trims> {
      const applied = await link.setTrims({ gainDb: t.gainDb, phaseDeg: t.phaseDeg, dcI: t.dcI, dcQ: t.dcQ });
      const back = await link.readTrims();
      for (const k of ['gainDb', 'phaseDeg', 'dcI', 'dcQ'] as const) {
        if (back[k] !== applied[k]) {
          throw new OrthotoneError(
            'DEVICE_REFUSED',
            `the device read back ${k} ${back[k]} after applying ${applied[k]}: it changed the trims on its own (reset?)`,
          );
        }
      }
      const wait = Math.max(settleMs, link.info.rampMs);
      await new Promise<void>((res, rej) => {
        const timer = setTimeout(res, wait);
        signal.addEventListener(
          'abort',
          () => {
            clearTimeout(timer);
            rej(signal.reason);
          },
          { once: true },
        );
      });
      return { ...t, ...back };
    },
  };
}

/**
 * `orthotone calibrate --device PATH [--settle MS] [--device-timeout MS] [--device-reconnect MS] …`: opens the link, runs
 * the calibration with a {@link deviceApplier}, then sets the best trims on the device. The
 * remaining options are calibrate's own (levels from --prompt, --measure-command or --simulate).
 * @param argv calibrate's arguments, including --device.
 * @param calibrate calibrate's `run`.
 * @returns calibrate's exit status; 1 when the device cannot be reached at the start.
 * @throws {UsageError} for a bad --settle, --device-timeout or --device-reconnect.
 */
export async function calibrateOnDevice(
  argv: string[],
  calibrate: (argv: string[], extras: CalibrateExtras) => Promise<number>,
): Promise<number> {
  const args = [...argv];
  const path = takeOption(args, 'device')!;
  const settleMs = numberOpt('settle', takeOption(args, 'settle') ?? '200')!;
  const timeoutMs = numberOpt('device-timeout', takeOption(args, 'device-timeout') ?? '1000')!;
  const reconnectMs = numberOpt('device-reconnect', takeOption(args, 'device-reconnect') ?? '5000')!;
  if (!(reconnectMs >= 0 && reconnectMs <= 600_000)) {
    throw new UsageError(`--device-reconnect ${reconnectMs} ms must be from 0 to 600000`);
  }
  if (!(settleMs >= 0 && settleMs <= 60_000))
    throw new UsageError(`--settle ${settleMs} ms must be from 0 to 60000`);
  if (!(timeoutMs >= 10)) throw new UsageError(`--device-timeout ${timeoutMs} ms must be at least 10`);
  const quiet = args.some((a, i) => (a === '--format' && args[i + 1] === 'json') || a === '--format=json');
  const note = (s: string) => (quiet ? process.stderr : process.stdout).write(`${s}\n`);
  let link: DeviceLink;
  try {
    link = await openDeviceLink(serialConnector(path), {
      timeoutMs,
      reconnectMs,
      onEvent: (e) => {
        if (e.type === 'reset') note(`  device reset (${e.reason}): reconnecting`);
        if (e.type === 'reapplied') note('  device back: greeted, version checked, trims re-applied');
        if (e.type === 'lost') note(`  ${e.error.message}`);
      },
    });
  } catch (e) {
    if (e instanceof OrthotoneError && e.code.startsWith('DEVICE_')) {
      process.stderr.write(`orthotone: ${e.message}\n`);
      return 1;
    }
    throw e;
  }
  let best: Trims | undefined;
  try {
    const i = link.info;
    const status = await calibrate(args, {
      applier: deviceApplier(link, settleMs),
      applierNote: `trims set on the device ${i.name} at ${path} (link ${i.link}, ${i.sampleRate} Hz, ${i.arithmetic}), confirmed by read-back, ${Math.max(settleMs, i.rampMs)} ms settle`,
      onFinish: (t: Trims) => {
        best = t;
      },
    });
    if (best) {
      try {
        const t = await link.setTrims({
          gainDb: best.gainDb,
          phaseDeg: best.phaseDeg,
          dcI: best.dcI,
          dcQ: best.dcQ,
        });
        note(`device holds the result: ${fmtTrims(t)} (use 'orthotone device ${path} store' to keep it)`);
      } catch (e) {
        note(`could not leave the result on the device: ${(e as Error).message}; the profile holds it`);
        return status === 0 ? 1 : status;
      }
    }
    return status;
  } finally {
    await link.close();
  }
}
