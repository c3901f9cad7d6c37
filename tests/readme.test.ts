// The README's TypeScript example is part of the documentation users copy: it must type-check under
// the project's strict settings and run. (STYLE.md habit 12: a small example that is type-checked.)
import { execFileSync } from 'node:child_process';
import { mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';

const root = resolve(__dirname, '..');
const dir = join(root, 'tests', 'artifacts', 'readme');
const blocks = [...readFileSync(join(root, 'README.md'), 'utf8').matchAll(/```ts\n([\s\S]*?)```/g)].map((m) =>
  m[1]!.replaceAll("from 'orthotone'", `from '${join(root, 'src', 'index.js')}'`),
);

describe('README examples', () => {
  mkdirSync(dir, { recursive: true });
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('has at least one TypeScript example', () => {
    expect(blocks.length).toBeGreaterThan(0);
  });

  it('type-checks every example with the project settings', () => {
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
        compilerOptions: { noEmit: true },
      }),
    );
    execFileSync(join(root, 'node_modules', '.bin', 'tsc'), ['-p', join(dir, 'tsconfig.json')], {
      encoding: 'utf8',
    });
  });

  it('runs every example without throwing', async () => {
    const log = console.log;
    const printed: unknown[][] = [];
    console.log = (...a: unknown[]) => printed.push(a);
    try {
      for (let k = 0; k < blocks.length; k++) await import(join(dir, `example-${k}.ts`));
    } finally {
      console.log = log;
    }
    expect(printed.length).toBeGreaterThan(0);
  });
});
