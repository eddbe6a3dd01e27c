import { describe, expect, it } from 'vitest';
import { fnv1a32, parseShard, shardOf } from '../../src/batch/shard.js';

describe('shards', () => {
  it('FNV-1a matches its published test vectors', () => {
    // FNV-1a 32-bit test vectors (Fowler/Noll/Vo), from memory: REFERENCE-VALUES §15.
    expect(fnv1a32('')).toBe(0x811c9dc5);
    expect(fnv1a32('a')).toBe(0xe40c292c);
    expect(fnv1a32('foobar')).toBe(0xbf9cf968);
  });

  it('parses K/N and refuses K outside 1…N', () => {
    expect(parseShard('2/3')).toEqual({ index: 2, count: 3 });
    expect(() => parseShard('4/3')).toThrow("--shard '4/3' needs 1 ≤ K ≤ N");
    expect(() => parseShard('two')).toThrow("--shard 'two' must be K/N, e.g. 2/8");
  });

  it('puts every sample in exactly one share and spreads similar ids evenly', () => {
    const counts = [0, 0, 0];
    for (let i = 0; i < 3000; i++) counts[shardOf(`sample-${String(i).padStart(4, '0')}`, null, 3) - 1]++;
    for (const c of counts) expect(Math.abs(c - 1000)).toBeLessThan(150);
  });

  it('keeps the members of a group together', () => {
    const shares = new Set(['a', 'b', 'c', 'd'].map((s) => shardOf(s, 'g1', 5)));
    expect(shares.size).toBe(1);
  });
});
