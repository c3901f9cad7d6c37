/**
 * Shared setup of the CLI tests: run the built command as a user would, and write WAV fixtures with
 * the wavefile library directly (independent of src/node/wav.ts, which the CLI uses to read them).
 */
import { type SpawnSyncReturns, spawnSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import * as wavefileNs from 'wavefile';
import { ensureFreshBuild } from './built.js';

/**
 * Runs `node dist/cli.js ARGS…` and returns its exit status and output. dist/ is rebuilt first when it
 * is older than src/ (a CLI test run alone never runs a stale build; see ./built.ts).
 */
export const cli = (args: string[]): SpawnSyncReturns<string> => {
  ensureFreshBuild(); // also done before every tests/cli file by tests/support/dist-setup.ts
  return spawnSync('node', ['dist/cli.js', ...args], { encoding: 'utf8' });
};

type WaveFileCtor = new () => {
  fromScratch(c: number, sr: number, d: string, s: unknown): void;
  toBuffer(): Uint8Array;
};
const ns = wavefileNs as unknown as { WaveFile?: WaveFileCtor; default?: { WaveFile?: WaveFileCtor } };
const WaveFile = (ns.WaveFile ?? ns.default?.WaveFile) as WaveFileCtor;

/**
 * Writes `channels` (one array per channel, already in the sample format of `depth`: wavefile's
 * '32f', '16', …) as a WAV file at `path`.
 */
export function writeTestWav(
  path: string,
  channels: ArrayLike<number>[],
  sampleRate: number,
  depth = '32f',
): void {
  const w = new WaveFile();
  w.fromScratch(channels.length, sampleRate, depth, channels.length === 1 ? channels[0] : channels);
  writeFileSync(path, w.toBuffer());
}
