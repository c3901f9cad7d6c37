// Vite configuration for the orthotone demo page (not published). The page imports the package by
// its own names, exactly as a user's page would:
//   import { designNetwork, … } from 'orthotone';
//   import workletUrl from 'orthotone/worklet?url';
// `npm run demo` needs no build step: the aliases below point those two names at the package's
// source entries (src/index.ts, and the AudioWorklet processor bundled as its own self-contained
// module through Vite's `?worker&url`, as tsup bundles dist/worklet/processor.js). Aliases were
// chosen over resolving the built dist/ (a build before every page reload) and over a workspace
// link (an install step); tsconfig.json maps the same names for the type checker.
import { dirname, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vite';

const here = dirname(fileURLToPath(import.meta.url));
const root = resolve(here, '..');

export default defineConfig({
  root: here,
  base: './',
  clearScreen: false,
  resolve: {
    alias: [
      // Exact names only: `orthotone/node` (Node APIs) must not resolve in a browser page.
      { find: /^orthotone\/worklet\?url$/, replacement: `${resolve(root, 'src/webaudio/processor.ts')}?worker&url` },
      { find: /^orthotone$/, replacement: resolve(root, 'src/index.ts') },
    ],
  },
  server: { fs: { allow: [root] } },
  worker: { format: 'es' },
  build: { outDir: resolve(here, 'dist'), emptyOutDir: true, target: 'es2022' },
  optimizeDeps: { include: ['uplot'] },
});
