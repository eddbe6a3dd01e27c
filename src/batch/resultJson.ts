import { writeFitCurves, type AxisCache } from '../../shared/curvesJson.js';
import { JsonBytes } from '../../shared/jsonBytes.js';
import type { SampleResult } from '../../shared/schema.js';

/** The JSON texts a result is written from: the result without its fit, and its fit without curves. */
export interface ResultTexts {
  rest: string;
  fit: string | null;
}

export function resultTexts(result: SampleResult): ResultTexts {
  const { fit, ...rest } = result;
  if (!fit) return { rest: JSON.stringify(result), fit: null };
  const { curves: _curves, ...fitRest } = fit;
  return { rest: JSON.stringify(rest), fit: JSON.stringify(fitRest) };
}

/** `rest` with `"fit":` and `fitText` (an object's text) added as its last member. */
function withFit(restText: string, fitText: string): string {
  return `${restText.slice(0, -1)}${restText.length > 2 ? ',' : ''}"fit":${fitText}}`;
}

/**
 * A result without its curves as JSON text, with the fit last as in results.json: what
 * `JSON.stringify` makes of the result without curves with its fit moved last.
 */
export function briefJson(texts: ResultTexts): string {
  return texts.fit === null ? texts.rest : withFit(texts.rest, texts.fit);
}

/**
 * Writes a sample result as JSON in UTF-8: everything but the fit's curves by `JSON.stringify` (full
 * precision), the curves by `writeFitCurves` (compact, rounded for plotting). The fit comes last in
 * the sample and the curves last in the fit, so a reader of the file sees the numbers that matter
 * before the thousands of channels. `axis` keeps the last time axis's text for the next result;
 * `texts`, when the caller has them, are the result's `resultTexts`.
 */
export function writeSampleResult(
  w: JsonBytes,
  result: SampleResult,
  axis?: AxisCache,
  texts: ResultTexts = resultTexts(result),
): JsonBytes {
  const curves = result.fit?.curves;
  if (texts.fit === null) return w.text(texts.rest);
  if (!curves) return w.text(withFit(texts.rest, texts.fit));
  const { rest, fit } = texts;
  w.text(rest.slice(0, -1)).ascii(rest.length > 2 ? ',"fit":' : '"fit":');
  w.text(fit.slice(0, -1)).ascii(fit.length > 2 ? ',"curves":' : '"curves":');
  return writeFitCurves(w, curves, axis).ascii('}}');
}

/** A sample result as JSON text (see `writeSampleResult`). */
export function sampleResultJson(result: SampleResult): string {
  return new TextDecoder().decode(writeSampleResult(new JsonBytes(), result).take());
}
