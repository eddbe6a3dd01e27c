import { describe, expect, it } from 'vitest';
import { roomFor, SpareBuffers } from '../../cli/batch/spareBuffers.js';

describe('SpareBuffers', () => {
  it('hands out the smallest kept buffer that fits, once', () => {
    const spare = new SpareBuffers<ArrayBuffer>();
    const [small, middle, large] = [100, 200, 400].map((n) => new ArrayBuffer(n));
    spare.give(large, small, middle);
    expect(spare.take(150)).toBe(middle);
    expect(spare.take(150)).toBe(large);
    expect(spare.take(150)).toBeUndefined();
    expect(spare.take(100)).toBe(small);
  });

  it('keeps only the largest when given more than its bound', () => {
    const spare = new SpareBuffers<ArrayBuffer>(2);
    spare.give(...[300, 100, 200].map((n) => new ArrayBuffer(n)));
    expect(spare.take(1)?.byteLength).toBe(200);
    expect(spare.take(1)?.byteLength).toBe(300);
    expect(spare.take(1)).toBeUndefined();
  });

  it('leaves an eighth to spare in a new buffer', () => {
    expect(roomFor(800)).toBe(900);
  });
});
