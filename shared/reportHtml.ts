/**
 * The offline report as one HTML string: page script, styles, uPlot and the data, all inline, so the
 * file opens from disk with no network. Pure: the caller reads the assets and writes the file.
 *
 * Safety: every piece of data goes into `<script type="application/json">` blocks with `<`, U+2028
 * and U+2029 written as JSON escapes, so no string in the data (a sample named `</script>…`) can end
 * its block; the page reads the blocks with `JSON.parse(textContent)` and shows names with
 * `textContent` only. A Content-Security-Policy allows inline code and nothing from the network.
 *
 * Size: the summary (everything except the plot curves) is one block parsed at load; each sample's
 * curves sit in their own block, parsed when the sample is first shown, so a report of hundreds of
 * samples opens quickly; the first sample's curves come before the page script so that it can draw
 * at once, the others after it, parsed while the reader looks at the first. Curves in the report are a
 * display copy: data, model, IRF and residuals as 32-bit floats (7 significant digits; whole counts
 * exact below 2²⁴), in base64, with model and IRF values under 0.001 counts made 0 and the IRF
 * stored only between its first and last channel above that; the autocorrelation to 0.001 and to
 * half the fit range. The batch's results.json keeps the precision described in `curvesJson.ts`.
 */
import { JsonBytes } from './jsonBytes.js';
import type { FitCurves, ReportData, SampleResult } from './schema.js';

export interface ReportAssets {
  /** The page bundle (an IIFE). */
  appJs: string;
  appCss: string;
  /** uPlot's IIFE build, which defines the global `uPlot`. */
  uplotJs: string;
  uplotCss: string;
}

/** Element ids shared by the writer and the page. */
export const REPORT_DATA_ID = 'lumirate-report-data';
export const CURVES_ID_PREFIX = 'lumirate-curves-';

export const REPORT_CSP =
  "default-src 'none'; script-src 'unsafe-inline'; style-src 'unsafe-inline'; img-src data: blob:; base-uri 'none'; form-action 'none'";

/** A time axis stored as start and step when it is uniform, else as the full list. */
export type PackedAxis = { startNs: number; stepNs: number; length: number } | number[];

/**
 * FitCurves as embedded in the report: a uniform time axis stored as start + step, the long curves
 * as `FloatCurve` text, the autocorrelation rounded.
 */
export interface PackedCurves {
  timeNs: PackedAxis;
  data: FloatCurve;
  model: FloatCurve;
  /**
   * The IRF's channels `irfFrom` … `irfFrom` + (stored count − 1); the others of its `irfLength` are
   * 0. A measured IRF is 0 (or below the display floor) over most of the axis, and three quarters of
   * a block's bytes were those zeros.
   */
  irf: FloatCurve;
  irfFrom: number;
  irfLength: number;
  weightedResiduals: FloatCurve;
  autocorrelation: number[];
  fitStartIndex: number;
  fitEndIndex: number;
}

/**
 * A curve as base64 of its values as little-endian IEEE 754 32-bit floats, NaN where FitCurves has
 * null (a channel outside the fit range). Printing the ~16 000 numbers of a sample's curves as
 * decimal text took three to five times as long as this (~0.3 against ~0.09 ms per 4096-channel
 * decay); the page decodes it faster than it parses numbers, and a float's 7 significant digits
 * are more than a plot can show.
 */
export type FloatCurve = string;

/**
 * Model and IRF values below this many counts are stored as 0: a Gaussian IRF's tail of 1e-300 would
 * otherwise stretch a logarithmic axis over hundreds of decades (the page leaves 0 off it).
 */
const DISPLAY_FLOOR_COUNTS = 1e-3;

const LITTLE_ENDIAN = new Uint8Array(Uint16Array.of(1).buffer)[0] === 1;

/** Kept from curve to curve: a report's curves are all encoded through it. */
let floatScratch = new Float32Array(4096);

/**
 * Values from `from` to `to` (exclusive) of a curve as little-endian 32-bit floats (valid until the
 * next call): NaN for null and non-finite values, 0 for values smaller in magnitude than `zeroBelow`.
 */
