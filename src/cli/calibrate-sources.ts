/**
 * Reading sources of `orthotone calibrate` that need Node (src/calibrate/session.ts holds the
 * interfaces): a person typing levels at a prompt ({@link promptSource}, over a {@link LineInput}
 * that keeps answers arriving before their question, from a terminal, a pipe or a file) and a shell
 * command printing levels ({@link commandSource}, in its own process group, killed whole on time-out
 * and abort).
 */
import { spawn } from 'node:child_process';
import type { Readable, Writable } from 'node:stream';
import type { ReadingSource, SessionCommand } from '../calibrate/session.js';
import type { Trims } from '../core/trims.js';

/** Highest and lowest level accepted from a person or a command, dB (dBc). */
export const LEVEL_RANGE_DB: readonly [number, number] = Object.freeze([-200, 100]) as readonly [
  number,
  number,
];

const NUMBER = /^[-+]?(\d+(\.\d*)?|\.\d+)([eE][-+]?\d+)?$/;

/**
 * Parses `count` levels in dB from text: decimal numbers (an exponent allowed), each optionally
 * followed by `dB` or `dBc`, separated by spaces, commas or semicolons. Refuses hexadecimal, trailing
 * letters (`12abc`), non-finite values and levels outside {@link LEVEL_RANGE_DB}.
 * @returns the levels, or a message saying what is wrong and what to type.
 * @throws never
 */
export function parseLevels(text: string, count: number): number[] | string {
  const t = text
    .trim()
    .replace(/(\d|\.)\s*dbc?(?=$|[\s,;])/gi, '$1 ')
    .trim();
  const parts = t.split(/[\s,;]+/).filter((x) => x !== '');
  const want = count === 1 ? 'one level in dB, e.g. -42.5' : `${count} levels in dB, e.g. -43.5 -27.9`;
  if (parts.length !== count) {
    return `${JSON.stringify(text.trim())} is not ${count === 1 ? 'a level' : count === 2 ? 'two levels' : `${count} levels`}: give ${want}`;
  }
  const out: number[] = [];
  for (const p of parts) {
    const x = Number(p);
    if (!NUMBER.test(p) || !Number.isFinite(x)) {
      return `${JSON.stringify(p)} is not a decimal number: give ${want}`;
    }
    if (x < LEVEL_RANGE_DB[0] || x > LEVEL_RANGE_DB[1]) {
      return `${p} dB lies outside ${LEVEL_RANGE_DB[0]}…+${LEVEL_RANGE_DB[1]} dB: give the level the analyzer shows, ${want}`;
    }
    out.push(x);
  }
  return out;
}

/**
 * Lines from a stream, queued as they arrive (answers typed or piped before their question are kept),
 * with end of input reported as `undefined`. Uses no readline `question()`, which drops lines that
 * arrive while no question is pending.
 */
export interface LineInput {
  /**
   * The next line, or undefined at end of input.
   * @throws never
   */
  next(): Promise<string | undefined>;
  /**
   * Stops listening (the stream is paused and unreferenced).
   * @throws never
   */
  close(): void;
}

/**
 * Makes a {@link LineInput} over a readable stream (process.stdin).
 * @throws never
 */
export function lineInput(stream: Readable): LineInput {
  const lines: string[] = [];
  let rest = '';
  let ended = false;
  let wake: (() => void) | undefined;
  const onData = (chunk: Buffer | string): void => {
    rest += typeof chunk === 'string' ? chunk : chunk.toString('utf8');
    const parts = rest.split(/\r?\n/);
    rest = parts.pop() ?? '';
    lines.push(...parts);
    wake?.();
  };
  const onEnd = (): void => {
    if (rest !== '') lines.push(rest);
    rest = '';
    ended = true;
    wake?.();
  };
  stream.on('data', onData);
  stream.on('end', onEnd);
  stream.on('error', onEnd);
  return {
    async next() {
      for (;;) {
        if (lines.length > 0) return lines.shift();
        if (ended) return undefined;
        await new Promise<void>((r) => {
          wake = r;
        });
        wake = undefined;
      }
    },
    close() {
      stream.off('data', onData);
      stream.off('end', onEnd);
      stream.off('error', onEnd);
      stream.pause();
      // A pipe left open would keep the process alive.
      (stream as Readable & { unref?: () => void }).unref?.();
    },
  };
}

/** Options of {@link promptSource}. */
export interface PromptSourceOptions {
  input: LineInput;
  output: Writable;
  /** How many levels each answer holds (1, or 2 for sideband and carrier together). */
  count: number;
  /** The question, e.g. `sideband level at 1000 Hz, dB`. */
  question: string;
  /**
   * Says which trims to set (or which are in force).
   * @throws never
   */
  describe: (trims: Trims) => string;
  /** Label of the reading, e.g. `sideband reading`. */
  label: string;
  /**
   * True when another part (a device) has applied the trims: the prompt then says they are in force
   * instead of asking the person to set them.
   */
  applied?: boolean;
}

/**
 * A person at a prompt as a reading source: answers are levels in dB, `retry`, `undo`, `quit`; end
 * of input stops the session keeping the best so far. A first reading at or above 0 dB must be
 * confirmed (suppression is written as a positive number, the level as a negative one).
 * @throws never (bad answers are asked again).
 */
