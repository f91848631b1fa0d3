/** Output-format flags of every command: one format per run, so a second, different one is refused rather than silently winning. */
export type OutputFormat = 'table' | 'json' | 'csv';

/** The message for `flag` (--json or --csv) when another format was already chosen; null when it is fine. */
export function outputFormatClash(current: OutputFormat, flag: string): string | null {
  const wanted = flag === '--json' ? 'json' : 'csv';
  if (current === 'table' || current === wanted) return null;
  return `conflicts with --${current}: give one output format (--json or --csv)`;
}

/** An output file name: refused when empty or blank, which would write nothing and say nothing. */
export function checkOutputFileName(name: string): string | null {
  return name.trim() === '' ? 'needs a file name (got an empty one)' : null;
}
