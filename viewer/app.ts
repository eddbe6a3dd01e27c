/**
 * The report page. It reads the embedded data, builds the sample table, and shows the selected sample's
 * plots and cards; it computes nothing. Curves of each sample are parsed on first view.
 */
import { CURVES_ID_PREFIX, REPORT_DATA_ID, unpackCurves, type PackedCurves } from '../shared/reportHtml.js';
import { isCompatibleSchema, type FitCurves, type ReportData, type SeriesModel } from '../shared/schema.js';
import { el, append, clear, download, safeFileName } from './dom.js';
import { createSampleTable } from './table.js';
import { drawSamplePlots, drawSeriesPlot, type PlotHandle } from './plots.js';
import { fitCard, ratesCard, seriesCard, sourceCard } from './cards.js';
import { toCsv } from './csv.js';

declare global {
  interface Window {
    /** performance.now() when the table and the first sample's plots are drawn and painted. */
    __reportReady?: number;
    /** Index of the sample shown. */
    __reportSelected?: number;
  }
}

const SERIES_TITLES: Record<SeriesModel, string> = {
  arrhenius: 'Temperature dependence (Arrhenius)',
  'stern-volmer': 'Quenching (Stern–Volmer)',
  fret: 'Energy transfer efficiency',
  efficiency: 'Efficiency',
};

function readData(): ReportData {
  const node = document.getElementById(REPORT_DATA_ID);
  if (!node?.textContent) throw new Error('this report carries no data block');
  const data = JSON.parse(node.textContent) as ReportData;
  if (!isCompatibleSchema(data.schemaVersion))
    throw new Error(
      `this report uses result schema ${String(data.schemaVersion)}, which this page cannot read`,
    );
  return data;
}

const curveCache = new Map<number, FitCurves | null>();
/** A sample's curves; 'pending' while the browser is still reading the rest of the file. */
function curvesOf(index: number): FitCurves | null | 'pending' {
  if (!curveCache.has(index)) {
    const node = document.getElementById(`${CURVES_ID_PREFIX}${index}`);
    // The block may not be parsed yet: the page starts drawing before the whole file is read.
    if (!node && document.readyState === 'loading') return 'pending';
    curveCache.set(
      index,
      node?.textContent ? unpackCurves(JSON.parse(node.textContent) as PackedCurves) : null,
    );
  }
  return curveCache.get(index) ?? null;
}

