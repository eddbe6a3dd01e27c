/**
 * How a series result is put on paper. Temperature series are shown the way the trade reads them:
 * ln k against 1/T, where an activated process is a straight line (Arrhenius plot); the law
 * k(T) = k₀ + A·exp(−Eₐ/k_B T) is drawn as a smooth curve from the fitted parameters. Other series
 * are shown as they come, with the fitted values joined across the points.
 */
import type { SeriesResult } from '../shared/schema.js';
import { displayName } from './names.js';

/** Boltzmann constant in eV/K: CODATA 2018, exact since the 2019 SI (k = 1.380649e-23 J/K, e = 1.602176634e-19 C). */
const K_B_EV_PER_K = 1.380649e-23 / 1.602176634e-19;

export interface SeriesDisplay {
  xLabel: string;
  yLabel: string;
  /** Points sorted by x, with the lower and upper ends of their error bars. */
  points: { sample: string; x: number; y: number; yLow: number; yHigh: number }[];
  /** The fitted law, ascending in x; empty when no law was fitted. */
  curve: { x: number[]; y: number[] };
}

function arrheniusDisplay(s: SeriesResult): SeriesDisplay | null {
  // Only when x is an absolute temperature and y a positive rate.
  if (!/PerS$/.test(s.yName) || s.points.length === 0) return null;
  if (!s.points.every((p) => p.x > 1 && p.y > 0)) return null;
  const points = s.points
    .map((p) => ({
      sample: p.sample,
      x: 1 / p.x,
      y: Math.log(p.y),
      // ln is not symmetric: the bar runs from ln(y − σ) to ln(y + σ); a lower end at or below zero
      // is drawn to the bottom of the plot.
      yLow: p.y - p.yErr > 0 ? Math.log(p.y - p.yErr) : -Infinity,
      yHigh: Math.log(p.y + p.yErr),
    }))
    .sort((a, b) => a.x - b.x);
  const { eaEv, k0PerS, aPerS } = s.parameters;
  let curve: { x: number[]; y: number[] } = { x: [], y: [] };
  if ([eaEv, k0PerS, aPerS].every((v) => v !== undefined && Number.isFinite(v))) {
    const tMin = Math.min(...s.points.map((p) => p.x));
    const tMax = Math.max(...s.points.map((p) => p.x));
    const n = 120;
    for (let i = 0; i <= n; i++) {
      const invT = 1 / tMax + ((1 / tMin - 1 / tMax) * i) / n;
      const k = k0PerS + aPerS * Math.exp((-eaEv / K_B_EV_PER_K) * invT);
      if (k > 0) {
        curve.x.push(invT);
        curve.y.push(Math.log(k));
      }
    }
  } else {
    const withFit = s.points.filter((p) => p.fit !== null && p.fit > 0).sort((a, b) => b.x - a.x);
    curve = { x: withFit.map((p) => 1 / p.x), y: withFit.map((p) => Math.log(p.fit as number)) };
  }
  const yName = displayName(s.yName).replace(/ \(s⁻¹\)$/, '');
  return { xLabel: '1/T (K⁻¹)', yLabel: `ln(${yName} / s⁻¹)`, points, curve };
}

export function seriesDisplay(s: SeriesResult): SeriesDisplay {
  if (s.model === 'arrhenius') {
    const a = arrheniusDisplay(s);
    if (a) return a;
  }
  const sorted = s.points.slice().sort((a, b) => a.x - b.x);
  const withFit = sorted.filter((p) => p.fit !== null);
  return {
    xLabel: displayName(s.xName),
    yLabel: displayName(s.yName),
    points: sorted.map((p) => ({
      sample: p.sample,
      x: p.x,
      y: p.y,
      yLow: p.y - p.yErr,
      yHigh: p.y + p.yErr,
    })),
    curve: { x: withFit.map((p) => p.x), y: withFit.map((p) => p.fit as number) },
  };
}
