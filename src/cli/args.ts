/**
 * Small helpers shared by the CLI commands: option parsing on node:util's parseArgs, typed
 * number/range parsing, and one-line usage errors (exit status 2).
 */
import { type ParseArgsConfig, parseArgs } from 'node:util';
import { isOrthotoneError } from '../core/errors.js';

/** A usage error: printed as one line, exit status 2. */
export class UsageError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'UsageError';
  }
}

/** Option table for a command: parseArgs options plus a help line per option. */
export type OptionTable = NonNullable<ParseArgsConfig['options']>;

/**
 * Parses `argv` strictly (node:util `parseArgs`); unknown options become a {@link UsageError}.
 * @throws {UsageError} the first line of parseArgs's message for an unknown option, a missing value
 *   or a positional argument where none is allowed.
 */
export function parseCommand(
  argv: string[],
  options: OptionTable,
  allowPositionals = false,
): { values: Record<string, string | boolean | string[] | undefined>; positionals: string[] } {
  try {
    const r = parseArgs({ args: argv, options, allowPositionals, strict: true });
    return {
      values: r.values as Record<string, string | boolean | string[] | undefined>,
      positionals: r.positionals,
    };
  } catch (e) {
    throw new UsageError((e as Error).message.split('\n')[0] ?? 'bad arguments');
  }
}

/**
 * Parses a number option; `undefined` passes through. The unit is the option's own (see its help).
 * @throws {UsageError} `--NAME "x" is not a number` for text that is not a finite number.
 */
export function numberOpt(name: string, v: unknown): number | undefined {
  if (v === undefined) return undefined;
  const x = Number(v);
  if (typeof v !== 'string' || v.trim() === '' || !Number.isFinite(x)) {
    throw new UsageError(`--${name} ${JSON.stringify(v)} is not a number`);
  }
  return x;
}

/**
 * Parses a list of numbers separated by `sep` (e.g. `300:3000`, `700,1900`); `undefined` passes
 * through. The unit is the option's own (see its help).
 * @throws {UsageError} when the value is not text, a part is not a finite number, or the list does
 *   not have `count` parts.
 */
export function numberListOpt(name: string, v: unknown, sep: string, count?: number): number[] | undefined {
  if (v === undefined) return undefined;
  if (typeof v !== 'string') throw new UsageError(`--${name} needs a value`);
  const parts = v.split(sep).map((p) => Number(p));
  if (parts.some((x) => !Number.isFinite(x)) || (count !== undefined && parts.length !== count)) {
    const shape = count === 2 ? `A${sep}B` : `A${sep}B${sep}…`;
    throw new UsageError(`--${name} ${JSON.stringify(v)} must be numbers written as ${shape}`);
  }
  return parts;
}

/** `a`, `a or b`, `a, b or c`: the words an option may take, for usage messages. */
function orList(words: readonly string[]): string {
  return words.length < 2 ? words.join('') : `${words.slice(0, -1).join(', ')} or ${words[words.length - 1]}`;
}

/**
 * Parses an option that takes one of a few words; `fallback` when the option is absent.
 * @throws {UsageError} `--NAME "x" must be a, b or c` for any other value.
 */
export function choiceOpt<T extends string>(name: string, v: unknown, choices: readonly T[], fallback: T): T {
  const x = v ?? fallback;
  if (typeof x !== 'string' || !(choices as readonly string[]).includes(x)) {
    throw new UsageError(`--${name} ${JSON.stringify(x)} must be ${orList(choices)}`);
  }
  return x as T;
}

/**
 * Looks up a named entry of `table` (e.g. a preset); the entry named `fallback` when the option is absent.
 * @throws {UsageError} `--NAME "x" is not known: use one of a, b` for a name the table lacks.
 */
export function lookupOpt<T>(
  name: string,
  v: unknown,
  table: Readonly<Record<string, T>>,
  fallback: string,
): T {
  const key = (v ?? fallback) as string;
  const entry = Object.hasOwn(table, key) ? table[key] : undefined;
  if (entry === undefined) {
    throw new UsageError(
      `--${name} ${JSON.stringify(key)} is not known: use one of ${Object.keys(table).join(', ')}`,
    );
  }
  return entry;
}

/** A Node file-system error (ENOENT, EACCES, EISDIR, …) on a path the user named. */
function isFileError(e: unknown): e is NodeJS.ErrnoException & { path: string } {
  const x = e as NodeJS.ErrnoException | null;
  return typeof x?.code === 'string' && typeof x.syscall === 'string' && typeof x.path === 'string';
}

/**
 * Runs a command body, mapping usage errors, library errors and file errors on paths the user
 * named (a folder that does not exist, no permission) to one line on stderr and exit status 2.
 * @returns the body's exit status, or 2 after a {@link UsageError}, an OrthotoneError or a file error.
 * @throws any other error from `body` (a bug, not a usage problem), passed on unchanged.
 */
export async function runGuarded(body: () => Promise<number> | number): Promise<number> {
  try {
    return await body();
  } catch (e) {
    if (e instanceof UsageError || isOrthotoneError(e)) {
      process.stderr.write(`orthotone: ${e.message}\n`);
      return 2;
    }
    if (isFileError(e)) {
      process.stderr.write(
        `orthotone: cannot ${e.syscall} ${e.path}: ${e.code}: check the path and permissions\n`,
      );
      return 2;
    }
    throw e;
  }
}
