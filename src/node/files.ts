/**
 * Safe file output for the command line and Node users: every write goes to a temporary file in the
 * destination's own folder and is renamed into place, so a full disk or a crash leaves the old file
 * (or no file), never a truncated one; and outputs are checked against inputs (by real path and by
 * inode) before any work starts, so no command can overwrite what it reads.
 */
import { randomBytes } from 'node:crypto';
import {
  closeSync,
  fsyncSync,
  openSync,
  renameSync,
  statfsSync,
  statSync,
  unlinkSync,
  writeSync,
} from 'node:fs';
import { basename, dirname, join, resolve } from 'node:path';
import { OrthotoneError } from '../core/errors.js';

/**
 * An error Node raised for a write that cannot be done, turned into one readable line naming the
 * file and the cause.
 * @throws never
 */
export function describeWriteError(e: unknown, path: string): string {
  const err = e as NodeJS.ErrnoException;
  switch (err.code) {
    case 'ENOSPC':
      return `cannot write ${path}: the disk is full (the previous file, if any, is kept)`;
    case 'EACCES':
    case 'EPERM':
      return `cannot write ${path}: permission denied`;
    case 'ENOENT':
      return `cannot write ${path}: its folder ${dirname(path)} does not exist`;
    case 'EISDIR':
      return `cannot write ${path}: it is a folder`;
    case 'EROFS':
      return `cannot write ${path}: the file system is read-only`;
    default:
      return `cannot write ${path}: ${err.message ?? String(e)}`;
  }
}

/**
 * A temporary name beside `path` (same folder, so the rename is atomic on one file system).
 * @throws never
 */
export function temporaryPathFor(path: string): string {
  return join(dirname(path), `.${basename(path)}.${process.pid}.${randomBytes(4).toString('hex')}.tmp`);
}

/**
 * Writes a whole file atomically: to a temporary file in the same folder, flushed, then renamed over
 * `path`. On any failure the temporary file is removed and an existing `path` is left untouched.
 * Method: write-then-rename, atomic within one POSIX file system (IEEE Std 1003.1, `rename()`).
 * @param path destination file.
 * @param data text (written as UTF-8) or bytes.
 * @throws {OrthotoneError} `WRITE_FAILED` with one line naming the file and the cause (disk full,
 *   permission denied, missing folder, read-only file system).
 */
export function writeFileAtomic(path: string, data: string | Uint8Array): void {
  const tmp = temporaryPathFor(path);
  const bytes = typeof data === 'string' ? Buffer.from(data, 'utf8') : data;
  let fd: number | undefined;
  try {
    fd = openSync(tmp, 'wx', 0o644);
    let off = 0;
    while (off < bytes.length) off += writeSync(fd, bytes, off, bytes.length - off);
    fsyncSync(fd);
    closeSync(fd);
    fd = undefined;
    renameSync(tmp, path);
  } catch (e) {
    if (fd !== undefined) {
      try {
        closeSync(fd);
      } catch {
        // already failing; the write error is the one to report
      }
    }
    try {
      unlinkSync(tmp);
    } catch {
      // the temporary file was never created
    }
    throw new OrthotoneError('WRITE_FAILED', describeWriteError(e, path), path);
  }
}

/** Identity of an existing file (symbolic links followed): `device:inode`, or undefined when it does not exist. */
function identity(path: string): string | undefined {
  try {
    const s = statSync(path);
    return `${s.dev}:${s.ino}`;
  } catch {
    return undefined;
  }
}

/**
 * Refuses when an output is the same file as an input, or two outputs are the same file: compared
 * by device and inode when the file exists (catching hard and symbolic links) and by resolved real
 * path otherwise. Call it before any work, so nothing is read or computed for a run that would
 * destroy its own input.
 * @param inputs `[optionName, path]` pairs of files the command reads (undefined entries skipped).
 * @param outputs `[optionName, path]` pairs of files the command writes (undefined entries skipped).
 * @throws {OrthotoneError} `OUTPUT_IS_INPUT` naming both options and the file, with the fix.
 */
