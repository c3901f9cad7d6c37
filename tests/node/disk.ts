/**
 * Helpers of the tests under tests/node: a small real disk that fills up (a 64 KiB tmpfs, mounted as
 * root, as the CLI's full-disk tests do), and the process's open file descriptors (Linux
 * /proc/self/fd, proc(5)), to check that a writer leaves none open on its files.
 */
import { execFileSync } from 'node:child_process';
import { existsSync, mkdirSync, readdirSync, readlinkSync, rmdirSync } from 'node:fs';

/**
 * Mounts a tmpfs of `kib` KiB at `dir` (created here); false when this is not possible (not root,
 * no mount command, a container without the right): the tests that need it are then skipped.
 */
export function mountSmallDisk(dir: string, kib = 64): boolean {
  mkdirSync(dir, { recursive: true });
  try {
    execFileSync('mount', ['-t', 'tmpfs', '-o', `size=${kib}k`, 'tmpfs', dir], { stdio: 'ignore' });
    return true;
  } catch {
    return false;
  }
}

/** Unmounts what {@link mountSmallDisk} mounted and removes the folder. */
export function unmountSmallDisk(dir: string, mounted: boolean): void {
  if (mounted) execFileSync('umount', [dir]);
  rmdirSync(dir);
}

/** True where the process's descriptors can be listed (Linux). */
export const canListDescriptors = existsSync('/proc/self/fd');

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
