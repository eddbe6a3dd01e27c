import { InputError } from '../errors.js';
import type { Histogram } from './types.js';

export interface CropWindow {
  /** Keep channels whose left edge is ≥ this, ns. Default: the first channel. */
  startNs?: number;
  /** Keep channels whose left edge is < this, ns. Default: past the last channel. */
  endNs?: number;
}

/**
 * A new histogram holding the channels whose left edge lies in [startNs, endNs). The input is not
 * changed. An empty window is an InputError, since nothing downstream can use it.
 */
export function cropHistogram(h: Histogram, window: CropWindow): Histogram {
  const start = window.startNs ?? -Infinity;
  const end = window.endNs ?? Infinity;
  if (Number.isNaN(start) || Number.isNaN(end) || !(end > start)) {
    throw new InputError(`the crop window [${start}, ${end}) ns is empty or not a number`, {
      file: h.source,
    });
  }
  let first = 0;
  while (first < h.timeNs.length && h.timeNs[first] < start) first++;
  let last = first;
  while (last < h.timeNs.length && h.timeNs[last] < end) last++;
  if (last === first) {
    throw new InputError(
      `the crop window [${start}, ${end}) ns holds no channel (the data span ${h.timeNs[0]} to ${h.timeNs[h.timeNs.length - 1] + h.binWidthNs} ns)`,
      {
        file: h.source,
      },
    );
  }
  return {
    timeNs: h.timeNs.slice(first, last),
    counts: h.counts.slice(first, last),
    binWidthNs: h.binWidthNs,
    metadata: { ...h.metadata },
    source: h.source,
    warnings: [...h.warnings],
    ...(h.report ? { report: { ...h.report, columns: [...h.report.columns] } } : {}),
  };
}
