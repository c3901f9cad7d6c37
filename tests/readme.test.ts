// The README's TypeScript examples are the documentation users copy: they must type-check under the
// project's strict settings against the BUILT package's types, run against the BUILT package (dist/,
// imported as 'orthotone' exactly as written, resolved by Node's package self-reference through
// package.json `exports`), and print what the README says they print.
// dist/ is rebuilt first when older than src/ (tests/support/dist-setup.ts).
import { spawnSync } from 'node:child_process';
import { mkdirSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { ROOT as root } from './support/built.js';

// Inside the repository, so that `import … from 'orthotone'` resolves to this package's dist/.
const dir = join(root, 'tests', 'artifacts', 'readme');
const out = join(dir, 'js');
const blocks = [...readFileSync(join(root, 'README.md'), 'utf8').matchAll(/```ts\n([\s\S]*?)```/g)].map(
  (m) => m[1]!,
);

describe('README examples, against the built package', () => {
  mkdirSync(dir, { recursive: true });
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('has at least one TypeScript example, importing the package by name', () => {
    expect(blocks.length).toBeGreaterThan(0);
    for (const b of blocks) expect(b).toMatch(/from 'orthotone(\/node)?'/);
    expect(blocks.join('\n')).not.toMatch(/from '\.\.?\//);
  });

  it('type-checks every example against dist/*.d.ts and compiles it to JavaScript', () => {
    const files = blocks.map((code, k) => {
      const f = join(dir, `example-${k}.ts`);
      writeFileSync(f, `${code}\nexport {};\n`);
      return f;
    });
    writeFileSync(
      join(dir, 'tsconfig.json'),
      JSON.stringify({
        extends: join(root, 'tsconfig.json'),
        include: files,
        // paths: {} so 'orthotone' resolves to the built package (package.json exports), not to src/ through
        // the root tsconfig's mapping for the demo (which made tsc emit .js files into src/).
        compilerOptions: {
          noEmit: false,
          outDir: out,
          rootDir: dir,
          declaration: false,
          sourceMap: false,
          paths: {},
        },
      }),
    );
    const tsc = spawnSync(join(root, 'node_modules', '.bin', 'tsc'), ['-p', join(dir, 'tsconfig.json')], {
      encoding: 'utf8',
    });
    expect(tsc.status, tsc.stdout + tsc.stderr).toBe(0);
    // Only the examples were compiled: nothing was emitted beside the sources (a tsc that followed
    // 'orthotone' into src/ once wrote 87 .js files there), and the import still names the package.
    expect(
      readdirSync(out)
        .filter((f) => f.endsWith('.js'))
        .sort(),
    ).toEqual(blocks.map((_, k) => `example-${k}.js`).sort());
    expect(readFileSync(join(out, 'example-0.js'), 'utf8')).toMatch(/from 'orthotone'/);
  });

  it('the library example runs on dist/ and prints a network meeting 60 dB and finite trims', () => {
    const r = spawnSync('node', [join(out, 'example-0.js')], { cwd: dir, encoding: 'utf8' });
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    // Line 1: `console.log(net.kind, worst.toFixed(1), 'dB')` for a design asked for 60 dB.
    const lines = r.stdout.trim().split('\n');
    const m = /^(fir|allpass) (\d+\.\d) dB$/.exec(lines[0]!);
    expect(m, r.stdout).not.toBeNull();
    expect(Number(m![2])).toBeGreaterThanOrEqual(60);
    // Then the trims object: the four trims, each a finite number (Node's inspect format).
    const rest = lines.slice(1).join('\n');
    for (const k of ['gainDb', 'phaseDeg', 'dcI', 'dcQ']) {
      const v = new RegExp(`${k}: (-?[0-9.e+-]+)`).exec(rest);
      expect(v, `${k} in ${rest}`).not.toBeNull();
      expect(Number.isFinite(Number(v![1]))).toBe(true);
    }
  });
});
