import { describe, expect, it } from 'vitest';
import {
  assembleReportHtml,
  curvesForScript,
  CURVES_ID_PREFIX,
  escapeHtml,
  jsonForScript,
  packCurves,
  prepareReportSample,
  REPORT_CSP,
  REPORT_DATA_ID,
  reportSampleFromJson,
  scriptSafeJson,
  unpackCurves,
  type ReportAssets,
} from '../../shared/reportHtml.js';
import type { FitCurves, ReportData } from '../../shared/schema.js';
import { briefJson, resultTexts } from '../../src/batch/resultJson.js';
import { fixtureReport, fixtureSample } from './fixtures.js';

/** A value's IEEE 754 binary32 bytes, little-endian. */
function f32Bytes(v: number): number[] {
  const view = new DataView(new ArrayBuffer(4));
  view.setFloat32(0, v, true);
  return [...new Uint8Array(view.buffer)];
}

const assets: ReportAssets = {
  appJs: 'window.appLoaded = true;',
  appCss: 'body { color: black; }',
  uplotJs: 'var uPlot = function () {};',
  uplotCss: '.uplot { display: block; }',
};

const HOSTILE = [
  '<img src=x onerror="window.__pwned=1">',
  '</script><script>window.__pwned=2</script>',
  'a\u2028b\u2029c',
];

/** The text of every `<script type="application/json">` block, in order, found the way an HTML parser ends them. */
function jsonBlocks(html: string): { id: string; text: string }[] {
  const out: { id: string; text: string }[] = [];
  const re = /<script type="application\/json" id="([^"]+)">/g;
  for (const m of html.matchAll(re)) {
    const start = m.index! + m[0].length;
    // An HTML parser ends a script element at the first "</script" whatever the case.
    const end = html.toLowerCase().indexOf('</script', start);
    out.push({ id: m[1], text: html.slice(start, end) });
  }
  return out;
}

describe('jsonForScript', () => {
  it('leaves no "<" and no raw line or paragraph separator, and parses back to the same value', () => {
    const value = { names: HOSTILE, nested: { s: '<!-- <script>' } };
    const text = jsonForScript(value);
    expect(text).not.toMatch(/[<\u2028\u2029]/);
    expect(JSON.parse(text)).toEqual(value);
  });
});

describe('escapeHtml', () => {
  it('escapes the five characters that matter in content and attributes', () => {
    expect(escapeHtml(`<a href="x" title='y'>&</a>`)).toBe(
      '&#60;a href=&#34;x&#34; title=&#39;y&#39;&#62;&#38;&#60;/a&#62;',
    );
  });
});

