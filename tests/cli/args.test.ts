/**
 * Option parsing shared by every command (src/cli/args.ts): negative numbers as values, repeated
 * options refused, unknown options named with the nearest known one, library keys shown as the CLI
 * options a user types.
 */
import { describe, expect, it } from 'vitest';
import { parseCommand, toCliWords, UsageError } from '../../src/cli/args.js';

const OPTS = {
  floor: { type: 'string' },
  rate: { type: 'string' },
  iq: { type: 'boolean' },
  out: { type: 'string' },
  help: { type: 'boolean', short: 'h' },
} as const;

const fails = (argv: string[], allowPositionals = false): string => {
  try {
    parseCommand(argv, OPTS, allowPositionals);
  } catch (e) {
    expect(e).toBeInstanceOf(UsageError);
    return (e as Error).message;
  }
  throw new Error(`parseCommand accepted ${argv.join(' ')}`);
};

describe('parseCommand', () => {
  it('takes a negative number as the value of a value option, in every spelling', () => {
    for (const x of ['-70', '-0.5', '-.5', '-1e3', '-120']) {
      expect(parseCommand(['--floor', x], OPTS).values.floor).toBe(x);
    }
    expect(parseCommand(['--floor=-70', '--rate', '-48000'], OPTS).values.rate).toBe('-48000');
  });

  it('does not give a negative number to a switch; a stray one is named as such', () => {
    expect(fails(['--iq', '-3'], true)).toMatch(
      /^unexpected -3: a number must follow the option it belongs to/,
    );
  });

  it('refuses an option given twice instead of letting the last win', () => {
    expect(fails(['--floor', '-70', '--floor', '-90'])).toBe('--floor is given twice: give it once');
    expect(fails(['--iq', '--iq'])).toMatch(/--iq is given twice/);
  });

  it('names an unknown option and the nearest known one', () => {
    expect(fails(['--flor', '-70'])).toMatch(/^unknown option --flor: did you mean --floor\?/);
    expect(fails(['--rat', '48000'])).toMatch(/did you mean --rate\?/);
    // A library key typed as an option: the option that sets it.
    expect(fails(['--sampleRate', '48000'])).toMatch(/did you mean --rate\?/);
    // Nothing near: no guess.
    const m = fails(['--zzzzzzzz']);
    expect(m).toMatch(/^unknown option --zzzzzzzz/);
    expect(m).not.toMatch(/did you mean/);
  });

  it('says which option lacks its value, and which switch was given one', () => {
    expect(fails(['--out'])).toBe('--out needs a value');
    expect(fails(['--iq=1'])).toBe('--iq is a switch and takes no value');
  });
});

describe('toCliWords', () => {
  it('turns library keys into the options a user types', () => {
    expect(toCliWords('targetDb 250 dB is out of range: use a value from 1 to 200 dB')).toBe(
      '--target 250 dB is out of range: use a value from 1 to 200 dB',
    );
    expect(toCliWords("taps 64 must be odd: use 63 or 65; drop taps or use method 'fir'")).toBe(
      "--taps 64 must be odd: use 63 or 65; drop --taps or use --method 'fir'",
    );
    expect(toCliWords('sampleRate 5 is out of range')).toBe('--rate 5 is out of range');
  });
});
