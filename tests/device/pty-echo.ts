/**
 * Test support: starts tests/device/pty-echo.py, a device on a real pseudo-terminal that sends back
 * every byte it receives. Every process started here is ended by {@link killEchoes}.
 */
import { type ChildProcess, spawn } from 'node:child_process';
import { resolve } from 'node:path';

const started = new Set<ChildProcess>();

/** A running echo device. */
export interface EchoDevice {
  /** The device end (pty slave), e.g. /dev/pts/7. */
  path: string;
  /** Ends the device as an unplugged one would: the pty's other end closes. */
  unplug(): Promise<void>;
}

/** Starts an echo device and resolves once its pseudo-terminal exists. */
export function startEcho(): Promise<EchoDevice> {
  const proc = spawn('/usr/bin/python3', [resolve('tests/device/pty-echo.py')], {
    stdio: ['pipe', 'pipe', 'pipe'], // stdin open: the device ends when this process does
  });
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
      if (nl >= 0)
        res({
          path: out.slice(0, nl),
          unplug: async () => {
            if (proc.exitCode === null && proc.signalCode === null) proc.kill('SIGKILL');
            await exited;
          },
        });
    });
    proc.once('exit', (code) => rej(new Error(`pty-echo.py exited (${code}) before its path: ${err}`)));
  });
}

/** Ends every echo device still running and waits for them. */
export async function killEchoes(): Promise<void> {
  await Promise.all(
    [...started].map(
      (p) =>
        new Promise<void>((r) => {
          if (p.exitCode !== null || p.signalCode !== null) return r();
          p.once('exit', () => r());
          p.kill('SIGKILL');
        }),
    ),
  );
}