describe('assembleReportHtml', () => {
  const data = fixtureReport({ samples: 3, channels: 256, extraNames: HOSTILE });
  data.title = '</title><script>alert(1)</script>';
  const html = assembleReportHtml(assets, data);

  it('carries a restrictive Content-Security-Policy that allows nothing from the network', () => {
    expect(html).toContain(`<meta http-equiv="Content-Security-Policy" content="${REPORT_CSP}">`);
    expect(REPORT_CSP).toContain("default-src 'none'");
    expect(REPORT_CSP).not.toMatch(/https?:/);
  });

  it('no name in the data can end its script block: every block parses and gives the names back', () => {
    const blocks = jsonBlocks(html);
    const summary = blocks.find((b) => b.id === REPORT_DATA_ID);
    expect(summary).toBeDefined();
    const parsed = JSON.parse(summary!.text) as ReportData;
    expect(parsed.samples.map((s) => s.sample)).toEqual(data.samples.map((s) => s.sample));
    for (const b of blocks) expect(() => JSON.parse(b.text)).not.toThrow();
    // Script elements: the data blocks, uPlot and the page, and no more (the hostile names added none).
    const curveBlocks = data.samples.filter((s) => s.fit).length;
    expect(html.match(/<script\b/gi)?.length).toBe(1 + curveBlocks + 2);
  });

  // Reference: JSON.stringify of the report data with each sample's curves left out, made script-safe
  // by jsonForScript (tested above); the page's summary is assembled from per-sample pieces and must
  // be that very text, whether or not the pieces were made ahead (prepareReportSample).
  it('writes the summary as jsonForScript of the data without curves, pieces made ahead or not', () => {
    const withoutCurves = {
      ...data,
      samples: data.samples.map((s) => {
        if (!s.fit) return s;
        const { curves: _c, ...fit } = s.fit;
        return { ...s, fit };
      }),
    };
    const expected = jsonForScript(withoutCurves);
    const summaryText = (page: string) => jsonBlocks(page).find((b) => b.id === REPORT_DATA_ID)!.text;
    expect(summaryText(html)).toBe(expected);
    const ahead = fixtureReport({ samples: 3, channels: 64, extraNames: HOSTILE });
    ahead.title = data.title;
    ahead.samples.forEach(prepareReportSample);
    const aheadExpected = jsonForScript({
      ...ahead,
      samples: ahead.samples.map((s) => (s.fit ? { ...s, fit: { ...s.fit, curves: undefined } } : s)),
    });
    expect(summaryText(assembleReportHtml(assets, ahead))).toBe(aheadExpected);
  });

  it('keeps the text a result was read from as its summary, the text it would make of it', () => {
    for (const s of fixtureReport({ samples: 3, channels: 64, extraNames: HOSTILE }).samples) {
      const text = scriptSafeJson(briefJson(resultTexts(s)));
      expect(text).not.toMatch(/[<\u2028\u2029]/);
      const read = reportSampleFromJson(text);
      expect(prepareReportSample(read)).toBe(text);
      // Made afresh from an equal object, the summary is the same text.
      expect(prepareReportSample(JSON.parse(JSON.stringify(read)) as typeof read)).toBe(text);
    }
  });

  it('escapes the title in the head', () => {
    expect(html).toContain('<title>&#60;/title&#62;&#60;script&#62;alert(1)&#60;/script&#62;</title>');
  });

  it('keeps the curves out of the summary and puts each sample’s curves in its own block', () => {
    const summary = JSON.parse(jsonBlocks(html).find((b) => b.id === REPORT_DATA_ID)!.text) as ReportData;
    expect(summary.samples.every((s) => s.fit === undefined || s.fit.curves === undefined)).toBe(true);
    const okIndex = data.samples.findIndex((s) => s.status === 'ok');
    expect(jsonBlocks(html).some((b) => b.id === `${CURVES_ID_PREFIX}${okIndex}`)).toBe(true);
    const failedIndex = data.samples.findIndex((s) => s.status === 'failed');
    expect(jsonBlocks(html).some((b) => b.id === `${CURVES_ID_PREFIX}${failedIndex}`)).toBe(false);
  });

  it('does not change the data it was given', () => {
    expect(data.samples[0].fit?.curves.timeNs.length).toBe(256);
  });

  it('breaks "</script" and "<!--" inside inline code so that the code block cannot end early', () => {
    const tricky = assembleReportHtml(
      { ...assets, appJs: 'const a = "</script><b>"; const b = "<!--";' },
      fixtureReport({ samples: 1, channels: 64, failed: false, series: false }),
    );
    const code = tricky.slice(
      tricky.lastIndexOf('<script>') + '<script>'.length,
      tricky.lastIndexOf('</script>'),
    );
    expect(code).toBe('const a = "<\\/script><b>"; const b = "<\\x21--";');
    // The rewritten code means the same to a JavaScript engine.
    expect(new Function(`${code}; return [a, b];`)()).toEqual(['</script><b>', '<!--']);
  });

  it('refuses a stylesheet that would end its style element', () => {
    expect(() =>
      assembleReportHtml({ ...assets, appCss: 'a{}</style><script>' }, fixtureReport({ samples: 1 })),
    ).toThrow(/the page stylesheet contains "<\/style"/);
  });
});