function curveFloatBytes(
  values: ArrayLike<number | null>,
  zeroBelow: number,
  from = 0,
  to = values.length,
): Uint8Array {
  const n = to - from;
  if (floatScratch.length < n) floatScratch = new Float32Array(n);
  const f = floatScratch;
  for (let i = 0; i < n; i++) {
    const v = values[from + i];
    f[i] = v === null || !Number.isFinite(v) ? NaN : Math.abs(v) < zeroBelow ? 0 : v;
  }
  const bytes = new Uint8Array(f.buffer, 0, 4 * n);
  if (!LITTLE_ENDIAN) {
    for (let i = 0; i < bytes.length; i += 4) {
      const a = bytes[i];
      const b = bytes[i + 1];
      bytes[i] = bytes[i + 3];
      bytes[i + 1] = bytes[i + 2];
      bytes[i + 2] = b;
      bytes[i + 3] = a;
    }
  }
  return bytes;
}

/**
 * The channels of an IRF that `curveFloatBytes` would not store as 0, as [first, one past the last]
 * ([0, 0] when there are none).
 */
function irfSpan(irf: ArrayLike<number>): [number, number] {
  const stored = (v: number) => !(Number.isFinite(v) && (v === 0 || Math.abs(v) < DISPLAY_FLOOR_COUNTS));
  let from = 0;
  while (from < irf.length && !stored(irf[from])) from++;
  if (from === irf.length) return [0, 0];
  let to = irf.length;
  while (!stored(irf[to - 1])) to--;
  return [from, to];
}

/** The values of a `FloatCurve`, null where it holds NaN. */
export function readFloatCurve(text: FloatCurve): (number | null)[] {
  const bin = atob(text);
  const bytes = new Uint8Array(bin.length);
  for (let i = 0; i < bin.length; i++) bytes[i] = bin.charCodeAt(i);
  const view = new DataView(bytes.buffer);
  const out = new Array<number | null>(bin.length >> 2);
  for (let i = 0; i < out.length; i++) {
    const v = view.getFloat32(4 * i, true);
    out[i] = Number.isNaN(v) ? null : v;
  }
  return out;
}

/** `length` values, `values` from index `from` on and 0 elsewhere. */
function spread(values: number[], from: number, length: number): number[] {
  const out = new Array<number>(length).fill(0);
  for (let i = 0; i < values.length; i++) out[from + i] = values[i];
  return out;
}

function packAxis(timeNs: number[]): PackedAxis {
  const n = timeNs.length;
  if (n < 2) return timeNs.slice();
  const step = (timeNs[n - 1] - timeNs[0]) / (n - 1);
  // Uniform when every channel lies within 1e-6 of a step of the straight line.
  const tol = Math.abs(step) * 1e-6;
  for (let i = 0; i < n; i++) if (Math.abs(timeNs[i] - (timeNs[0] + i * step)) > tol) return timeNs.slice();
  return { startNs: timeNs[0], stepNs: step, length: n };
}

/** The page shows the autocorrelation to half the fit range, beyond which few pairs enter a lag. */
function autocorrelationShown(c: FitCurves): number {
  return Math.min(c.autocorrelation.length, Math.ceil(c.autocorrelation.length / 2) + 1);
}

/**
 * The block's content as an object, read from `curvesForScript`: one writer makes the format, for
 * the page and for any other reader.
 */
export function packCurves(c: FitCurves): PackedCurves {
  return JSON.parse(curvesForScript(c)) as PackedCurves;
}

export function unpackCurves(p: PackedCurves): FitCurves {
  const t = p.timeNs;
  const timeNs = Array.isArray(t) ? t : Array.from({ length: t.length }, (_, i) => t.startNs + i * t.stepNs);
  return {
    timeNs,
    data: readFloatCurve(p.data) as number[],
    model: readFloatCurve(p.model),
    irf: spread(readFloatCurve(p.irf) as number[], p.irfFrom, p.irfLength),
    weightedResiduals: readFloatCurve(p.weightedResiduals),
    autocorrelation: p.autocorrelation,
    fitStartIndex: p.fitStartIndex,
    fitEndIndex: p.fitEndIndex,
  };
}

/** JSON that is safe inside a `<script>` element: no `<` at all, and no raw line or paragraph separator. */
export function jsonForScript(value: unknown): string {
  return scriptSafeJson(JSON.stringify(value));
}

