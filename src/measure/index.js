// The public names of this folder: a deliberate list (docs/api.md lists them; tests/api-surface.test.ts
// checks the two agree). Everything else here is internal: import it from its own file.
export { DEFAULT_SIDEBAND_OPTIONS, measureSideband, } from './sideband.js';
export { computeSpectrum, DEFAULT_SPECTRUM_OPTIONS, } from './spectrum.js';
export { analyzeTones, createToneReader, DEFAULT_TONE_OPTIONS, measureTones, } from './tones.js';
export { measureTwoTone } from './two-tone.js';
