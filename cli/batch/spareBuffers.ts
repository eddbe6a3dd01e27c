/**
 * Buffers kept for reuse once their bytes are used: the smallest that fits is taken, so that a long
 * text does not claim a buffer a shorter one would do with. At most `max` are kept (the largest).
 * A fresh buffer for every sample's text cost more than writing the text: its pages are faulted in,
 * and handed back to the system when it is collected.
 */
export class SpareBuffers<B extends { readonly byteLength: number }> {
  private readonly list: B[] = [];

  constructor(private readonly max = 8) {}

  /** The smallest kept buffer of at least `bytes`, no longer kept; undefined when none is that large. */
  take(bytes: number): B | undefined {
    const list = this.list;
    let best = -1;
    for (let k = 0; k < list.length; k++)
      if (list[k].byteLength >= bytes && (best < 0 || list[k].byteLength < list[best].byteLength)) best = k;
    return best >= 0 ? list.splice(best, 1)[0] : undefined;
  }

  /** Keeps buffers for later `take`s. */
  give(...buffers: B[]): void {
    this.list.push(...buffers);
    if (this.list.length > this.max) this.list.sort((a, b) => b.byteLength - a.byteLength).length = this.max;
  }
}

/** Room for `bytes` with some to spare: the next sample's text is a little longer or shorter. */
export function roomFor(bytes: number): number {
  return bytes + (bytes >> 3);
}
