/**
 * The last few results of a costly pure computation, newest first, keyed by its whole input with
 * numbers written exactly; off (keep nothing) until `keep` is called. Used where a worker computes
 * the same thing for several steps of one change (sampled populations, compiled presets); the
 * callers hand out what they keep only because nobody mutates it.
 */
export class KeptResults<T> {
  private kept: { key: string; value: T }[] = [];
  private count = 0;

  /** Keep the last `entries` results (0 turns it off and forgets them). */
  keep(entries: number): void {
    this.count = Math.max(0, Math.floor(entries));
    this.kept = this.kept.slice(0, this.count);
  }

  /** `make(input)`, or the kept result for an equal input (a `make` that throws keeps nothing). */
  get<I>(input: I, make: (input: I) => T): T {
    if (this.count === 0) return make(input);
    const key = exactKey(input);
    const at = this.kept.findIndex((e) => e.key === key);
    const entry = at >= 0 ? this.kept.splice(at, 1)[0] : { key, value: make(input) };
    this.kept.unshift(entry);
    this.kept.length = Math.min(this.kept.length, this.count);
    return entry.value;
  }
}

/** JSON with every number written exactly: String(x) is exact for every double and tells Infinity, -Infinity and NaN apart, which JSON does not. */
function exactKey(input: unknown): string {
  return JSON.stringify(input, (_key, value: unknown) => (typeof value === 'number' ? `n${String(value)}` : value));
}
