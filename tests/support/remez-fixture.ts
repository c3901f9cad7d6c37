/**
 * The scipy remez fixture shared by the Remez and Hilbert FIR tests: scipy 1.10.1
 * `scipy.signal.remez`, made by tests/fixtures/scipy/gen_remez_hilbert.py (command in
 * tests/fixtures/scipy/README.md). scipy's Hilbert sign is the opposite of the textbook one.
 */
import { readFileSync } from 'node:fs';

/** One scipy remez case as stored in remez_hilbert.json. */
export interface RemezCase {
  name: string;
  numtaps: number;
  bands: number[];
  desired: number[];
  weight?: number[];
  type: 'bandpass' | 'differentiator' | 'hilbert';
  fs: number;
  converged: boolean;
  taps: number[];
  rippleDense?: number;
}

/** Reads tests/fixtures/scipy/remez_hilbert.json, or another scipy remez fixture of that folder. */
export function loadRemezFixture<C extends RemezCase = RemezCase>(
  file = 'remez_hilbert.json',
): { scipy: string; cases: C[] } {
  return JSON.parse(readFileSync(new URL(`../fixtures/scipy/${file}`, import.meta.url), 'utf8')) as {
    scipy: string;
    cases: C[];
  };
}
