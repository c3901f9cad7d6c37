// The `@example` blocks of the public API are the first code people copy (STYLE.md habit 17, as
// scipy runs its docstring examples). Each one must type-check against the BUILT package's
// declarations (dist/*.d.ts) and run in Node against the built package (dist/*.js), imported by the
// package's own name exactly as a user writes it. `npm test` builds first.
//
// Conventions for an example: a ```ts fence; `import { … } from 'orthotone'` (or 'orthotone/node')
// lines as a user writes them (added here from the names it uses when left out); it may `await`.
// An example that needs a browser (`new AudioContext`) is type-checked only.
import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import ts from 'typescript';
import { afterAll, describe, expect, it } from 'vitest';
import { type ApiName, entryExports, REPO } from './support/api-surface.js';

/** Main entry points: each must carry a runnable example. */
const MAIN_ENTRY_POINTS: Record<string, string[]> = {
  orthotone: [
    'designNetwork',
    'analyzeNetwork',
    'designHilbertFir',
    'designAllpassPair',
    'createQuadratureGenerator',
    'createSignalSource',
    'createMultitoneSource',
    'measureSideband',
    'measureTones',
    'measureTwoTone',
    'calibrateSideband',
    'calibrateCarrier',
    'calibrateSidebandAndCarrier',
    'createVirtualExciter',
    'createAnalyzer',
    'networkToJson',
    'parseNetworkJson',
    'plotToSvg',
    'createQuadratureNode',
  ],
  'orthotone/node': ['writeIqWavFile', 'readIqWavFile'],
};

const dir = join(REPO, 'tests', 'artifacts', 'examples');

interface Example {
  entry: string;
  owner: string;
  file: string;
  code: string;
  browser: boolean;
}

function codeOf(raw: string): string {
  const fenced = raw.match(/```(?:ts|typescript)?\n([\s\S]*?)```/);
  return (fenced ? fenced[1]! : raw).replace(/^\s*\n/, '');
}

function collect(): Example[] {
  const api = entryExports();
  const seen = new Set<string>();
  const out: Example[] = [];
  for (const [entry, names] of Object.entries(api)) {
    const publicNames = new Set(names.map((n) => n.name));
    for (const n of names as ApiName[]) {
      // orthotone/node re-exports orthotone: each example once, under the entry that owns the name.
      const key = `${n.file}#${n.name}`;
      if (seen.has(key)) continue;
      seen.add(key);
      n.examples.forEach((raw, k) => {
        let code = codeOf(raw);
        if (!/^\s*import\s/m.test(code)) {
          const used = [...publicNames].filter((p) => new RegExp(`\\b${p}\\b`).test(code));
          code = `import { ${used.join(', ')} } from '${entry}';\n${code}`;
        }
        out.push({
          entry,
          owner: n.name,
          file: join(dir, `${n.name}-${k}.ts`),
          code,
          browser: /\bnew AudioContext\b|\baudioWorklet\b/.test(code),
        });
      });
    }
  }
  return out;
}

describe('@example blocks of the public API', () => {
  const built = existsSync(join(REPO, 'dist', 'index.js')) && existsSync(join(REPO, 'dist', 'index.d.ts'));
  const examples = collect();
  mkdirSync(dir, { recursive: true });
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('every main entry point is public and has an example', () => {
    const api = entryExports();
    const missing: string[] = [];
    for (const [entry, names] of Object.entries(MAIN_ENTRY_POINTS)) {
      for (const name of names) {
        const n = api[entry]!.find((x) => x.name === name);
        if (!n) missing.push(`${entry}: ${name} is not exported`);
        else if (n.examples.length === 0) missing.push(`${entry}: ${name} (${n.file}) has no @example`);
      }
    }
    expect(missing).toEqual([]);
  });

  it('type-checks every example against the built declarations', () => {
    expect(built, 'run `npm run build` first').toBe(true);
    for (const e of examples) writeFileSync(e.file, `${e.code}\nexport {};\n`);
    writeFileSync(
      join(dir, 'tsconfig.json'),
      JSON.stringify({
        extends: join(REPO, 'tsconfig.json'),
        include: examples.map((e) => e.file),
        // `orthotone` resolves to this package through its own package.json "exports" (a package
        // may import itself by name), i.e. to dist/*.d.ts and dist/*.js.
        // The root tsconfig maps 'orthotone' to src/ for the demo: undo that here.
        compilerOptions: { noEmit: true, noUnusedLocals: false, paths: {} },
      }),
    );
    const r = spawnSync(join(REPO, 'node_modules', '.bin', 'tsc'), ['-p', join(dir, 'tsconfig.json')], {
      encoding: 'utf8',
    });
    expect(r.stdout + r.stderr).toBe('');
    expect(r.status).toBe(0);
  });

  it('runs every Node-runnable example against the built package', () => {
    expect(built, 'run `npm run build` first').toBe(true);
    const failures: string[] = [];
    let ran = 0;
    for (const e of examples) {
      if (e.browser) continue;
      const js = ts.transpileModule(e.code, {
        compilerOptions: { module: ts.ModuleKind.ESNext, target: ts.ScriptTarget.ES2022 },
      }).outputText;
      const file = e.file.replace(/\.ts$/, '.mjs');
      writeFileSync(file, js);
      try {
        execFileSync('node', [file], { cwd: dir, encoding: 'utf8', stdio: 'pipe', timeout: 60_000 });
        ran++;
      } catch (err) {
        const x = err as { stderr?: string; message: string };
        failures.push(
          `${e.owner} (${e.entry}): ${(x.stderr || x.message).split('\n').slice(0, 6).join('\n')}`,
        );
      }
    }
    expect(failures).toEqual([]);
    expect(ran).toBeGreaterThanOrEqual(Object.values(MAIN_ENTRY_POINTS).flat().length - 1);
  });
});
