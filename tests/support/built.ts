/**
 * The built package (dist/) that the CLI, README and browser tests run, kept in step with src/: when
 * any file under src/ (or the build configuration) is newer than the oldest built entry, or an entry
 * is missing, `npm run build` runs once; if the build fails, the tests fail with its output instead
 * of running a stale dist/.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, readdirSync, statSync } from 'node:fs';
import { join, resolve } from 'node:path';

/** Repository root. */
export const ROOT = resolve(import.meta.dirname, '..', '..');

/** Built entries the tests use (package.json `exports` and `bin`). */
const ENTRIES = [
  'dist/index.js',
  'dist/index.cjs',
  'dist/node.js',
  'dist/cli.js',
  'dist/worklet/processor.js',
];
/** Build inputs besides src/. */
const INPUTS = ['tsup.config.ts', 'package.json', 'tsconfig.json'];

function newestUnder(dir: string): number {
  let t = 0;
  for (const e of readdirSync(dir, { withFileTypes: true })) {
    const p = join(dir, e.name);
    t = Math.max(t, e.isDirectory() ? newestUnder(p) : statSync(p).mtimeMs);
  }
  return t;
}

/**
 * Why dist/ cannot be used as it is, or undefined when every entry is newer than every source.
 * @throws never
 */
export function staleBuildReason(): string | undefined {
  const missing = ENTRIES.filter((e) => !existsSync(join(ROOT, e)));
  if (missing.length > 0) return `${missing.join(', ')} missing`;
  const built = Math.min(...ENTRIES.map((e) => statSync(join(ROOT, e)).mtimeMs));
  const source = Math.max(
    newestUnder(join(ROOT, 'src')),
    ...INPUTS.map((f) => statSync(join(ROOT, f)).mtimeMs),
  );
  if (source > built) {
    return `dist/ (built ${new Date(built).toISOString()}) is older than src/ (changed ${new Date(source).toISOString()})`;
  }
  return undefined;
}

let fresh = false;

/**
 * Builds dist/ when it is missing or older than src/ (once per test file), else does nothing.
 * @throws Error when the build fails or dist/ is still stale after it, with the build's output.
 */
export function ensureFreshBuild(): void {
  if (fresh) return;
  const why = staleBuildReason();
  if (why !== undefined) {
    const r = spawnSync('npm', ['run', 'build'], { cwd: ROOT, encoding: 'utf8' });
    const still = staleBuildReason();
    if (r.status !== 0 || still !== undefined) {
      throw new Error(
        `${why}; npm run build ${r.status !== 0 ? `failed (exit ${r.status})` : `left it stale: ${still}`}:\n${r.stdout}\n${r.stderr}`,
      );
    }
  }
  fresh = true;
}
