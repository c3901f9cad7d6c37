// `npm start`: only the command line, without type declarations (see cliBuild in tsup.config.ts).
import { defineConfig } from 'tsup';
import { cliBuild } from './tsup.config.js';

export default defineConfig([cliBuild]);
