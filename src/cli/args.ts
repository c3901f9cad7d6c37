/**
 * Small helpers shared by the CLI commands: option parsing on node:util's parseArgs, typed
 * number/range parsing, and one-line usage errors (exit status 2).
 */
import { type ParseArgsConfig, parseArgs } from 'node:util';
import { isOrthotoneError } from '../core/errors.js';
import { nearestName } from '../core/validate.js';

/** A usage error: printed as one line, exit status 2. */
export class UsageError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'UsageError';
  }
}

/** Option table for a command: parseArgs options plus a help line per option. */
export type OptionTable = NonNullable<ParseArgsConfig['options']>;

/** A token that reads as a negative number (`-70`, `-0.5`, `-.5`, `-1e3`), taken as an option's value. */
const NEGATIVE_NUMBER = /^-(\d|\.\d)/;

/**
 * Parses `argv` strictly (node:util `parseArgs`), with these rules on top:
 * - a value option followed by a negative number takes it as its value (`--floor -70`);
 * - an option given twice is refused (never last-wins);
 * - an unknown option is named, with the nearest known option.
 * @throws {UsageError} `unknown option --x: did you mean --y?`, `--x given twice`, a missing value,
 *   a value given to a switch, or a positional argument where none is allowed.
 */
export function parseCommand(
  argv: string[],
  options: OptionTable,
  allowPositionals = false,
): { values: Record<string, string | boolean | string[] | undefined>; positionals: string[] } {
  const args: string[] = [];
  for (let k = 0; k < argv.length; k++) {
    const a = argv[k]!;
    const next = argv[k + 1];
    const name = a.startsWith('--') && !a.includes('=') ? a.slice(2) : undefined;
    if (
      name !== undefined &&
      Object.hasOwn(options, name) &&
      options[name]!.type === 'string' &&
      next !== undefined &&
      NEGATIVE_NUMBER.test(next)
    ) {
      args.push(`${a}=${next}`);
      k++;
    } else args.push(a);
  }
  // First pass, lenient: unknown and repeated options get their own messages.
  const loose = parseArgs({ args, options, allowPositionals: true, strict: false, tokens: true });
  const seen = new Set<string>();
  for (const t of loose.tokens ?? []) {
    if (t.kind === 'option-terminator') break;
    if (t.kind !== 'option') continue;
    if (!Object.hasOwn(options, t.name)) {
      const raw = t.rawName.startsWith('--') ? t.rawName : args[t.index]!;
      if (NEGATIVE_NUMBER.test(raw)) {
        throw new UsageError(
          `unexpected ${raw}: a number must follow the option it belongs to (e.g. --floor ${raw})`,
        );
      }
      const known = Object.keys(options);
      let near = nearestName(t.name, known);
      if (near === undefined) {
        // A library key typed as an option (--targetDb, --tagetDb): name the option it is set by.
        const key = nearestName(t.name, Object.keys(CLI_NAMES));
        const opt = key === undefined ? undefined : CLI_NAMES[key]!;
        if (opt?.startsWith('--') && known.includes(opt.slice(2))) near = opt.slice(2);
      }
      throw new UsageError(
        `unknown option ${t.rawName}${near === undefined ? '' : `: did you mean --${near}?`} (--help lists the options)`,
      );
    }
    if (seen.has(t.name) && !options[t.name]!.multiple) {
      throw new UsageError(`--${t.name} is given twice: give it once`);
    }
    seen.add(t.name);
  }
  try {
    const r = parseArgs({ args, options, allowPositionals, strict: true });
    return {
      values: r.values as Record<string, string | boolean | string[] | undefined>,
      positionals: r.positionals,
    };
  } catch (e) {
    const err = e as Error & { code?: string };
    const m = /Option '(-[^' ]+)/.exec(err.message);
    if (err.code === 'ERR_PARSE_ARGS_INVALID_OPTION_VALUE' && m) {
      if (/does not take an argument/.test(err.message))
        throw new UsageError(`${m[1]} is a switch and takes no value`);
      throw new UsageError(`${m[1]} needs a value`);
    }
    if (err.code === 'ERR_PARSE_ARGS_UNEXPECTED_POSITIONAL') {
      const p = /'([^']*)'/.exec(err.message);
      throw new UsageError(
        `unexpected argument ${p ? JSON.stringify(p[1]) : ''}: this command takes options only`,
      );
    }
    throw new UsageError(err.message.split('\n')[0] ?? 'bad arguments');
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

/**
 * Library option keys and the CLI options a user types for them. Messages from the library name
 * its keys (`targetDb 250 dB is out of range`); the CLI shows the option instead (`--target 250 dB
 * is out of range`). Keys without a CLI option (maxTaps) are explained in CLI terms.
 */
export const CLI_NAMES: Readonly<Record<string, string>> = Object.freeze({
  sampleRate: '--rate',
  targetDb: '--target',
  firMethod: '--fir-method',
  allpassForm: '--form',
  coefficientFormat: '--coefficients',
  maxTaps: 'the FIR length limit',
  maxSections: 'the section limit',
  gainDb: '--gain-db',
  phaseDeg: '--phase-deg',
  skewSamples: '--skew',
  dcI: '--dc-i',
  dcQ: '--dc-q',
  levelDbfs: '--level',
  durationSeconds: '--duration',
  floorDbc: '--floor',
  resolutionHz: '--resolution',
  offsetHz: '--offset',
});

/**
 * Rewrites a library message so that it names CLI options: each key of `names` (as a whole word)
 * becomes its option, and the leading `taps N` / `sections N` / `method 'x'` become `--taps N`, ….
 * @throws never
 */
export function toCliWords(message: string, names: Readonly<Record<string, string>> = CLI_NAMES): string {
  let m = message;
  for (const [key, opt] of Object.entries({ ...CLI_NAMES, ...names })) {
    m = m.replace(new RegExp(`(?<![\\w-])${key}(?![\\w])`, 'g'), opt);
  }
  return m
    .replace(/(?<![\w-])(taps|sections) (-?[\d.]+)/g, '--$1 $2')
    .replace(/(?<![\w-])(drop|omit) (taps|sections)\b/g, '$1 --$2')
    .replace(/(?<![\w-])method '/g, "--method '");
}

/**
 * Runs `fn` and re-throws an OrthotoneError from it with its message in CLI words
 * ({@link toCliWords}); other errors pass unchanged.
 * @throws {UsageError} for an OrthotoneError from `fn`; whatever else `fn` throws.
 */
export function inCliWords<T>(fn: () => T, names?: Readonly<Record<string, string>>): T {
  try {
    return fn();
  } catch (e) {
    if (isOrthotoneError(e)) throw new UsageError(toCliWords(e.message, names));
    throw e;
  }
}

/**
 * Parses a seed option: a whole number from 0 to 4294967295 (seeds are unsigned 32-bit integers;
 * −1, 1.5 or 1e30 would otherwise be folded silently into another seed). `fallback` when absent.
 * @throws {UsageError} `--NAME x must be a whole number from 0 to 4294967295`.
 */
export function seedOpt(name: string, v: unknown, fallback: number): number {
  const x = numberOpt(name, v) ?? fallback;
  if (!Number.isInteger(x) || x < 0 || x > 0xffffffff) {
    throw new UsageError(`--${name} ${x} must be a whole number from 0 to 4294967295`);
  }
  return x;
}