function start(root: HTMLElement): void {
  // Marks for the benchmark: where the time to the first drawn sample goes.
  performance.mark('lumirate-script-start');
  const data = readData();
  performance.mark('lumirate-data-parsed');
  const samples = data.samples;
  const nFailed = samples.filter((s) => s.status === 'failed').length;

  const csvButton = el('button', { className: 'lr-button', attrs: { type: 'button' } }, 'Table as CSV');
  const header = el(
    'header',
    { className: 'lr-header' },
    el('h1', null, data.title),
    el(
      'p',
      { className: 'lr-subtitle' },
      `${samples.length} samples, ${samples.length - nFailed} fitted, ${nFailed} failed · created ${data.createdUtc} · lumirate ${data.lumirateVersion}`,
    ),
  );

  const detail = el('section', { className: 'lr-detail', attrs: { 'aria-live': 'polite' } });
  const detailTitle = el('h2', { className: 'lr-detail-title' });
  const plotArea = el('div', { className: 'lr-plots' });
  const cardArea = el('div', { className: 'lr-cards' });
  append(detail, detailTitle, el('div', { className: 'lr-detail-grid' }, plotArea, cardArea));

  let handles: PlotHandle[] = [];
  let current = -1;
  const table = createSampleTable(samples, (i) => show(i));
  performance.mark('lumirate-table-made');

  function show(index: number): void {
    if (index === current || index < 0 || index >= samples.length) return;
    current = index;
    window.__reportSelected = index;
    table.select(index);
    const s = samples[index];
    for (const h of handles) h.destroy();
    handles = [];
    clear(plotArea);
    clear(cardArea);
    detailTitle.textContent = s.sample;
    detailTitle.classList.toggle('lr-failed-title', s.status === 'failed');
    const curves = s.status === 'ok' ? curvesOf(index) : null;
    if (curves === 'pending') {
      plotArea.appendChild(el('p', { className: 'lr-empty' }, 'Reading this sample’s curves…'));
      document.addEventListener(
        'DOMContentLoaded',
        () => {
          if (current !== index) return;
          current = -1;
          show(index);
        },
        { once: true },
      );
    } else if (curves) handles = drawSamplePlots(plotArea, curves, s.sample);
    else
      plotArea.appendChild(
        el(
          'p',
          { className: 'lr-empty' },
          s.status === 'failed'
            ? 'No fit: this sample failed (see the fit card).'
            : 'No curves were stored for this sample.',
        ),
      );
    append(cardArea, fitCard(s), ratesCard(s), sourceCard(s));
  }

  csvButton.addEventListener('click', () => {
    const { header: h, rows } = table.csv();
    download(
      new Blob([toCsv(h, rows)], { type: 'text/csv;charset=utf-8' }),
      `${safeFileName(data.title)}-samples.csv`,
    );
  });

  const tableSection = el(
    'section',
    { className: 'lr-samples' },
    el('div', { className: 'lr-section-head' }, el('h2', null, 'Samples'), csvButton),
    table.element,
  );
  append(root, header, tableSection, detail);
  performance.mark('lumirate-page-attached');
  const first = table.visibleOrder()[0];
  if (first !== undefined) show(first);
  performance.mark('lumirate-first-sample-drawn');

  if (data.series.length) {
    const seriesSection = el('section', { className: 'lr-series' }, el('h2', null, 'Series'));
    root.appendChild(seriesSection);
    const byName = new Map(samples.map((s, i) => [s.sample, i]));
    for (const series of data.series) {
      const block = el('div', { className: 'lr-series-block' });
      seriesSection.appendChild(block);
      const plotBox = el('div', { className: 'lr-series-plot' });
      block.appendChild(plotBox);
      drawSeriesPlot(plotBox, series, SERIES_TITLES[series.model] ?? series.model, (name) => {
        const i = byName.get(name);
        if (i !== undefined) {
          show(i);
          detail.scrollIntoView({ block: 'start' });
        }
      });
      block.appendChild(seriesCard(series));
    }
  }

  // ↑/↓ walk the samples in the order the table shows them.
  document.addEventListener('keydown', (ev) => {
    if (ev.key !== 'ArrowDown' && ev.key !== 'ArrowUp') return;
    const target = ev.target as HTMLElement | null;
    if (
      target &&
      (target.tagName === 'INPUT' || target.tagName === 'SELECT' || target.tagName === 'TEXTAREA')
    )
      return;
    const order = table.visibleOrder();
    if (order.length === 0) return;
    const pos = order.indexOf(current);
    const next =
      pos < 0 ? 0 : Math.min(order.length - 1, Math.max(0, pos + (ev.key === 'ArrowDown' ? 1 : -1)));
    ev.preventDefault();
    show(order[next]);
  });

  performance.mark('lumirate-series-drawn');
  // Ready once the browser has laid out and painted what was built: a frame, then a task after it.
  requestAnimationFrame(() =>
    setTimeout(() => {
      performance.mark('lumirate-ready');
      window.__reportReady = performance.now();
    }, 0),
  );
}

const root = document.getElementById('lumirate-app');
if (root) {
  try {
    start(root);
  } catch (err) {
    clear(root);
    root.appendChild(
      el(
        'p',
        { className: 'lr-error', attrs: { role: 'alert' } },
        `This report could not be shown: ${(err as Error).message}`,
      ),
    );
    window.__reportReady = performance.now();
  }
}