/** JSON text made safe inside a `<script>` element, as `jsonForScript` does (it reads back the same). */
export function scriptSafeJson(json: string): string {
  return json
    .replace(/</g, '\\u003c')
    .replace(/\u2028/g, '\\u2028')
    .replace(/\u2029/g, '\\u2029');
}

/** Text safe in HTML content and attribute values. */
export function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (ch) => `&#${ch.charCodeAt(0)};`);
}

/**
 * Code safe inside a `<script>` element. `</script` can only occur inside a string, template, regex or
 * comment, where `<\/script` means the same; `<!--` becomes `<\x21--` (the same text in a string or
 * regex) so the parser never enters its escaped-script state.
 */
function inlineScript(js: string): string {
  return js.replace(/<\/(script)/gi, '<\\/$1').replace(/<!--/g, '<\\x21--');
}

function inlineStyle(css: string, what: string): string {
  if (/<\/style/i.test(css)) throw new Error(`${what} contains "</style" and cannot be inlined`);
  return css;
}

/** A sample as the page's summary holds it: without its curves. */
function withoutCurves(s: SampleResult): SampleResult {
  if (!s.fit) return s;
  // The curves travel in their own block; the page puts them back when it shows the sample.
  const { curves: _curves, ...fit } = s.fit;
  return { ...s, fit: fit as SampleResult['fit'] };
}

/** Each sample's script-safe summary JSON, kept with the result (see `prepareReportSample`). */
const summaryTexts = new WeakMap<SampleResult, string>();

function summaryTextOf(s: SampleResult): string {
  let text = summaryTexts.get(s);
  if (text === undefined) {
    text = jsonForScript(withoutCurves(s));
    summaryTexts.set(s, text);
  }
  return text;
}

/**
 * Makes a sample's part of the report summary ahead of the report (the same text either way): a
 * batch does it as each result arrives, rather than for all samples once the last one is in. Returns
 * that text.
 */
export function prepareReportSample(s: SampleResult): string {
  return summaryTextOf(s);
}

/**
 * A sample result without curves, read from `scriptSafeJson` of its `JSON.stringify` text, with that
 * text kept as its part of the report summary: the text `prepareReportSample` would make of the
 * object, which need not be made again.
 */
export function reportSampleFromJson(text: string): SampleResult {
  const s = JSON.parse(text) as SampleResult;
  summaryTexts.set(s, text);
  return s;
}

/**
 * The summary the page parses at load, as script-safe JSON in pieces (each sample's text on its
 * own, so that a page of thousands of samples is never one string of megabytes): the report data
 * with every sample without its curves; together, the same text as `jsonForScript` of that object.
 */
function* summaryJsonPieces(data: ReportData): Generator<string> {
  let first = true;
  for (const [key, value] of Object.entries(data)) {
    if (value === undefined) continue;
    yield `${first ? '{' : ','}${jsonForScript(key)}:`;
    first = false;
    if (key !== 'samples') {
      yield jsonForScript(value);
      continue;
    }
    yield '[';
    for (let k = 0; k < data.samples.length; k++)
      yield k ? `,${summaryTextOf(data.samples[k])}` : summaryTextOf(data.samples[k]);
    yield ']';
  }
  yield first ? '{}' : '}';
}

/**
 * Writes a sample's curves block for the page: `PackedCurves` as JSON, written straight from the
 * curves. Numbers, `null` and base64 are all it holds, so it is script-safe as it stands.
 */
export function writePackedCurves(w: JsonBytes, c: FitCurves): JsonBytes {
  w.ascii('{"timeNs":');
  const axis = packAxis(c.timeNs);
  if (Array.isArray(axis)) w.exactArray(axis);
  else w.ascii(JSON.stringify(axis));
  w.ascii(',"data":').base64String(curveFloatBytes(c.data, 0));
  w.ascii(',"model":').base64String(curveFloatBytes(c.model, DISPLAY_FLOOR_COUNTS));
  const [irfFrom, irfTo] = irfSpan(c.irf);
  w.ascii(',"irf":').base64String(curveFloatBytes(c.irf, DISPLAY_FLOOR_COUNTS, irfFrom, irfTo));
  w.ascii(',"irfFrom":').exact(irfFrom);
  w.ascii(',"irfLength":').exact(c.irf.length);
  w.ascii(',"weightedResiduals":').base64String(curveFloatBytes(c.weightedResiduals, 0));
  w.ascii(',"autocorrelation":').fixedArray(c.autocorrelation, 3, autocorrelationShown(c));
  w.ascii(',"fitStartIndex":').exact(c.fitStartIndex);
  w.ascii(',"fitEndIndex":').exact(c.fitEndIndex);
  return w.byte(125);
}

