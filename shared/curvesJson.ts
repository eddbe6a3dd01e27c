/**
 * A fit's plotting curves as JSON for results files, written compactly and quickly (see `JsonBytes`).
 * The curves are for looking at a fit, not for refitting it, so they are stored with the precision
 * that serves that and no more; the fitted parameters, their errors and the statistics beside them
 * keep full precision.
 *
 * - `timeNs`: to the fewest decimals (at most 15) that keep every channel edge within 10⁻⁶ of a channel
 *   width of its value; an axis read from a file of decimal times comes back exactly as written
 *   (`0.244`, not `0.24400000000000002`).
 * - `data`: exact (counts are whole numbers; any other value keeps all its digits).
 * - `model`, `irf`: 7 significant digits, a relative 5·10⁻⁸; Poisson noise on a channel of N counts
 *   is 1/√N, above 10⁻³ up to a million counts.
 * - `weightedResiduals`, `autocorrelation`: 6 decimals, 10⁻⁶ of a standard deviation and of the
 *   autocorrelation's scale (|C| ≤ 1).
 */
import { JsonBytes } from './jsonBytes.js';
import type { FitCurves } from './schema.js';

export const CURVE_SIGNIFICANT_DIGITS = 7;
export const CURVE_DECIMALS = 6;
/** Decimals tried for a time axis before it is written at full precision. */
const MAX_AXIS_DECIMALS = 15;

/**
 * The fewest decimals (0–15) at which every time of the axis rounds to within 10⁻⁶ of the smallest
 * channel width of its value, or -1 when none do (the axis is then written at full precision).
 */
export function axisDecimals(timeNs: ArrayLike<number>): number {
  const n = timeNs.length;
  let width = Infinity;
  for (let i = 1; i < n; i++) {
    const d = Math.abs(timeNs[i] - timeNs[i - 1]);
    if (d > 0 && d < width) width = d;
  }
  if (!Number.isFinite(width)) width = Math.max(Math.abs(timeNs[0] ?? 0), 1);
  const tolerance = width * 1e-6;
  for (let decimals = 0; decimals <= MAX_AXIS_DECIMALS; decimals++) {
    const scale = 10 ** decimals;
    let ok = true;
    for (let i = 0; i < n && ok; i++) {
      const t = timeNs[i];
      ok = Number.isFinite(t) && Math.abs(Math.round(t * scale) / scale - t) <= tolerance;
    }
    if (ok) return decimals;
  }
  return -1;
}

function writeAxis(w: JsonBytes, timeNs: ArrayLike<number>): void {
  const decimals = axisDecimals(timeNs);
  if (decimals < 0) w.exactArray(timeNs);
  else w.fixedArray(timeNs, decimals);
}

/**
 * The last time axis written and its text, for writing many fits in a row: the decays of a batch
 * mostly share one axis, whose 4096 times then need only comparing, not printing again.
 */
export class AxisCache {
  private values = new Float64Array(0);
  private text = new Uint8Array(0);

  write(w: JsonBytes, timeNs: ArrayLike<number>): void {
    const n = timeNs.length;
    let same = n === this.values.length;
    for (let i = 0; i < n && same; i++) same = timeNs[i] === this.values[i];
    if (same) {
      w.bytes(this.text);
      return;
    }
    const start = w.length;
    writeAxis(w, timeNs);
    this.text = w.view().slice(start);
    this.values = Float64Array.from(timeNs);
  }
}

/** Writes `curves` as the JSON object of `FitCurves`, rounded as described above. */
export function writeFitCurves(w: JsonBytes, curves: FitCurves, axis?: AxisCache): JsonBytes {
  w.ascii('{"timeNs":');
  if (axis) axis.write(w, curves.timeNs);
  else writeAxis(w, curves.timeNs);
  w.ascii(',"data":').exactArray(curves.data);
  w.ascii(',"model":').significantArray(curves.model, CURVE_SIGNIFICANT_DIGITS);
  w.ascii(',"irf":').significantArray(curves.irf, CURVE_SIGNIFICANT_DIGITS);
  w.ascii(',"weightedResiduals":').fixedArray(curves.weightedResiduals, CURVE_DECIMALS);
  w.ascii(',"autocorrelation":').fixedArray(curves.autocorrelation, CURVE_DECIMALS);
  w.ascii(',"fitStartIndex":').exact(curves.fitStartIndex);
  w.ascii(',"fitEndIndex":').exact(curves.fitEndIndex);
  return w.byte(125);
}