export function assertDistinctFiles(
  inputs: ReadonlyArray<readonly [string, string | undefined]>,
  outputs: ReadonlyArray<readonly [string, string | undefined]>,
): void {
  const keyOf = (path: string): string => {
    const id = identity(path);
    if (id !== undefined) return id;
    // A file that does not exist yet: its folder's identity (links followed) plus its name; a
    // folder that does not exist either (the write will report it): its resolved path.
    const dir = resolve(dirname(path));
    return `${identity(dir) ?? dir}/${basename(path)}`;
  };
  const seen: Array<{ name: string; path: string; key: string; isInput: boolean }> = [];
  for (const [name, path] of inputs)
    if (path !== undefined) seen.push({ name, path, key: keyOf(path), isInput: true });
  for (const [name, path] of outputs) {
    if (path === undefined || path === '-') continue;
    const key = keyOf(path);
    const clash = seen.find((s) => s.key === key);
    if (clash) {
      const what = clash.isInput ? 'is also the input' : 'is also the output';
      throw new OrthotoneError(
        'OUTPUT_IS_INPUT',
        `${name} ${path} ${what} ${clash.name} ${clash.path}: writing it would destroy it; choose another file for ${name}`,
        path,
      );
    }
    seen.push({ name, path, key, isInput: false });
  }
}

/** The figures of a file system that {@link checkFreeSpace} reads (as `statfs(2)` gives them). */
export interface FreeSpaceFigures {
  /** Blocks free to an unprivileged user. */
  bavail: number;
  /** Block size, bytes. */
  bsize: number;
}

/**
 * Refuses, before any work, a write that cannot fit in the free space of the destination's file
 * system (a long render would otherwise run for minutes and then fail).
 * Method: free bytes = available blocks × block size, as `statfs(2)` reports them (`f_bavail`,
 * `f_bsize`; Linux statfs(2), POSIX `fstatvfs()`).
 * @param path destination file.
 * @param bytes bytes the file will take.
 * @param option the option that named it, for the message.
 * @param statfs reads a folder's figures (default Node's `statfsSync`; tests pass a stand-in disk).
 * @throws {OrthotoneError} WRITE_FAILED naming the option, the size needed and the space free.
 */
export function checkFreeSpace(
  path: string,
  bytes: number,
  option: string,
  statfs: (dir: string) => FreeSpaceFigures = statfsSync,
): void {
  let free = Number.POSITIVE_INFINITY;
  try {
    const s = statfs(dirname(resolve(path)));
    free = s.bavail * s.bsize;
  } catch {
    // no figures (a missing folder): its own error is reported when the file is opened
  }
  if (bytes > free) {
    const gb = (x: number): string =>
      x >= 1e9
        ? `${(x / 1e9).toFixed(2)} GB`
        : x >= 1e6
          ? `${(x / 1e6).toFixed(2)} MB`
          : `${(x / 1e3).toFixed(1)} kB`;
    throw new OrthotoneError(
      'WRITE_FAILED',
      `${option} ${path} needs ${gb(bytes)} but its disk has ${gb(free)} free: shorten the file, choose a smaller encoding, or free space`,
      path,
    );
  }
}

/** A text file written in pieces through a temporary file (see {@link createTextWriter}). */
export interface TextWriter {
  /**
   * Appends text (UTF-8).
   * @throws {OrthotoneError} WRITE_FAILED (the temporary file removed) when the disk refuses it.
   */
  write(text: string): void;
  /**
   * Flushes and renames the file into place.
   * @throws {OrthotoneError} WRITE_FAILED (an old file at the path is kept).
   */
  close(): void;
  /**
   * Gives up: removes the temporary file, keeps any old file.
   * @throws never
   */
  abort(): void;
}

/** An open temporary file beside its destination, to be committed (renamed into place) or abandoned. */
export interface AtomicTarget {
  /** File descriptor of the temporary file, for plain or positional writes. */
  readonly fd: number;
  /**
   * Flushes, closes and renames the temporary file over the destination.
   * @throws the file system's error (the caller maps it; call `abort()` after a failure).
   */
  commit(): void;
  /**
   * Closes and removes the temporary file; the destination is left as it was. Safe to call twice.
   * @throws never
   */
  abort(): void;
}

