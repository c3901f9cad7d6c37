/**
 * Helpers of the tests under tests/node: a small real disk that fills up (a 64 KiB tmpfs, mounted as
 * root, as the CLI's full-disk tests do), and the process's open file descriptors (Linux
 * /proc/self/fd, proc(5)), to check that a writer leaves none open on its files.
 */
import { execFileSync } from 'node:child_process';
import { existsSync, mkdirSync, readdirSync, readFileSync, readlinkSync, rmdirSync, rmSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { afterAll, beforeAll } from 'vitest';

/** Mount points made by {@link mountSmallDisk}: `…/orthotone-…/small-<pid of the test process>`. */
const MOUNT_NAME = /\/orthotone-[^/\s]+\/small-(\d+)$/;

/**
 * Unmounts the small disks of test processes that no longer run (a mutation run kills a test
 * worker that loops, so its `afterAll` never comes). A live owner's disk is left alone.
 */
function unmountOrphans(): void {
  let table = '';
  try {
    table = readFileSync('/proc/self/mounts', 'utf8');
  } catch {
    return; // not Linux: nothing of ours to find
  }
  for (const line of table.split('\n')) {
    const [, point, type] = line.split(' ');
    const owner = point !== undefined && type === 'tmpfs' ? MOUNT_NAME.exec(point) : null;
    if (!owner || Number(owner[1]) === process.pid) continue;
    try {
      process.kill(Number(owner[1]), 0);
      continue; // its process still runs
    } catch {
      // no such process: the disk is an orphan
    }
    try {
      execFileSync('umount', [point!], { stdio: 'ignore' });
      rmSync(dirname(point!), { recursive: true, force: true });
    } catch {
      // someone else's, or already gone
    }
  }
}

/**
 * Mounts a tmpfs of `kib` KiB in a folder `small-<pid>` under `parent` and returns its path, or
 * undefined when this is not possible (not root, no mount command, a container without the right):
 * the tests that need it are then skipped. Orphans of killed test processes are unmounted first.
 */
export function mountSmallDisk(parent: string, kib = 64): string | undefined {
  unmountOrphans();
  const dir = join(parent, `small-${process.pid}`);
  mkdirSync(dir, { recursive: true });
  try {
    execFileSync('mount', ['-t', 'tmpfs', '-o', `size=${kib}k`, 'tmpfs', dir], { stdio: 'ignore' });
    return dir;
  } catch {
    rmdirSync(dir);
    return undefined;
  }
}

/** Unmounts what {@link mountSmallDisk} mounted and removes its folder. */
export function unmountSmallDisk(dir: string | undefined): void {
  if (dir === undefined) return;
  execFileSync('umount', [dir]);
  rmdirSync(dir);
}

/** True where the process's descriptors can be listed (Linux). */
export const canListDescriptors = existsSync('/proc/self/fd');

/**
 * Skips the calling test when `available` is false (`what` names the missing piece), except under
 * .ci/run (ORTHOTONE_CI=1), which runs as root on Linux: there a missing piece fails the test, so a lost
 * privilege cannot hide it as a skip.
 */
export function skipUnless(available: boolean, ctx: { skip: () => void }, what: string): void {
  if (available) return;
  if (process.env.ORTHOTONE_CI === '1') {
    throw new Error(
      `${what} is not available, but .ci/run provides it (root on Linux): check the CI machine`,
    );
  }
  ctx.skip();
}

/** Skips (or, under .ci/run, fails) a test that lists this process's descriptors where it cannot. */
export function needDescriptors(ctx: { skip: () => void }): void {
  skipUnless(canListDescriptors, ctx, '/proc/self/fd (Linux)');
}

/**
 * Mounts a small disk under `parent()` for the calling `describe` block (unmounted after it) and
 * returns a getter that gives its folder inside a test, or skips the test where it cannot be mounted
 * (fails under .ci/run; see {@link skipUnless}).
 */
export function useSmallDisk(parent: () => string): (ctx: { skip: () => void }) => string {
  let disk: string | undefined;
  beforeAll(() => {
    disk = mountSmallDisk(parent());
  });
  afterAll(() => unmountSmallDisk(disk));
  return (ctx) => {
    skipUnless(disk !== undefined, ctx, 'a 64 KiB tmpfs (mount, as root)');
    return disk as string;
  };
}

/**
 * The targets of this process's open descriptors that lie under `dir` (a file already removed
 * reads as `<path> (deleted)`).
 */
export function descriptorsUnder(dir: string): string[] {
  const out: string[] = [];
  for (const n of readdirSync('/proc/self/fd')) {
    try {
      const t = readlinkSync(`/proc/self/fd/${n}`);
      if (t.startsWith(`${dir}/`)) out.push(t);
    } catch {
      // the descriptor readdir itself used, closed since
    }
  }
  return out;
}
