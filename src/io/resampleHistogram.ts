import { InputError } from '../errors.js';
import type { Histogram } from './types.js';
import { formatNumber } from './validate.js';

/**
 * Rebins a histogram onto channels of `binWidthNs`, starting at the same left edge, conserving counts:
 * each old channel's counts are shared among the new channels it overlaps in proportion to the
 * overlap (counts assumed uniform within a channel). New channels that would reach past the old
 * span are not made; the counts they would hold are dropped and reported. Rebinning by a
 * non-integer factor makes non-integer counts that are no longer Poisson-distributed: a warning
 * says so.
 */
export function resampleHistogram(h: Histogram, binWidthNs: number): Histogram {
  if (!(Number.isFinite(binWidthNs) && binWidthNs > 0)) {
    throw new InputError(`cannot resample to a bin width of ${binWidthNs} ns`, { file: h.source });
  }
  const oldW = h.binWidthNs;
  const n = h.counts.length;
  const t0 = h.timeNs[0];
  const span = n * oldW;
  // Rounding guard: a span of exactly k new channels must give k, not k − 1.
  const m = Math.floor(span / binWidthNs + 1e-9);
  if (m < 1) {
    throw new InputError(
      `cannot resample to ${formatNumber(binWidthNs)} ns channels: the whole histogram spans only ${formatNumber(span)} ns`,
      { file: h.source },
    );
  }
  const counts = new Float64Array(m);
  // Work in units of old channels, so that whole-number ratios add whole counts exactly.
  const rawRatio = binWidthNs / oldW;
  const r = Math.abs(rawRatio - Math.round(rawRatio)) < 1e-9 ? Math.round(rawRatio) : rawRatio;
  let kept = 0;
  for (let i = 0; i < n; i++) {
    const c = h.counts[i];
    if (c === 0) continue;
    for (let k = Math.floor(i / r); k < m && k * r < i + 1; k++) {
      const overlap = Math.min(i + 1, (k + 1) * r) - Math.max(i, k * r);
      if (overlap <= 0) continue;
      const share = c * overlap;
      counts[k] += share;
      kept += share;
    }
  }
  let total = 0;
  for (let i = 0; i < n; i++) total += h.counts[i];
  const timeNs = new Float64Array(m);
  for (let j = 0; j < m; j++) timeNs[j] = t0 + j * binWidthNs;
  const warnings = [...h.warnings];
  const integral = Math.abs(r - Math.round(r)) < 1e-9 && Math.round(r) >= 1;
  if (!integral) {
    warnings.push(
      `resampled from ${formatNumber(oldW)} to ${formatNumber(binWidthNs)} ns channels (factor ${formatNumber(r)}, not a whole number): counts were shared between channels and are no longer raw Poisson counts`,
    );
  }
  const dropped = total - kept;
  if (dropped > 1e-9 * Math.max(total, 1)) {
    warnings.push(
      `resampling dropped ${formatNumber(dropped)} counts at the end that fill no whole ${formatNumber(binWidthNs)} ns channel`,
    );
  }
  return {
    timeNs,
    counts,
    binWidthNs,
    metadata: { ...h.metadata },
    source: h.source,
    warnings,
    ...(h.report
      ? {
          report: {
            ...h.report,
            columns: [...h.report.columns],
            binWidthSource: `resampled from ${formatNumber(oldW)} ns (${h.report.binWidthSource})`,
          },
        }
      : {}),
  };
}
