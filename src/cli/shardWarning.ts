/** A shard can hold no points (more shards than points); that is allowed, since merge accepts it, but never silent. */
export function emptyShardWarning(shard: { readonly index: number; readonly count: number } | undefined, total: number, held: number): string | null {
  if (!shard || held > 0) return null;
  return `warning: --shard ${shard.index + 1}/${shard.count}: this share holds none of the scan's ${total} point${total === 1 ? '' : 's'} (at most ${total} shard${total === 1 ? '' : 's'} hold points); its output lists no points`;
}
