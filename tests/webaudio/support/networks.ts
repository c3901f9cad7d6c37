/** Networks used by the webaudio tests: designed by the design/ module, never hand-written. */

import { designAllpassPair } from '../../../src/design/allpass-pair.js';
import { networkCost, predictFigures } from '../../../src/design/analysis.js';
import type { AllpassNetwork } from '../../../src/design/network.js';

/** A 60 dB all-pass pair for 300–3000 Hz at `sampleRate`. */
export function allpass60(sampleRate = 48000, band: [number, number] = [300, 3000]): AllpassNetwork {
  const d = designAllpassPair({ sampleRate, band, targetDb: 60 });
  const base = { kind: 'allpass' as const, sampleRate, band, branches: d.branches };
  return {
    format: 'orthotone-network',
    version: 1,
    ...base,
    predicted: predictFigures(base),
    cost: networkCost(base),
    design: { sampleRate, band, method: 'allpass', targetDb: 60 },
  };
}