export function promptSource(o: PromptSourceOptions): ReadingSource<number[]> {
  let first = true;
  return {
    async read(trims, ctx): Promise<number[] | SessionCommand> {
      const max = ctx.maxReadings !== undefined ? ` of at most ${ctx.maxReadings}` : '';
      o.output.write(
        `\n[${o.label} ${ctx.index}${max}] ${o.applied ? 'in force' : 'set'} ${o.describe(trims)}\n`,
      );
      for (;;) {
        o.output.write(`  ${o.question} (retry | undo | quit): `);
        const raw = await o.input.next();
        if (raw === undefined) {
          o.output.write('\n  end of input: stopping, keeping the best so far\n');
          return { command: 'stop', why: 'end-of-input' };
        }
        const line = raw.trim().toLowerCase();
        if (line === 'retry') return { command: 'retry' };
        if (line === 'undo') return { command: 'undo' };
        if (line === 'quit' || line === 'q') return { command: 'stop', why: 'quit' };
        const xs = parseLevels(line, o.count);
        if (typeof xs === 'string') {
          o.output.write(`  ${xs}; or retry, undo, quit\n`);
          continue;
        }
        if (first && xs.some((x) => x >= 0)) {
          const shown = xs.map((x) => `${x >= 0 ? '+' : ''}${x}`).join(' ');
          o.output.write(
            `  ${shown} dB reads as at or above the wanted tone; a suppression of 44 dB is a level of -44. Type 'yes' to keep ${shown}, or type the level again: `,
          );
          const again = await o.input.next();
          if (again === undefined) return { command: 'stop', why: 'end-of-input' };
          if (again.trim().toLowerCase() !== 'yes') {
            const ys = parseLevels(again, o.count);
            if (typeof ys === 'string') {
              o.output.write(`  ${ys}\n`);
              continue;
            }
            first = false;
            return ys;
          }
        }
        first = false;
        return xs;
      }
    },
  };
}

/** Options of {@link commandSource}. */
export interface CommandSourceOptions {
  /** The command line, run by /bin/sh. */
  command: string;
  /** Extra environment for each run (the trims are added as OT_GAIN_DB, OT_PHASE_DEG, OT_DC_I, OT_DC_Q). */
  env: Record<string, string>;
  /** How many levels it prints. */
  count: number;
}

/**
 * The trims as the environment of a measure command: OT_GAIN_DB (dB), OT_PHASE_DEG (degrees),
 * OT_DC_I, OT_DC_Q (full scale).
 * @throws never
 */
export function trimEnv(t: Trims): Record<string, string> {
  return {
    OT_GAIN_DB: String(t.gainDb),
    OT_PHASE_DEG: String(t.phaseDeg),
    OT_DC_I: String(t.dcI),
    OT_DC_Q: String(t.dcQ),
  };
}

/**
 * Runs `cmd` once in its own process group and parses what it prints (same rules as the prompt,
 * {@link parseLevels}). On `signal` (time-out or abort) the whole group is sent SIGTERM, then SIGKILL
 * after 1 s.
 * @throws never itself; the promise rejects with an Error naming the command and a fix.
 */
export function runMeasureCommand(
  cmd: string,
  env: Record<string, string>,
  count: number,
  signal: AbortSignal,
): Promise<number[]> {
  const name = cmd.length > 60 ? `${cmd.slice(0, 57)}...` : cmd;
  return new Promise((resolve, reject) => {
    if (signal.aborted) return reject(signal.reason);
    const child = spawn('/bin/sh', ['-c', cmd], {
      env: { ...process.env, ...env },
      detached: true,
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    let out = '';
    let err = '';
    let killTimer: ReturnType<typeof setTimeout> | undefined;
    const killGroup = (sig: NodeJS.Signals): void => {
      try {
        if (child.pid !== undefined) process.kill(-child.pid, sig);
      } catch {
        // the group is gone already
      }
    };
    const onAbort = (): void => {
      killGroup('SIGTERM');
      killTimer = setTimeout(() => killGroup('SIGKILL'), 1000);
      killTimer.unref?.();
      reject(signal.reason);
    };
    signal.addEventListener('abort', onAbort, { once: true });
    child.stdout.on('data', (d) => {
      if (out.length < 10_000) out += d;
    });
    child.stderr.on('data', (d) => {
      if (err.length < 10_000) err += d;
    });
    child.on('error', (e) => {
      signal.removeEventListener('abort', onAbort);
      reject(new Error(`--measure-command '${name}' could not start (${e.message}): check the command`));
    });
    child.on('close', (code, sig) => {
      signal.removeEventListener('abort', onAbort);
      if (signal.aborted) {
        // Children the command left behind go with its group.
        killGroup('SIGKILL');
        return;
      }
      const tail = err.trim().split('\n').pop()?.slice(0, 120) ?? '';
      if (code === 127) {
        return reject(
          new Error(
            `--measure-command '${name}': command not found${tail ? ` (${tail})` : ''}: check its name and PATH`,
          ),
        );
      }
      if (code !== 0) {
        return reject(
          new Error(
            `--measure-command '${name}' exited with ${sig ?? `status ${code}`}${tail ? ` (${tail})` : ''}: it must exit 0 and print ${count === 1 ? 'one level' : `${count} levels`} in dB`,
          ),
        );
      }
      const xs = parseLevels(out, count);
      if (typeof xs === 'string') {
        return reject(
          new Error(
            `--measure-command '${name}' printed ${out.trim() === '' ? 'nothing' : JSON.stringify(out.trim().slice(0, 60))}: ${xs}`,
          ),
        );
      }
      resolve(xs);
    });
  });
}

/**
 * A shell command as a reading source: run once per reading with the trims in its environment.
 * @throws never (a failing command fails the reading; the session retries and counts failures).
 */
export function commandSource(o: CommandSourceOptions): ReadingSource<number[]> {
  return {
    read: (trims, ctx) => runMeasureCommand(o.command, { ...o.env, ...trimEnv(trims) }, o.count, ctx.signal),
  };
}
