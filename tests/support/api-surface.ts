/**
 * The package's public names, read from its entry files with the TypeScript compiler (so types and
 * interfaces count, not only runtime values), for tests/api-surface.test.ts and the @example test.
 */
import { resolve } from 'node:path';
import ts from 'typescript';

export const REPO = resolve(__dirname, '../..');

/** Package entries with public names, and the source file each is built from. */
export const ENTRIES: Record<string, string> = {
  orthotone: 'src/index.ts',
  'orthotone/node': 'src/node/index.ts',
};

/** One exported name of an entry. */
export interface ApiName {
  name: string;
  /** 'function' | 'class' | 'const' | 'type' | 'interface' | 'enum' | 'namespace'. */
  kind: string;
  /** Carries an `@internal` tag. */
  internal: boolean;
  /** The TSDoc's first sentence (or ''). */
  summary: string;
  /** Source file (repository-relative) of the declaration. */
  file: string;
  /** The code of each `@example` tag, as written. */
  examples: string[];
}

function kindOf(d: ts.Declaration): string {
  if (ts.isFunctionDeclaration(d)) return 'function';
  if (ts.isClassDeclaration(d)) return 'class';
  if (ts.isInterfaceDeclaration(d)) return 'interface';
  if (ts.isTypeAliasDeclaration(d)) return 'type';
  if (ts.isEnumDeclaration(d)) return 'enum';
  if (ts.isModuleDeclaration(d)) return 'namespace';
  if (ts.isVariableDeclaration(d)) return 'const';
  return ts.SyntaxKind[d.kind];
}

function commentText(c: string | ts.NodeArray<ts.JSDocComment> | undefined): string {
  if (c === undefined) return '';
  if (typeof c === 'string') return c;
  return c.map((p) => p.text ?? '').join('');
}

let cached: Record<string, ApiName[]> | undefined;

/** The public names of every entry in {@link ENTRIES}, sorted by name. */
export function entryExports(): Record<string, ApiName[]> {
  if (cached) return cached;
  const files = Object.values(ENTRIES).map((f) => resolve(REPO, f));
  const program = ts.createProgram(files, {
    target: ts.ScriptTarget.ES2022,
    module: ts.ModuleKind.NodeNext,
    moduleResolution: ts.ModuleResolutionKind.NodeNext,
    strict: true,
    skipLibCheck: true,
    noEmit: true,
    esModuleInterop: true,
    types: ['node'],
    lib: ['lib.es2022.d.ts', 'lib.dom.d.ts'],
  });
  const checker = program.getTypeChecker();
  const out: Record<string, ApiName[]> = {};
  for (const [entry, file] of Object.entries(ENTRIES)) {
    const sf = program.getSourceFile(resolve(REPO, file));
    if (!sf) throw new Error(`cannot read ${file}`);
    const mod = checker.getSymbolAtLocation(sf);
    const names: ApiName[] = [];
    for (const exp of mod ? checker.getExportsOfModule(mod) : []) {
      const sym = exp.flags & ts.SymbolFlags.Alias ? checker.getAliasedSymbol(exp) : exp;
      const decl = sym.declarations?.[0];
      if (!decl) continue;
      const tags = ts.getJSDocTags(decl);
      const doc = ts
        .displayPartsToString(sym.getDocumentationComment(checker))
        .replace(/\{@link\s+([^}|\s]+)[^}]*\}/g, '$1')
        .replace(/\s+/g, ' ')
        .trim();
      const summary = (doc.match(/^.*?\.(\s|$)/)?.[0] ?? doc).trim();
      names.push({
        name: exp.name,
        kind: kindOf(decl),
        internal: tags.some((t) => t.tagName.text === 'internal'),
        summary,
        file: decl.getSourceFile().fileName.slice(REPO.length + 1),
        examples: tags.filter((t) => t.tagName.text === 'example').map((t) => commentText(t.comment)),
      });
    }
    names.sort((a, b) => (a.name < b.name ? -1 : a.name > b.name ? 1 : 0));
    out[entry] = names;
  }
  cached = out;
  return out;
}

/** The names listed in docs/api.md per entry: bullets "- `name`" under "## `entry`". */
export function documentedNames(markdown: string): Record<string, string[]> {
  const out: Record<string, string[]> = {};
  let entry: string | undefined;
  for (const line of markdown.split('\n')) {
    const h = line.match(/^## `([^`]+)`/);
    if (h) {
      entry = h[1]!;
      out[entry] = [];
      continue;
    }
    if (line.startsWith('## ')) entry = undefined;
    const b = line.match(/^- `([A-Za-z_$][\w$]*)`/);
    if (b && entry) out[entry]!.push(b[1]!);
  }
  return out;
}
