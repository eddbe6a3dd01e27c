/**
 * The report in a real browser (Debian's headless Chromium): opened from disk, clicked, keyed, and
 * checked for what a reader needs to see. Also the safety check: hostile names stay text.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { formatValueError } from '../../shared/format.js';
import type { SampleResult } from '../../shared/schema.js';
import { writeReport } from '../../cli/report.js';
import { warningsOf } from '../../viewer/table.js';
import { launchHeadless, type Headless } from './browser.js';
import { demoReport, demoSeriesReport, OUTPUT_DIR, type OpenedReport } from './demoReport.js';
import { fixtureReport } from './fixtures.js';

let chrome: Headless;
let page: Page;
let report: OpenedReport;
const problems: string[] = [];

/** What the page must show as a sample's lifetime: the first component, formatted the house way. */
function lifetimeText(s: SampleResult): string {
  const c = s.fit!.components[0];
  return c.fixed ? String(c.tauNs) : formatValueError(c.tauNs, c.tauErrNs);
}

/** Pixels of a canvas close to a given colour (the curve's stroke), read back from the canvas itself. */
async function pixelsNear(selector: string, hex: string, fromX = 0, toX = 1): Promise<number[]> {
  return page.$$eval(
    selector,
    (canvases, [hex0, x0, x1]) => {
      const hexColour = String(hex0);
      const r0 = parseInt(hexColour.slice(1, 3), 16);
      const g0 = parseInt(hexColour.slice(3, 5), 16);
      const b0 = parseInt(hexColour.slice(5, 7), 16);
      return (canvases as HTMLCanvasElement[]).map((c) => {
        const left = Math.floor(c.width * x0);
        const width = Math.max(1, Math.floor(c.width * x1) - left);
        const d = c.getContext('2d')!.getImageData(left, 0, width, c.height).data;
        let n = 0;
        for (let i = 0; i < d.length; i += 4)
          if (d[i + 3] > 200 && Math.abs(d[i] - r0) + Math.abs(d[i + 1] - g0) + Math.abs(d[i + 2] - b0) < 60)
            n++;
        return n;
      });
    },
    [hex, fromX, toX] as [string, number, number],
  );
}

async function open(path: string): Promise<void> {
  await page.goto(pathToFileURL(path).href);
  await page.waitForFunction(() => window.__reportReady !== undefined, null, { timeout: 30_000 });
}

beforeAll(async () => {
  report = await demoReport();
  chrome = await launchHeadless();
  const context = await chrome.browser.newContext({
    viewport: { width: 1400, height: 1000 },
    acceptDownloads: true,
  });
  page = await context.newPage();
  page.on('console', (m) => {
    // The test's own getImageData calls make Chromium suggest willReadFrequently; that one is ours.
    if (m.type() === 'warning' && /willReadFrequently/.test(m.text())) return;
    if (m.type() === 'error' || m.type() === 'warning') problems.push(`console ${m.type()}: ${m.text()}`);
  });
  page.on('pageerror', (e) => problems.push(`page error: ${e.message}`));
  page.on('dialog', (d) => {
    problems.push(`dialog: ${d.message()}`);
    void d.dismiss();
  });
  page.on('request', (r) => {
    if (!r.url().startsWith('file:') && !r.url().startsWith('blob:') && !r.url().startsWith('data:'))
      problems.push(`network request: ${r.url()}`);
  });
  await open(report.path);
});

afterAll(async () => {
  await chrome?.close();
});

