/**
 * Builds the AudioWorklet processor with the package's own tsup worklet configuration into a private
 * folder under tests/artifacts/, so the tests check the same self-contained file the package ships
 * (dist/worklet/processor.js) without racing other builds of dist/ in a shared tree.
 */
import { existsSync, readFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { build, type Options } from 'tsup';
import configs from '../../../tsup.config.js';

/** Repository root. */
export const REPO_ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '../../..');

/**
 * Builds `src/webaudio/processor.ts` with the worklet entry of tsup.config.ts into
 * `tests/artifacts/<folder>/worklet/processor.js` and returns that absolute path.
 */
export async function buildWorklet(folder: string): Promise<string> {
  const list = (Array.isArray(configs) ? configs : [configs]) as Options[];
  const cfg = list.find(
    (c) => typeof c.entry === 'object' && !Array.isArray(c.entry) && 'worklet/processor' in c.entry,
  );
  if (!cfg) throw new Error('tsup.config.ts has no worklet/processor entry');
  const outDir = join(REPO_ROOT, 'tests/artifacts', folder);
  await build({ ...cfg, outDir, config: false, silent: true, clean: false, dts: false, sourcemap: false });
  const file = join(outDir, 'worklet/processor.js');
  if (!existsSync(file)) throw new Error(`worklet build did not write ${file}`);
  const text = readFileSync(file, 'utf8');
  // Self-contained: an AudioWorklet module must not depend on bundler-resolved imports.
  if (/^\s*import\s/m.test(text)) throw new Error(`${file} still has import statements`);
  return file;
}
