import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { blankPieces, ReportStream } from '../../cli/batch/reportStream.js';
import type { OutputEntry } from '../../cli/batch/writeOutputs.js';
import {
  assembleReportHtml,
  curvesForScript,
  prepareReportSample,
  REPORT_END,
  type ReportAssets,
} from '../../shared/reportHtml.js';
import type { ReportData, SampleResult } from '../../shared/schema.js';
import { fixtureReport } from '../viewer/fixtures.js';
import { tempDirs } from './tempDirs.js';

const tempDir = tempDirs('lumirate-report-stream-');

const assets: ReportAssets = {
  appJs: 'window.appLoaded = true; // é',
  appCss: 'body { color: black; }',
  uplotJs: 'var uPlot = function () {};',
  uplotCss: '.uplot { display: block; }',
};

/** A report of `n` fitted samples (and two failed ones), in manifest order. */
function report(n: number): ReportData {
  const data = fixtureReport({ samples: n, channels: 64, series: false });
  data.samples.forEach((s, k) => (s.manifestRow = k + 2));
  return data;
}

function withoutCurves(s: SampleResult): SampleResult {
  if (!s.fit) return s;
  const { curves: _c, ...fit } = s.fit;
  return { ...s, fit: fit as SampleResult['fit'] };
}

/**
 * Streams `data`'s samples in the order `arrival` gives (indices into data.samples); samples in
 * `noBlock` come without a curves block (as results reused by --resume do). Returns the page.
 */
async function streamed(
  dir: string,
  data: ReportData,
  arrival: number[],
  options: { announced?: SampleResult[]; noBlock?: Set<number> } = {},
): Promise<string> {
  const path = join(dir, 'report.html');
  const stream = new ReportStream(path, options.announced ?? data.samples, assets, 0);
  for (const k of arrival) {
    const s = data.samples[k];
    const curves = s.fit?.curves;
    const block =
      curves && !options.noBlock?.has(k) ? new TextEncoder().encode(curvesForScript(curves)) : undefined;
    stream.add(s.sample, prepareReportSample(withoutCurves(s)), block);
    // The caller's buffer is reused at once (a worker writes its next reply into it).
    block?.fill(0);
  }
  const arrived = new Set(arrival);
  const ordered: OutputEntry[] = data.samples
    .filter((_, k) => arrived.has(k))
    .map((s) => ({ brief: withoutCurves(s), json: () => JSON.stringify(s) }));
  await stream.finish(ordered, { ...data, samples: ordered.map((e) => e.brief) });
  expect(readdirSync(dir)).toEqual(['report.html']);
  return readFileSync(path, 'utf8');
}

/** Every curves block's text by id, and the page with the blocks taken out. */
function split(html: string): { blocks: Map<string, string>; rest: string } {
  const blocks = new Map<string, string>();
  const rest = html.replace(
    /<script type="application\/json" id="(lumirate-curves-\d+)">([^<]*)<\/script>\n/g,
    (_, id: string, text: string) => {
      blocks.set(id, text);
      return '';
    },
  );
  return { blocks, rest };
}

describe('ReportStream', () => {
  it('writes the blocks as they arrive and the head into the room left for it: the same page but for their order', async () => {
    const data = report(30);
    // Out of order, the first sample among the last to arrive.
    const arrival = [...data.samples.keys()].reverse();
    const html = await streamed(tempDir(), data, arrival);
    const whole = assembleReportHtml(assets, data);
    const got = split(html);
    const want = split(whole);
    // Streamed, not written afresh: the blocks in their order of arrival, and blank room.
    expect(html.indexOf('id="lumirate-curves-1"')).toBeGreaterThan(html.indexOf('id="lumirate-curves-2"'));
    expect(html).toMatch(/\n {100,}\n/);
    expect(got.blocks.size).toBe(30);
    expect(got.blocks).toEqual(want.blocks);
    // The first sample's block still comes before the page script.
    expect(html.indexOf('id="lumirate-curves-0"')).toBeLessThan(html.indexOf('window.appLoaded'));
    // Apart from the blocks, the room's blank text is all that differs.
    expect(got.rest.replace(/\n +\n/, '\n')).toBe(want.rest);
    expect(html.endsWith(REPORT_END)).toBe(true);
    expect(html.length - whole.length).toBeLessThan(0.5 * whole.length);
  });

  it('fills any amount of unused room with spaces and a last newline', () => {
    for (const bytes of [0, 1, 2, 65535, 65536, 65537, 200_001]) {
      const blank = Buffer.concat(blankPieces(bytes));
      expect(blank.length).toBe(bytes);
      if (bytes) expect(blank.toString('latin1')).toBe(' '.repeat(bytes - 1) + '\n');
    }
  });

  it('makes the blocks of results that came without one from their JSON', async () => {
    const data = report(20);
    const noBlock = new Set([0, 5, 6]);
    const html = await streamed(tempDir(), data, [...data.samples.keys()], { noBlock });
    expect(html).toMatch(/\n {100,}\n/);
    expect(split(html).blocks).toEqual(split(assembleReportHtml(assets, data)).blocks);
  });

  it('writes the page afresh, in order, when the head outgrows its room', async () => {
    const data = report(30);
    // The room is set from the first results; later ones carry much longer summaries.
    for (const s of data.samples.slice(20)) s.metadata = { ...s.metadata, note: 'x'.repeat(20000) };
    const html = await streamed(tempDir(), data, [...data.samples.keys()]);
    expect(html).toBe(assembleReportHtml(assets, data));
  });

  it('writes the page afresh, in order, when fewer samples come than were announced (a stopped batch)', async () => {
    const data = report(30);
    const arrival = [...data.samples.keys()].filter((k) => k % 3 !== 1);
    const html = await streamed(tempDir(), data, arrival, { announced: data.samples });
    const kept = { ...data, samples: data.samples.filter((_, k) => k % 3 !== 1) };
    expect(html).toBe(assembleReportHtml(assets, kept));
  });

  it('leaves no file behind when aborted', () => {
    const dir = tempDir();
    const data = report(20);
    const stream = new ReportStream(join(dir, 'report.html'), data.samples, assets, 0);
    for (const s of data.samples)
      stream.add(s.sample, prepareReportSample(withoutCurves(s)), new Uint8Array([123, 125]));
    expect(readdirSync(dir).length).toBe(1);
    stream.abort();
    expect(readdirSync(dir)).toEqual([]);
  });
});
