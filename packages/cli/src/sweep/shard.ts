import { UsageError } from '../errors.ts';

export interface Shard {
  /** 1-based */
  index: number;
  count: number;
}

export const MAX_SHARDS = 10_000;

export function parseShard(text: string): Shard {
  const m = /^\s*(\d+)\s*\/\s*(\d+)\s*$/.exec(text);
  const count = m ? Number(m[2]) : NaN;
  const index = m ? Number(m[1]) : NaN;
  if (!m || count < 1 || count > MAX_SHARDS || index < 1 || index > count) {
    throw new UsageError(`--shard ${JSON.stringify(text)}: expected K/N with N from 1 to ${MAX_SHARDS} and K from 1 to N (e.g. 2/8)`);
  }
  return { index, count };
}

/**
 * Shard K of N takes runs K, K+N, K+2N, … (1-based ids). Dealing runs out in turn rather than
 * in blocks gives every shard a like mix of small and large windows, so the slices take
 * about the same time.
 */
export function inShard(id: number, shard: Shard | null): boolean {
  return shard === null || (id - 1) % shard.count === shard.index - 1;
}

/** File name stem of a sweep's table and index: `sweep`, or `sweep-shard-2-of-8` for a slice. */
export function sweepStem(shard: Shard | null): string {
  return shard === null ? 'sweep' : `sweep-shard-${shard.index}-of-${shard.count}`;
}

export const SHARD_FILE = /^sweep-shard-(\d+)-of-(\d+)\.json$/;
