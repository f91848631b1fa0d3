/** A problem found in a preset: where (a JSON path such as `ions.species[0].mz`) and why. */
export interface PresetIssue {
  readonly path: string;
  readonly message: string;
}

export type PresetResult<T> = { readonly ok: true; readonly value: T } | { readonly ok: false; readonly issues: PresetIssue[] };

export function jsonPath(path: readonly PropertyKey[]): string {
  let out = '';
  for (const key of path) {
    if (typeof key === 'number') out += `[${key}]`;
    else out += out ? `.${String(key)}` : String(key);
  }
  return out || '(top level)';
}

/** One line per problem, as the CLI prints them. */
export function formatIssues(issues: readonly PresetIssue[]): string {
  return issues.map((i) => `${i.path}: ${i.message}`).join('\n');
}

export class PresetError extends Error {
  constructor(readonly issues: PresetIssue[]) {
    super(formatIssues(issues));
    this.name = 'PresetError';
  }
}
