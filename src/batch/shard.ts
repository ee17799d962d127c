/**
 * Splitting a batch over the N tasks of a cluster scheduler's array job: session → shard by a hash
 * of the session name alone (SHA-256, first 32 bits, modulo N), so a session's shard does not
 * depend on which other files are present, and every machine computes the same split.
 */
import { createHash } from 'node:crypto';
import { UsageError } from '../errors.js';

export interface Shard {
  /** 1-based. */
  index: number;
  count: number;
}

/** Parse "K/N" (1 ≤ K ≤ N). */
export function parseShard(text: string): Shard {
  const m = /^\s*(\d+)\s*\/\s*(\d+)\s*$/.exec(text);
  if (!m) throw new UsageError(`--shard expects K/N, e.g. 2/8 (got "${text}")`);
  const index = Number(m[1]), count = Number(m[2]);
  if (count < 1 || index < 1 || index > count) throw new UsageError(`--shard ${text}: K must be between 1 and N`);
  return { index, count };
}

/** The 1-based shard of a session name among `count` shards. */
export function shardOf(name: string, count: number): number {
  const h = createHash('sha256').update(name, 'utf8').digest();
  return (h.readUInt32BE(0) % count) + 1;
}

export function inShard(name: string, s: Shard | undefined): boolean {
  return !s || shardOf(name, s.count) === s.index;
}

/** The summary file a shard writes into the shared output folder. */
export function shardSummaryName(s: Shard): string {
  return `summary.shard-${s.index}-of-${s.count}.json`;
}

export const SHARD_SUMMARY_RE = /^summary\.shard-(\d+)-of-(\d+)\.json$/;
