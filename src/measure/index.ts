// The public names of this folder: a deliberate list (docs/api.md lists them; tests/api-surface.test.ts
// checks the two agree). Everything else here is internal: import it from its own file.

export {
  DEFAULT_SIDEBAND_OPTIONS,
  measureSideband,
  type SidebandOptions,
  type SidebandReading,
} from './sideband.js';
export type { Capture, IqCapture } from './signal.js';
export {
  computeSpectrum,
  DEFAULT_SPECTRUM_OPTIONS,
  type Spectrum,
  type SpectrumOptions,
} from './spectrum.js';
export {
  analyzeTones,
  createToneReader,
  DEFAULT_TONE_OPTIONS,
  measureTones,
  type ToneAnalysis,
  type ToneOptions,
  type ToneReader,
  type ToneReading,
  type ToneRequest,
} from './tones.js';
export { measureTwoTone, type ProductReading, type TwoToneOptions, type TwoToneReading } from './two-tone.js';
