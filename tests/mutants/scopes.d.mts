/** Types of tests/mutants/scopes.mjs. */
export declare const SCOPES: Record<
  string,
  { mutate: string[]; tests: string[]; pool?: 'forks' | 'threads' }
>;
