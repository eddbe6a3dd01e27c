import { InputError } from '../errors.js';

export interface Shard {
  /** 1-based index of this share. */
  index: number;
  count: number;
}

/** Reads `K/N` (1 ≤ K ≤ N). */
export function parseShard(text: string): Shard {
  const m = /^\s*(\d+)\s*\/\s*(\d+)\s*$/.exec(text);
  if (!m) throw new InputError(`--shard '${text}' must be K/N, e.g. 2/8`);
  const index = Number(m[1]);
  const count = Number(m[2]);
  if (count < 1 || index < 1 || index > count) throw new InputError(`--shard '${text}' needs 1 ≤ K ≤ N`);
  return { index, count };
}

/**
 * 32-bit FNV-1a of a string's UTF-16 code units. Chosen because it is tiny, fixed forever and spreads
 * similar ids (sample-001, sample-002 …) evenly.
 */
export function fnv1a32(text: string): number {
  let h = 0x811c9dc5;
  for (let i = 0; i < text.length; i++) {
    h ^= text.charCodeAt(i);
    h = Math.imul(h, 0x01000193) >>> 0;
  }
  return h >>> 0;
}

/**
 * Which share a sample belongs to: by a hash of its id, not its row, so that adding or reordering rows
 * never moves other samples between shares. Samples of one `group` stay together (they are fitted
 * together), so a grouped sample is placed by its group name.
 */
export function shardOf(sample: string, group: string | null, count: number): number {
  const key = group ? `group:${group}` : sample;
  return (fnv1a32(key) % count) + 1;
}
