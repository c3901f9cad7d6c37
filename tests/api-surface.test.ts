// The package's public edge (STYLE.md habit 15, as scipy's `__all__`): the names each entry exports
// are a deliberate list, written in docs/api.md. Changing the list without the document fails here,
// and so does exporting a name marked `@internal` (internals stay importable from src/ paths, which
// the tests use, but are not part of the package).
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { documentedNames, ENTRIES, entryExports, REPO } from './support/api-surface.js';

/** Internals the architecture review named, and helpers shared between modules: never public. */
const KNOWN_INTERNALS = [
  'requireFinite',
  'requireRange',
  'withDefaults',
  'stripUndefined',
  'resultOf',
  'seekerFor',
  'sanitiseInput',
  'maximizeOnGrid',
  'bandGrid',
  'firResponseInto',
  'goldenSectionMax',
  'designHilbertFirJudged',
];

describe('public API edge', () => {
  const api = entryExports();
  const doc = documentedNames(readFileSync(join(REPO, 'docs', 'api.md'), 'utf8'));

  for (const entry of Object.keys(ENTRIES)) {
    it(`${entry}: the exported names are exactly those docs/api.md lists`, () => {
      const exported = api[entry]!.map((n) => n.name);
      // orthotone/node re-exports orthotone; docs/api.md lists only the names it adds.
      const listed = [...(entry === 'orthotone/node' ? (doc.orthotone ?? []) : []), ...(doc[entry] ?? [])];
      const added = exported.filter((n) => !listed.includes(n));
      const removed = listed.filter((n) => !exported.includes(n));
      expect(
        { exportedButNotInDocsApiMd: added, inDocsApiMdButNotExported: removed },
        `update docs/api.md (## \`${entry}\`) together with the export list`,
      ).toEqual({ exportedButNotInDocsApiMd: [], inDocsApiMdButNotExported: [] });
      expect(new Set(listed).size, 'a name listed twice in docs/api.md').toBe(listed.length);
    });
  }

  it('exports no name marked @internal, and none of the known internals', () => {
    const leaks: string[] = [];
    for (const [entry, names] of Object.entries(api)) {
      for (const n of names) {
        if (n.internal) leaks.push(`${entry}: ${n.name} (${n.file}) is marked @internal`);
        if (KNOWN_INTERNALS.includes(n.name)) leaks.push(`${entry}: ${n.name} is an internal helper`);
      }
    }
    expect(leaks).toEqual([]);
  });

  it('every public name has a TSDoc summary', () => {
    const bare = Object.values(api)
      .flat()
      .filter((n) => n.summary === '')
      .map((n) => `${n.name} (${n.file})`);
    expect([...new Set(bare)]).toEqual([]);
  });
});
