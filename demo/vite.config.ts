// Vite configuration for the orthotone demo page (not published). The page imports the library from
// ../src directly; the AudioWorklet processor is bundled as its own module via `?worker&url`.
import { dirname, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vite';

const here = dirname(fileURLToPath(import.meta.url));

export default defineConfig({
  root: here,
  base: './',
  clearScreen: false,
  server: { fs: { allow: [resolve(here, '..')] } },
  worker: { format: 'es' },
  build: { outDir: resolve(here, 'dist'), emptyOutDir: true, target: 'es2022' },
  optimizeDeps: { include: ['uplot'] },
});
