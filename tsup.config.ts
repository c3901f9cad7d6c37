import { defineConfig, type Options } from 'tsup';

const dts = { compilerOptions: { ignoreDeprecations: '6.0' } };

/**
 * The command line alone (dist/cli.js and its chunks). `npm start` builds only this: the type
 * declarations of the library build take most of a full build's time and the CLI never reads them.
 */
export const cliBuild: Options = {
  entry: { cli: 'src/cli/main.ts' },
  format: ['esm'],
  platform: 'node',
  target: 'node20',
  banner: { js: '#!/usr/bin/env node' },
};

export default defineConfig([
  {
    entry: { index: 'src/index.ts', node: 'src/node/index.ts' },
    format: ['esm', 'cjs'],
    dts,
    sourcemap: true,
    target: 'es2022',
    platform: 'neutral',
    external: ['node:fs', 'node:path', 'node:child_process', 'node:process', 'node:readline', 'wavefile', 'fft.js'],
  },
  cliBuild,
  {
    // The AudioWorklet processor: one self-contained ES module (no imports), loaded by URL.
    entry: { 'worklet/processor': 'src/webaudio/processor.ts' },
    format: ['esm'],
    platform: 'browser',
    target: 'es2022',
    noExternal: [/.*/],
  },
]);