/** A sample's curves as the JSON text of its block in the page: packed, rounded and script-safe. */
export function curvesForScript(curves: FitCurves): string {
  return new TextDecoder().decode(writePackedCurves(new JsonBytes(), curves).take());
}

/** The opening tag of sample i's curves block (see `reportHtmlPieces`). */
export function curveBlockOpening(i: number): string {
  return `<script type="application/json" id="${CURVES_ID_PREFIX}${i}">`;
}

export const CURVE_BLOCK_CLOSING = '</script>\n';

/** The page's last bytes, after the curves blocks. */
export const REPORT_END = '</body>\n</html>\n';

/**
 * The page up to its curves blocks, in pieces: head, styles, the summary, sample 0's curves block
 * (`block0`, when it has one: the page opens on the first sample, and its curves are there before
 * the page script runs) and the scripts. The other blocks may follow in any order (the page looks
 * them up by id), then `REPORT_END`. `data.samples` are read for the summary only.
 */
export function* reportHeadPieces(
  assets: ReportAssets,
  data: ReportData,
  block0: string | Uint8Array | null,
): Generator<string | Uint8Array> {
  yield (
    '<!doctype html>\n<html lang="en">\n<head>\n<meta charset="utf-8">\n' +
    `<meta http-equiv="Content-Security-Policy" content="${REPORT_CSP}">\n` +
    '<meta name="viewport" content="width=device-width, initial-scale=1">\n' +
    `<meta name="generator" content="lumirate ${escapeHtml(data.lumirateVersion)}">\n` +
    `<title>${escapeHtml(data.title)}</title>\n` +
    `<style>${inlineStyle(assets.uplotCss, 'the uPlot stylesheet')}</style>\n` +
    `<style>${inlineStyle(assets.appCss, 'the page stylesheet')}</style>\n` +
    '</head>\n<body>\n' +
    '<noscript><p>This report draws its tables and plots with JavaScript; please allow scripts for this local file.</p></noscript>\n' +
    '<div id="lumirate-app"></div>\n'
  );
  yield `<script type="application/json" id="${REPORT_DATA_ID}">`;
  yield* summaryJsonPieces(data);
  yield '</script>\n';
  if (data.samples.length && block0 !== null) yield* curveBlockPieces(0, block0);
  yield `<script>${inlineScript(assets.uplotJs)}</script>\n`;
  yield `<script>${inlineScript(assets.appJs)}</script>\n`;
}

/** Sample i's curves block, its JSON text as `curvesForScript` makes it (as text or UTF-8 bytes). */
export function* curveBlockPieces(i: number, json: string | Uint8Array): Generator<string | Uint8Array> {
  yield curveBlockOpening(i);
  yield json;
  yield CURVE_BLOCK_CLOSING;
}

/**
 * The report page in pieces, in order, for writing to a file one piece at a time. `data.samples` are
 * read for the summary only (their curves, if any, are ignored); `curvesJson(i)` gives sample i's curves
 * block text as `curvesForScript` makes it (as text or UTF-8 bytes), or null when it has none, and is
 * called once per sample, in order, so a caller can read them from disk as they are needed.
 */
export function* reportHtmlPieces(
  assets: ReportAssets,
  data: ReportData,
  curvesJson: (i: number) => string | Uint8Array | null,
): Generator<string | Uint8Array> {
  yield* reportHeadPieces(assets, data, data.samples.length ? curvesJson(0) : null);
  for (let i = 1; i < data.samples.length; i++) {
    const json = curvesJson(i);
    if (json !== null) yield* curveBlockPieces(i, json);
  }
  yield REPORT_END;
}

/** The whole report page as one string (for small reports and tests; a batch streams the pieces). */
export function assembleReportHtml(assets: ReportAssets, data: ReportData): string {
  const curvesJson = (i: number) => {
    const curves = data.samples[i].fit?.curves;
    return curves ? curvesForScript(curves) : null;
  };
  return [...reportHtmlPieces(assets, data, curvesJson)].join('');
}
