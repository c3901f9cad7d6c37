// What each mutation-testing scope mutates and which unit tests run against it (stryker.config.mjs,
// tests/mutants/vitest.mutants.config.ts). Shared so both read one list.
export const SCOPES = {
  measure: {
    mutate: ['src/measure/**/*.ts', '!src/measure/index.ts'],
    // Short-capture tests only: the suites with long captures and many frame lengths
    // (sideband-frames, sideband, tones, tones-leakage, two-tone: up to 262144 samples, a 4-minute dry
    // run here and over 60 s per test instrumented) run in `npm test`; readings-light.test.ts and
    // sideband-light.test.ts repeat their main checks on 2048–16384 samples. windows.test.ts checks
    // src/core only.
    tests: [
      'tests/measure/leakage.test.ts',
      'tests/measure/measure-edges.test.ts',
      'tests/measure/peaks.test.ts',
      'tests/measure/readings-edges.test.ts',
      'tests/measure/readings-extra.test.ts',
      'tests/measure/readings-light.test.ts',
      'tests/measure/readings-more.test.ts',
      'tests/measure/sideband-light.test.ts',
      'tests/measure/sideband-paths.test.ts',
      'tests/measure/units.test.ts',
    ],
  },
  node: {
    // The files the issue names under src/node (WAV, files, I/Q streams); the serial and bridge
    // transports that came later are the device link's, tested with real pseudo-terminals elsewhere.
    mutate: ['src/node/wav.ts', 'src/node/files.ts', 'src/node/iq-stream.ts'],
    tests: ['tests/node/**/*.test.ts'],
  },
  'node-device': {
    // The rest of src/node: the serial channel and the WebSocket bridge, on a real pseudo-terminal and
    // real WebSocket clients (about 2 s). bridge-browser.test.ts (Chromium) is too slow per mutant.
    mutate: ['src/node/serial-transport.ts', 'src/node/bridge.ts'],
    tests: ['tests/device/serial-bridge.test.ts'],
    // serialport's native poller aborts the process when used from a worker thread (Stryker's default
    // pool): the tests run in a child process instead.
    pool: 'forks',
  },
  'trim-stage': {
    mutate: ['src/generate/trim-stage.ts'],
    // The stage's own tests, with short signals. quadrature-generator.test.ts (3.5 s, most of it in
    // the networks in front) is left out: too slow per mutant; trim-stage-checks.test.ts covers what
    // it checked of the stage (image rejection, carrier, skew, ramps, clone, block sizes) on its own.
    tests: [
      'tests/generate/trim-stage.test.ts',
      'tests/generate/trim-stage-edges.test.ts',
      'tests/generate/trim-stage-checks.test.ts',
    ],
  },
  seeker: {
    // The null seeker's evidence rules (seeker-evidence.ts) and its stop rules (checkStop, lines 35–93 of
    // seeker-plan.ts), as split by issue 9's rewrite. trim-calibration.test.ts (54 s) is left out: too
    // slow per mutant.
    mutate: ['src/calibrate/seeker-evidence.ts', 'src/calibrate/seeker-plan.ts:35-93'],
    tests: [
      'tests/calibrate/null-seeker.test.ts',
      'tests/calibrate/target-stop.test.ts',
      'tests/calibrate/seeker-evidence.test.ts',
      'tests/calibrate/seeker-stop.test.ts',
    ],
  },

  remez: {
    mutate: ['src/design/remez.ts'],
    tests: [
      'tests/design/remez.test.ts',
      'tests/design/remez-exchange.test.ts',
      'tests/design/remez-grid.test.ts',
    ],
  },
};