describe('packCurves / unpackCurves', () => {
  const curves = fixtureSample({ name: 'x', tausNs: [3], fractions: [1], channels: 300 }).fit!.curves;

  it('stores a uniform time axis as start and step and restores it to within 1e-9 ns', () => {
    const packed = packCurves(curves);
    expect(Array.isArray(packed.timeNs)).toBe(false);
    const back = unpackCurves(packed);
    expect(back.timeNs.length).toBe(curves.timeNs.length);
    back.timeNs.forEach((t, i) => expect(Math.abs(t - curves.timeNs[i])).toBeLessThan(1e-9));
  });

  it('keeps a non-uniform time axis as a list', () => {
    const odd: FitCurves = { ...curves, timeNs: curves.timeNs.map((t, i) => t + (i === 7 ? 0.001 : 0)) };
    expect(Array.isArray(packCurves(odd).timeNs)).toBe(true);
    expect(unpackCurves(packCurves(odd)).timeNs[7]).toBeCloseTo(odd.timeNs[7], 12);
  });

  it('stores data, model, IRF and residuals as 32-bit floats, masked channels as null, and rounds the autocorrelation', () => {
    const c: FitCurves = {
      ...curves,
      timeNs: [0, 0.1, 0.2],
      data: [5, 6, 16777217],
      model: [null, 1234.56789, 0.00123456],
      irf: [1e-300, 1.00051, 2.33333],
      weightedResiduals: [null, -1.23456, Number.NaN],
      autocorrelation: [1, 0.123456, 0.05, -0.02, 0.01],
    };
    const p = packCurves(c);
    // Reference: the IEEE 754 binary32 layout, worked out by hand: 1234.56789 rounds to
    // 1234.56787109375 = (1 + 0x1A522C/2^23)·2^10, bits 0x449A522C (sign 0, exponent 137), stored
    // little-endian; the quiet NaN 0x7FC00000 (what engines store for NaN, common practice) marks a
    // masked channel. Base64 per RFC 4648.
    expect(p.model).toBe(
      Buffer.from([0, 0, 0xc0, 0x7f, 0x2c, 0x52, 0x9a, 0x44, ...f32Bytes(0.00123456)]).toString('base64'),
    );
    const back = unpackCurves(p);
    expect(back.model).toEqual([null, Math.fround(1234.56789), Math.fround(0.00123456)]);
    // A tail far below one count becomes 0, which the page leaves off its log axis.
    expect(back.irf).toEqual([0, Math.fround(1.00051), Math.fround(2.33333)]);
    expect(back.weightedResiduals).toEqual([null, Math.fround(-1.23456), null]);
    // Whole counts are exact up to 2^24; above, to the nearest float (2^24 + 1 → 2^24).
    expect(back.data).toEqual([5, 6, 16777216]);
    // Half the lags plus one: the page shows the autocorrelation to half the fit range.
    expect(p.autocorrelation).toEqual([1, 0.123, 0.05, -0.02]);
    expect(back.autocorrelation).toEqual([1, 0.123, 0.05, -0.02]);
  });

  it('stores the IRF from its first to its last channel above the display floor, zeros around it', () => {
    const c: FitCurves = { ...curves, irf: [0, 0, 5e-4, 3, 0, 2, 1e-5, 0] };
    const p = packCurves(c);
    expect([p.irfFrom, p.irfLength]).toEqual([3, 8]);
    expect(Buffer.from(p.irf, 'base64').length).toBe(3 * 4);
    expect(unpackCurves(p).irf).toEqual([0, 0, 0, 3, 0, 2, 0, 0]);
    const flat = packCurves({ ...curves, irf: [0, 1e-4, 0] });
    expect([flat.irf, flat.irfLength]).toEqual(['', 3]);
    expect(unpackCurves(flat).irf).toEqual([0, 0, 0]);
  });

  it('writes a block that JSON.stringify of what it parses to gives back, and an empty IRF as an empty curve', () => {
    const noIrf: FitCurves = { ...curves, irf: [] };
    for (const c of [curves, noIrf]) expect(curvesForScript(c)).toBe(JSON.stringify(packCurves(c)));
    expect(unpackCurves(packCurves(noIrf)).irf).toEqual([]);
  });
});
