/**
 * Test support: starts tests/device/pty-echo.py, a device on a real pseudo-terminal that sends back
 * every byte it receives. Every process started here is ended by {@link killEchoes}.
 */
import { resolve } from 'node:path';
import { killAllDevices, startPtyProgram } from './virtual-device.js';

/** A running echo device. */
export interface EchoDevice {
  /** The device end (pty slave), e.g. /dev/pts/7. */
  path: string;
  /** Ends the device as an unplugged one would: the pty's other end closes. */
  unplug(): Promise<void>;
}

/** Starts an echo device and resolves once its pseudo-terminal exists. */
export async function startEcho(): Promise<EchoDevice> {
  // stdin open: the device ends when this process does.
  const dev = await startPtyProgram(
    '/usr/bin/python3',
    [resolve('tests/device/pty-echo.py')],
    'pipe',
    'pty-echo.py',
  );
  return { path: dev.path, unplug: () => dev.kill('SIGKILL') };
}

/** Ends every echo device (and any virtual device) still running and waits for them. */
export const killEchoes = killAllDevices;