describe(`the report in headless Chromium`, () => {
  it('shows one table row per sample, failed ones included', async () => {
    expect(await page.locator('.lr-table tbody tr').count()).toBe(report.samples.length);
    const failed = report.samples.filter((s) => s.status === 'failed');
    expect(await page.locator('.lr-table tbody tr.lr-failed').count()).toBe(failed.length);
    console.log(
      `opened the ${report.source} report: ${report.samples.length} samples, ${failed.length} failed`,
    );
  });

  it('clicking a row draws its decay, residuals and autocorrelation and shows its lifetime on the card', async () => {
    const okIndices = report.samples.map((s, i) => (s.status === 'ok' ? i : -1)).filter((i) => i >= 0);
    const target = okIndices[Math.min(1, okIndices.length - 1)];
    const s = report.samples[target];
    await page.locator(`.lr-table tbody tr[data-index="${target}"]`).click();
    expect(await page.evaluate(() => window.__reportSelected)).toBe(target);
    expect(await page.locator('.lr-detail-title').textContent()).toBe(s.sample);
    expect(await page.locator('.lr-plots canvas').count()).toBe(3);
    // Each plot's curve colour (palette.ts) is drawn: data and residuals in blue, autocorrelation in green.
    const blue = await pixelsNear('.lr-plots canvas', '#0072B2');
    const green = await pixelsNear('.lr-plots canvas', '#009E73');
    expect(blue[0]).toBeGreaterThan(200);
    expect(blue[1]).toBeGreaterThan(200);
    expect(green[2]).toBeGreaterThan(100);
    // The model (black) is on the decay plot too.
    expect((await pixelsNear('.lr-plots canvas', '#000000'))[0]).toBeGreaterThan(200);
    const tauCells = await page.locator('.lr-cards .lr-tau').allTextContents();
    expect(tauCells[0]).toContain(lifetimeText(s));
    if (s.fit!.covariance) {
      // Correlations from the stored covariance: one row per free parameter, 1.00 on the diagonal.
      const names = s.fit!.covariance.names;
      expect(await page.locator('.lr-correlation tbody tr').count()).toBe(names.length);
      const diagonal = await page.$$eval('.lr-correlation tbody tr', (rows) =>
        rows.map((r, i) => (r as HTMLTableRowElement).cells[i + 1].textContent),
      );
      expect(diagonal).toEqual(names.map(() => '1.00'));
    }
    await page.screenshot({ path: join(OUTPUT_DIR, 'report.png'), fullPage: true });
  });

  it('the down and up arrow keys move to the next and previous sample in the table order', async () => {
    const first = await page.evaluate(() => window.__reportSelected!);
    const order = await page.$$eval('.lr-table tbody tr', (rows) =>
      rows.map((r) => Number(r.getAttribute('data-index'))),
    );
    const pos = order.indexOf(first);
    await page.locator('body').press('ArrowDown');
    const next = order[Math.min(pos + 1, order.length - 1)];
    expect(await page.evaluate(() => window.__reportSelected)).toBe(next);
    expect(await page.locator('.lr-detail-title').textContent()).toBe(report.samples[next].sample);
    await page.locator('body').press('ArrowUp');
    expect(await page.evaluate(() => window.__reportSelected)).toBe(first);
  });

  it('a failed sample is shown with its error (the hostile-names report below checks one in any case)', async () => {
    const i = report.samples.findIndex((s) => s.status === 'failed');
    if (i < 0) return;
    await page.locator(`.lr-table tbody tr[data-index="${i}"]`).click();
    expect(await page.locator('.lr-cards .lr-error').textContent()).toContain(report.samples[i].error!);
    expect(await page.locator(`.lr-table tbody tr[data-index="${i}"] .lr-notes`).textContent()).toBe(
      report.samples[i].error,
    );
  });

  it('sorting by the first lifetime orders the rows by it, missing values last', async () => {
    await page.locator('.lr-table th .lr-sort', { hasText: 'τ1 (ns)' }).click();
    const order = await page.$$eval('.lr-table tbody tr', (rows) =>
      rows.map((r) => Number(r.getAttribute('data-index'))),
    );
    const taus = order.map((i) => report.samples[i].fit?.components[0]?.tauNs ?? Infinity);
    expect(taus).toEqual([...taus].sort((a, b) => a - b));
    await page.locator('.lr-table th .lr-sort', { hasText: 'τ1 (ns)' }).click();
    expect(await page.locator('.lr-table th[aria-sort="descending"]').count()).toBe(1);
  });

  it('the filter narrows the rows to matching samples', async () => {
    const name = report.samples[0].sample;
    await page.locator('.lr-search').fill(name);
    const shown = await page.$$eval('.lr-table tbody tr .lr-name', (cells) =>
      cells.map((c) => c.textContent),
    );
    expect(shown).toContain(name);
    const needle = name.toLowerCase();
    const expected = report.samples
      .filter((x) =>
        [x.sample, x.status, x.group ?? '', x.error ?? '', ...Object.values(x.metadata), ...warningsOf(x)]
          .join('\n')
          .toLowerCase()
          .includes(needle),
      )
      .map((x) => x.sample);
    expect(shown.sort()).toEqual(expected.sort());
    await page.locator('.lr-search').fill('');
    expect(await page.locator('.lr-table tbody tr').count()).toBe(report.samples.length);
  });

  it('dragging across the decay zooms the residuals to the same time range', async () => {
    const i = report.samples.findIndex((s) => s.status === 'ok');
    await page.locator(`.lr-table tbody tr[data-index="${i}"]`).click();
    const snapshot = () =>
      page.$$eval('.lr-plots canvas', (cs) => (cs as HTMLCanvasElement[]).map((c) => c.toDataURL()));
    const before = await snapshot();
    const box = (await page.locator('.lr-plots .u-over').first().boundingBox())!;
    await page.mouse.move(box.x + box.width * 0.2, box.y + box.height / 2);
    await page.mouse.down();
    await page.mouse.move(box.x + box.width * 0.4, box.y + box.height / 2, { steps: 5 });
    await page.mouse.up();
    const after = await snapshot();
    expect(after[0]).not.toBe(before[0]);
    expect(after[1]).not.toBe(before[1]);
    // The autocorrelation has its own lag axis and is not zoomed.
    expect(after[2]).toBe(before[2]);
    // The zoomed residuals are drawn across the whole zoomed range, not only part of it.
    const [rightQuarter] = await pixelsNear('.lr-plots canvas >> nth=1', '#0072B2', 0.75, 0.98);
    expect(rightQuarter).toBeGreaterThan(100);
  });

  it('the table downloads as CSV with one line per shown sample', async () => {
    const [download] = await Promise.all([
      page.waitForEvent('download'),
      page.locator('.lr-button', { hasText: 'CSV' }).click(),
    ]);
    const text = readFileSync((await download.path())!, 'utf8');
    const lines = text.trimEnd().split('\r\n');
    expect(lines.length).toBe(report.samples.length + 1);
    expect(lines[0].split(',')).toEqual(
      expect.arrayContaining(['sample', 'status', 'tau1_ns', 'tau1_err_ns']),
    );
  });

  it('a plot downloads as a PNG image', async () => {
    const [download] = await Promise.all([
      page.waitForEvent('download'),
      page.locator('.lr-png').first().click(),
    ]);
    const bytes = readFileSync((await download.path())!);
    // PNG signature (ISO/IEC 15948): 89 50 4E 47 0D 0A 1A 0A.
    expect([...bytes.subarray(0, 8)]).toEqual([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
    expect(download.suggestedFilename()).toMatch(/-decay\.png$/);
  });

  it('shows the series the batch fitted, each drawn', async () => {
    const expected = report.series?.length ?? 0;
    expect(await page.locator('.lr-series .lr-series-block').count()).toBe(expected);
    if (expected > 0)
      (await pixelsNear('.lr-series canvas', '#D55E00')).forEach((n) => expect(n).toBeGreaterThan(50));
  });

  it('raised no console errors, page errors, dialogs or network requests', () => {
    expect(problems).toEqual([]);
  });
});

describe('hostile names in the report', () => {
  const hostile = [
    '<img src=x onerror="window.__pwned=1">',
    '</script><script>window.__pwned=2</script>',
    "'; window.__pwned=3; '",
  ];

  it('are shown literally and nothing in them runs', async () => {
    const data = fixtureReport({ samples: 2, channels: 256, extraNames: hostile });
    data.title = '<b onmouseover="window.__pwned=4">bold</b>';
    data.samples[0].metadata = { solvent: '<svg onload="window.__pwned=5">' };
    const failed = data.samples.find((s) => s.status === 'failed')!;
    failed.error = '<iframe src="javascript:window.__pwned=6"></iframe>';
    const path = join(OUTPUT_DIR, 'hostile-report.html');
    await writeReport(data, path);
    problems.length = 0;
    await open(path);
    expect(await page.evaluate(() => (window as unknown as { __pwned?: number }).__pwned)).toBeUndefined();
    const names = await page.$$eval('.lr-table tbody tr .lr-name', (cells) =>
      cells.map((c) => c.textContent),
    );
    for (const h of hostile) expect(names).toContain(h);
    expect(await page.locator('h1').textContent()).toBe(data.title);
    expect(await page.locator('img, svg:not(.uplot svg), iframe').count()).toBe(0);
    const i = data.samples.findIndex((s) => s.sample === hostile[0]);
    await page.locator(`.lr-table tbody tr[data-index="${i}"]`).click();
    expect(await page.locator('.lr-detail-title').textContent()).toBe(hostile[0]);
    // A failed sample is listed and shows its error, here a hostile one, as text.
    const f = data.samples.indexOf(failed);
    await page.locator(`.lr-table tbody tr[data-index="${f}"]`).click();
    expect(await page.locator('.lr-cards .lr-error').textContent()).toBe(
      `This sample failed: ${failed.error}`,
    );
    expect(await page.locator(`.lr-table tbody tr[data-index="${f}"] .lr-notes`).textContent()).toBe(
      failed.error,
    );
    expect(await page.evaluate(() => (window as unknown as { __pwned?: number }).__pwned)).toBeUndefined();
    expect(problems).toEqual([]);
    writeFileSync(join(OUTPUT_DIR, 'hostile-names.txt'), names.join('\n'));
  });
});

describe('series views', () => {
  it('draw each series with its points and fitted law, and list the parameters with their errors', async () => {
    const data = fixtureReport({ samples: 6, channels: 256 });
    const path = join(OUTPUT_DIR, 'series-report.html');
    await writeReport(data, path);
    problems.length = 0;
    await open(path);
    expect(await page.locator('.lr-series .lr-series-block').count()).toBe(data.series.length);
    // Points in vermillion, the law as a black dashed line (palette.ts).
    const points = await pixelsNear('.lr-series canvas', '#D55E00');
    const law = await pixelsNear('.lr-series canvas', '#000000');
    for (let k = 0; k < data.series.length; k++) {
      expect(points[k]).toBeGreaterThan(50);
      expect(law[k]).toBeGreaterThan(50);
    }
    const card = await page.locator('.lr-series-card').first().textContent();
    // The fixture's Arrhenius parameters: Ea = 0.25 ± 0.01 eV, formatted by the house rule.
    expect(card).toContain('Eₐ (eV)');
    expect(card).toContain('0.250 ± 0.010');
    await page.locator('.lr-series').screenshot({ path: join(OUTPUT_DIR, 'series.png') });
    expect(problems).toEqual([]);
  });
});

describe('the demo series', () => {
  it('appear as series views with their points, law and parameters', async () => {
    const made = demoSeriesReport(report);
    if (!made) {
      // Before the demo exists there is nothing to fit; the fixture series test above covers drawing.
      expect(report.source).toBe('fixture');
      return;
    }
    problems.length = 0;
    await open(made.path);
    expect(await page.locator('.lr-series .lr-series-block').count()).toBe(made.series.length);
    const points = await pixelsNear('.lr-series canvas', '#D55E00');
    points.forEach((n) => expect(n).toBeGreaterThan(50));
    const arrhenius = made.series.find((x) => x.model === 'arrhenius')!;
    const card = await page.locator('.lr-series-card').first().textContent();
    const p = arrhenius.parameters;
    expect(card).toContain(`Eₐ (eV)${formatValueError(p.eaEv, p.eaErrEv)}`);
    expect(card).toContain(`Points${arrhenius.points.length}`);
    await page.locator('.lr-series').screenshot({ path: join(OUTPUT_DIR, 'demo-series.png') });
    expect(problems).toEqual([]);
  });
});

describe('a large report', () => {
  it('puts every row in the table, in slices, and keeps the sorted order across them', async () => {
    const data = fixtureReport({ samples: 250, channels: 128, series: false });
    const path = join(OUTPUT_DIR, 'large-report.html');
    await writeReport(data, path);
    problems.length = 0;
    await open(path);
    const n = data.samples.length;
    await page.waitForFunction(
      (count) => document.querySelectorAll('.lr-table tbody tr').length === count,
      n,
    );
    await page.locator('.lr-table th .lr-sort', { hasText: 'τ1 (ns)' }).click();
    await page.waitForFunction(
      (count) => document.querySelectorAll('.lr-table tbody tr').length === count,
      n,
    );
    const order = await page.$$eval('.lr-table tbody tr', (rows) =>
      rows.map((r) => Number(r.getAttribute('data-index'))),
    );
    expect(new Set(order).size).toBe(n);
    const taus = order.map((i) => data.samples[i].fit?.components[0]?.tauNs ?? Infinity);
    expect(taus).toEqual([...taus].sort((a, b) => a - b));
    expect(problems).toEqual([]);
  });
});
