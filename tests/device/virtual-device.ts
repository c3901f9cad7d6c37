/**
 * Test support: builds the firmware's virtual device with make in a private copy of firmware/, and
 * starts it as a real process on a real pseudo-terminal. Every process started here is killed by
 * {@link killAllDevices} (call it in afterAll / afterEach).
 */
import { type ChildProcess, execFileSync, spawn } from 'node:child_process';
import { cpSync, existsSync, mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';

const started = new Set<ChildProcess>();

/** Copies firmware/ to a temporary folder and runs `make` there; returns the folder. */
export function buildFirmware(defines: string[] = []): string {
  const dir = mkdtempSync(join(tmpdir(), 'ot-fw-'));
  cpSync(resolve('firmware'), dir, { recursive: true, filter: (p) => !/\.o$|virtual-device$/.test(p) });
  const cflags = `-std=c99 -O2 -Wall -Wextra -Werror -pedantic ${defines.join(' ')}`.trim();
  // The kit's Makefile includes ortho-link.mk (its ortho-*.mk rule); without it, the fragment alone.
  // Only the virtual device is asked for: the kit's other programs need the generated tables.
  const args = existsSync(join(dir, 'Makefile'))
    ? ['-s', '-C', dir, `CFLAGS=${cflags}`, 'virtual-device']
    : ['-s', '-C', dir, '-f', 'ortho-link.mk', `CFLAGS=${cflags}`, 'virtual-device'];
  execFileSync('make', args, { stdio: 'pipe' });
  return dir;
}

/** A running virtual device. */
export interface RunningDevice {
  proc: ChildProcess;
  /** The device end printed on its first stdout line. */
  path: string;
  kill(signal?: NodeJS.Signals): Promise<void>;
}

/** Starts `DIR/virtual-device ARGS…` and resolves with the pty path from its first line. */
export function startDevice(dir: string, args: string[] = []): Promise<RunningDevice> {
  return startPtyProgram(join(dir, 'virtual-device'), args, 'ignore', 'virtual-device');
}

/**
 * Starts a program that makes a pseudo-terminal and prints its device end on its first stdout line
 * (the virtual device, tests/device/pty-echo.py), and resolves with that path. `stdin` 'pipe' keeps the
 * program's input open, so a program that ends at end of input ends with the test process. Tracked
 * for {@link killAllDevices}.
 */
export function startPtyProgram(
  command: string,
  args: string[],
  stdin: 'ignore' | 'pipe',
  label: string,
): Promise<RunningDevice> {
  const proc = spawn(command, args, { stdio: [stdin, 'pipe', 'pipe'] });
  started.add(proc);
  const exited = new Promise<void>((r) => proc.once('exit', () => r()));
  proc.once('exit', () => started.delete(proc));
  return new Promise((res, rej) => {
    let out = '';
    let err = '';
    proc.stderr!.on('data', (b: Buffer) => {
      err += b.toString();
    });
    proc.stdout!.on('data', (b: Buffer) => {
      out += b.toString();
      const nl = out.indexOf('\n');
      if (nl >= 0) {
        res({
          proc,
          path: out.slice(0, nl),
          kill: async (signal = 'SIGTERM') => {
            if (proc.exitCode === null && proc.signalCode === null) proc.kill(signal);
            await exited;
          },
        });
      }
    });
    proc.once('exit', (code) => rej(new Error(`${label} exited (${code}) before its pty path: ${err}`)));
  });
}

/** Kills every device still running (SIGKILL) and waits for them. */
export async function killAllDevices(): Promise<void> {
  const all = [...started];
  await Promise.all(
    all.map(
      (p) =>
        new Promise<void>((r) => {
          if (p.exitCode !== null || p.signalCode !== null) return r();
          p.once('exit', () => r());
          p.kill('SIGKILL');
        }),
    ),
  );
}
