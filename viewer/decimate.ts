/**
 * Display-only thinning of long curves: per bucket of channels keep the lowest and the highest point of
 * the reference series (plus the very first and last channel), and every series at those same
 * channels. With about one bucket per screen pixel, peaks, dips and edges look as they would in full;
 * the fit never sees this.
 */

/** Curves at or below this length are drawn as they are. */
export const DECIMATE_ABOVE = 2000;

/**
 * Channel indices to draw. `reference` decides which channels are extremes (nulls are skipped);
 * returns every index when the curve is short.
 */
export function decimationIndices(
  reference: ArrayLike<number | null>,
  buckets = 800,
  above = DECIMATE_ABOVE,
): number[] {
  const n = reference.length;
  if (n <= above) return Array.from({ length: n }, (_, i) => i);
  const keep: number[] = [];
  const size = n / buckets;
  for (let b = 0; b < buckets; b++) {
    const lo = Math.floor(b * size);
    const hi = Math.min(n, Math.floor((b + 1) * size));
    if (hi <= lo) continue;
    let iMin = -1;
    let iMax = -1;
    for (let i = lo; i < hi; i++) {
      const v = reference[i];
      if (v === null || !Number.isFinite(v)) continue;
      if (iMin < 0 || v < (reference[iMin] as number)) iMin = i;
      if (iMax < 0 || v > (reference[iMax] as number)) iMax = i;
    }
    if (iMin < 0) continue;
    if (iMin !== iMax) keep.push(Math.min(iMin, iMax), Math.max(iMin, iMax));
    else keep.push(iMin);
  }
  if (keep[0] !== 0) keep.unshift(0);
  if (keep[keep.length - 1] !== n - 1) keep.push(n - 1);
  return keep;
}

/** The values of one series at the kept indices. */
export function pick<T>(values: ArrayLike<T>, indices: number[]): T[] {
  return indices.map((i) => values[i]);
}
