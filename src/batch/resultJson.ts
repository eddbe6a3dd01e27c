import { writeFitCurves, type AxisCache } from '../../shared/curvesJson.js';
import { JsonBytes } from '../../shared/jsonBytes.js';
import type { SampleResult } from '../../shared/schema.js';

/**
 * Writes a sample result as JSON in UTF-8: everything but the fit's curves by `JSON.stringify` (full
 * precision), the curves by `writeFitCurves` (compact, rounded for plotting). The fit comes last in
 * the sample and the curves last in the fit, so a reader of the file sees the numbers that matter
 * before the thousands of channels. `axis` keeps the last time axis's text for the next result.
 */
export function writeSampleResult(w: JsonBytes, result: SampleResult, axis?: AxisCache): JsonBytes {
  const { fit, ...rest } = result;
  if (!fit) return w.text(JSON.stringify(result));
  const { curves, ...fitRest } = fit;
  const restText = JSON.stringify(rest);
  w.text(restText.slice(0, -1)).ascii(restText.length > 2 ? ',"fit":' : '"fit":');
  if (!curves) return w.text(JSON.stringify(fit)).byte(125);
  const fitText = JSON.stringify(fitRest);
  w.text(fitText.slice(0, -1)).ascii(fitText.length > 2 ? ',"curves":' : '"curves":');
  return writeFitCurves(w, curves, axis).ascii('}}');
}

/** A sample result as JSON text (see `writeSampleResult`). */
export function sampleResultJson(result: SampleResult): string {
  return new TextDecoder().decode(writeSampleResult(new JsonBytes(), result).take());
}