/**
 * Opens a temporary file beside `path` for a write that will be renamed into place: the one
 * mechanism under {@link createTextWriter} and the WAV writer. Method: write-then-rename (IEEE Std
 * 1003.1, `rename()`), atomic within one file system.
 * @param path destination file.
 * @returns the open target.
 * @throws {OrthotoneError} WRITE_FAILED when the temporary file cannot be created.
 */
export function openAtomicTarget(path: string): AtomicTarget {
  const tmp = temporaryPathFor(path);
  let fd: number | undefined;
  try {
    fd = openSync(tmp, 'wx', 0o644);
  } catch (e) {
    throw new OrthotoneError('WRITE_FAILED', describeWriteError(e, path), path);
  }
  const open = fd;
  let settled = false;
  return {
    fd: open,
    commit() {
      fsyncSync(open);
      closeSync(open);
      fd = undefined;
      renameSync(tmp, path);
      settled = true;
    },
    abort() {
      if (settled) return;
      settled = true;
      try {
        if (fd !== undefined) closeSync(fd);
      } catch {
        // already failing; the first error is the one to report
      }
      fd = undefined;
      try {
        unlinkSync(tmp);
      } catch {
        // never created, or already gone
      }
    },
  };
}

/**
 * Writes a long text file in pieces, atomically: to a temporary file in the same folder, renamed
 * over `path` by `close()`. Method: write-then-rename (IEEE Std 1003.1, `rename()`).
 * @param path destination.
 * @returns the writer.
 * @throws {OrthotoneError} WRITE_FAILED when the temporary file cannot be created.
 */
export function createTextWriter(path: string): TextWriter {
  const target = openAtomicTarget(path);
  const { abort } = target;
  const guard = (f: () => void): void => {
    try {
      f();
    } catch (e) {
      abort();
      throw new OrthotoneError('WRITE_FAILED', describeWriteError(e, path), path);
    }
  };
  return {
    write(text) {
      const b = Buffer.from(text, 'utf8');
      guard(() => {
        let off = 0;
        while (off < b.length) off += writeSync(target.fd, b, off, b.length - off);
      });
    },
    close() {
      guard(target.commit);
    },
    abort,
  };
}

/**
 * Writes a set of files into one folder, all or nothing: each goes to a temporary file first; only
 * when every one is written and flushed are they renamed into place. On a failure every temporary
 * file is removed and the previous set is left as it was.
 * Method: write-then-rename (IEEE Std 1003.1, `rename()`), staged for the whole set.
 * @param dir the folder (must exist).
 * @param files `[name, bytes]` pairs.
 * @throws {OrthotoneError} WRITE_FAILED naming the file that failed and the cause.
 */
export function writeFileSet(dir: string, files: ReadonlyArray<readonly [string, Uint8Array]>): void {
  const staged: [string, string][] = [];
  const cleanup = (): void => {
    for (const [tmp] of staged) {
      try {
        unlinkSync(tmp);
      } catch {
        // already gone
      }
    }
  };
  for (const [name, bytes] of files) {
    const path = join(dir, name);
    const tmp = temporaryPathFor(path);
    let fd: number | undefined;
    try {
      fd = openSync(tmp, 'wx', 0o644);
      staged.push([tmp, path]);
      let off = 0;
      while (off < bytes.length) off += writeSync(fd, bytes, off, bytes.length - off);
      fsyncSync(fd);
      closeSync(fd);
    } catch (e) {
      try {
        if (fd !== undefined) closeSync(fd);
      } catch {
        // already failing
      }
      cleanup();
      throw new OrthotoneError(
        'WRITE_FAILED',
        `${describeWriteError(e, path)}; nothing of the set was replaced`,
        path,
      );
    }
  }
  try {
    for (const [tmp, path] of staged) renameSync(tmp, path);
  } catch (e) {
    cleanup();
    throw new OrthotoneError('WRITE_FAILED', describeWriteError(e, dir), dir);
  }
}
