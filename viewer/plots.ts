/**
 * The plots, drawn with uPlot from precomputed columns: the decay on a logarithmic count axis with the
 * IRF and the model, the weighted residuals on the same (zoom-linked) time axis, the residual
 * autocorrelation, and the series views. Each plot can be saved as a PNG.
 */
import type uPlotType from 'uplot';
import type { FitCurves, SeriesResult } from '../shared/schema.js';
import { DECIMATE_ABOVE, decimationIndices, pick } from './decimate.js';
import { STYLE } from './palette.js';
import { seriesDisplay } from './seriesView.js';
import { el, download, safeFileName } from './dom.js';

/** uPlot arrives as a global from its own inline script. */
function uPlotCtor(): typeof uPlotType {
  const ctor = (globalThis as unknown as { uPlot?: typeof uPlotType }).uPlot;
  if (!ctor) throw new Error('the plotting library did not load');
  return ctor;
}

/** A plot in the page: its uPlot instance, its frame (title, buttons) and a name for exported files. */
export interface PlotHandle {
  frame: HTMLElement;
  plot: uPlotType;
  destroy(): void;
}

/**
 * On a log axis a count ≤ 0 has no place: null leaves a gap instead of a clamped spike. Values below
 * `floor` are dropped too, so that a model or IRF tail far below one count cannot stretch the axis.
 */
function positiveOrNull(values: (number | null)[], floor: number): (number | null)[] {
  return values.map((v) => (v !== null && v > 0 && v >= floor ? v : null));
}

/** Lowest count worth a place on the decay's log axis: a tenth of the smallest positive measured count. */
function logFloor(data: (number | null)[]): number {
  let min = Infinity;
  for (const v of data) if (v !== null && v > 0 && v < min) min = v;
  return Number.isFinite(min) ? min / 10 : 0.1;
}

function widthOf(container: HTMLElement): number {
  return Math.max(320, Math.floor(container.clientWidth || 640) - 4);
}

/** Saves the plot's canvas with its title and a colour key, on white, as a PNG. */
function savePng(u: uPlotType, title: string, fileName: string): void {
  const src = u.ctx.canvas;
  const ratio = src.width / Math.max(1, u.width);
  const keyHeight = Math.round(22 * ratio);
  const titleHeight = Math.round(26 * ratio);
  const out = document.createElement('canvas');
  out.width = src.width;
  out.height = src.height + titleHeight + keyHeight;
  const ctx = out.getContext('2d');
  if (!ctx) return;
  ctx.fillStyle = '#ffffff';
  ctx.fillRect(0, 0, out.width, out.height);
  ctx.fillStyle = '#000000';
  ctx.font = `${Math.round(14 * ratio)}px sans-serif`;
  ctx.textBaseline = 'middle';
  ctx.fillText(title, 8 * ratio, titleHeight / 2);
  ctx.drawImage(src, 0, titleHeight);
  let x = 8 * ratio;
  const y = titleHeight + src.height + keyHeight / 2;
  ctx.font = `${Math.round(12 * ratio)}px sans-serif`;
  u.series.forEach((s, i) => {
    if (i === 0 || !s.show || !s.label) return;
    const stroke = typeof s.stroke === 'function' ? s.stroke(u, i) : s.stroke;
    ctx.strokeStyle = typeof stroke === 'string' ? stroke : '#000000';
    ctx.lineWidth = 2 * ratio;
    ctx.setLineDash(((s as { dash?: number[] }).dash ?? []).map((d) => d * ratio));
    ctx.beginPath();
    ctx.moveTo(x, y);
    ctx.lineTo(x + 24 * ratio, y);
    ctx.stroke();
    ctx.setLineDash([]);
    ctx.fillStyle = '#000000';
    const label = String(s.label);
    ctx.fillText(label, x + 30 * ratio, y);
    x += 30 * ratio + ctx.measureText(label).width + 18 * ratio;
  });
  out.toBlob((blob) => {
    if (blob) download(blob, `${fileName}.png`);
  }, 'image/png');
}

function frame(
  title: string,
  pngTitle: string,
  fileName: string,
  body: HTMLElement,
  plotRef: () => uPlotType | null,
): HTMLElement {
  const button = el(
    'button',
    { className: 'lr-png', attrs: { type: 'button', title: 'Save this plot as a PNG image' } },
    'PNG',
  );
  button.addEventListener('click', () => {
    const u = plotRef();
    if (u) savePng(u, pngTitle, fileName);
  });
  return el(
    'figure',
    { className: 'lr-plot' },
    el('figcaption', null, el('span', null, title), button),
    body,
  );
}

function basePlot(
  title: string,
  fileName: string,
  container: HTMLElement,
  height: number,
  opts: Omit<uPlotType.Options, 'width' | 'height' | 'title'>,
  data: uPlotType.AlignedData,
  /** Title written into the exported image; the image leaves the page, so it names the sample. */
  pngTitle = title,
): PlotHandle {
  const UPlot = uPlotCtor();
  const body = el('div', { className: 'lr-plot-body' });
  let plot: uPlotType | null = null;
  const figure = frame(title, pngTitle, fileName, body, () => plot);
  container.appendChild(figure);
  plot = new UPlot({ ...opts, width: widthOf(body), height } as uPlotType.Options, data, body);
  const u = plot;
  const ro = new ResizeObserver(() => {
    const w = widthOf(body);
    if (Math.abs(w - u.width) > 2) u.setSize({ width: w, height });
  });
  ro.observe(body);
  return {
    frame: figure,
    plot: u,
    destroy() {
      ro.disconnect();
      u.destroy();
      figure.remove();
    },
  };
}

/** A dashed line at y = 0, drawn under the curves' key rather than listed in it. */
function zeroLine(u: uPlotType): void {
  const y = u.valToPos(0, 'y', true);
  if (!Number.isFinite(y) || y < u.bbox.top || y > u.bbox.top + u.bbox.height) return;
  const ctx = u.ctx;
  ctx.save();
  ctx.strokeStyle = STYLE.zero.stroke;
  ctx.lineWidth = STYLE.zero.width * devicePixelRatio;
  ctx.setLineDash(STYLE.zero.dash.map((d) => d * devicePixelRatio));
  ctx.beginPath();
  ctx.moveTo(u.bbox.left, y);
  ctx.lineTo(u.bbox.left + u.bbox.width, y);
  ctx.stroke();
  ctx.restore();
}

/** Decimals needed to write a tick step exactly: 0.25 → 2, 5e-5 → 5, 20 → 0. */
function decimalsOf(step: number): number {
  const [mantissa, exp] = Number(step.toPrecision(6)).toExponential().split('e');
  const mantissaDecimals = (mantissa.split('.')[1] ?? '').length;
  return Math.max(0, Math.min(12, mantissaDecimals - Number(exp)));
}

/** Tick labels with as many decimals as the tick spacing needs (0.00310, 0.00320 … not 0.003, 0.003). */
function tickLabels(_u: uPlotType, splits: number[], _axis: number, _space: number, incr: number): string[] {
  const big = Math.max(...splits.map((v) => Math.abs(v)));
  if (big >= 1e5 || (big > 0 && big < 1e-4)) {
    const digits = Math.max(0, Math.floor(Math.log10(big)) - Math.floor(Math.log10(incr)));
    return splits.map((v) => (v === 0 ? '0' : v.toExponential(digits)));
  }
  const decimals = decimalsOf(incr);
  return splits.map((v) => v.toFixed(decimals));
}

const timeAxis = (label: string): uPlotType.Axis => ({ label, labelSize: 20, size: 40 });
const valueAxis = (label: string, size = 70): uPlotType.Axis => ({ label, labelSize: 20, size });

/** First index whose time is ≥ t (binary search on an ascending axis). */
function lowerIndex(timeNs: number[], t: number): number {
  let lo = 0;
  let hi = timeNs.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (timeNs[mid] < t) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/**
 * Columns for the channels [lo, hi] of a curve set, thinned by the extremes of `reference` when long.
 * Zooming calls this again for the visible channels, so a zoomed view shows every channel once it is
 * narrow enough.
 */
function windowColumns(
  timeNs: number[],
  reference: (number | null)[],
  columns: (number | null)[][],
  lo: number,
  hi: number,
): uPlotType.AlignedData {
  const local = decimationIndices(reference.slice(lo, hi + 1));
  const keep = local.map((k) => k + lo);
  return [pick(timeNs, keep), ...columns.map((c) => pick(c, keep))] as uPlotType.AlignedData;
}

/** Redraws a plot's columns for the visible time range whenever its time axis changes. */
function refineOnZoom(
  u: uPlotType,
  timeNs: number[],
  build: (lo: number, hi: number) => uPlotType.AlignedData,
): void {
  if (timeNs.length <= DECIMATE_ABOVE) return;
  let busy = false;
  u.hooks.setScale = [
    ...(u.hooks.setScale ?? []),
    (self: uPlotType, key: string) => {
      if (key !== 'x' || busy) return;
      const { min, max } = self.scales.x;
      if (min === undefined || max === undefined) return;
      busy = true;
      // One channel of margin on each side so the curve reaches the plot edges.
      const lo = Math.max(0, lowerIndex(timeNs, min) - 1);
      const hi = Math.min(timeNs.length - 1, lowerIndex(timeNs, max) + 1);
      // New columns with scales reset, then the chosen range again: uPlot recomputes which points are in
      // view only when the range changes, and keeping the old range would index the new columns wrongly.
      self.setData(build(lo, hi), true);
      self.setScale('x', { min, max });
      busy = false;
    },
  ];
}

/**
 * Decay, residuals and autocorrelation for one sample. Dragging across the decay or the residuals zooms
 * both time axes together; a double click restores the full range. Long curves are thinned for
 * display, each plot by its own extremes (a lone residual spike stays visible), and redrawn from the
 * full columns for the zoomed range.
 */
export function drawSamplePlots(container: HTMLElement, curves: FitCurves, sampleName: string): PlotHandle[] {
  const base = safeFileName(sampleName);
  const syncKey = `lumirate-time-${Math.random().toString(36).slice(2)}`;
  const cursor: uPlotType.Cursor = { sync: { key: syncKey }, drag: { x: true, y: false } };
  const last = curves.timeNs.length - 1;

  const decaySeries: uPlotType.Series[] = [
    { label: 'Time (ns)' },
    { label: 'Data', ...STYLE.data, points: { show: false } },
  ];
  const floor = logFloor(curves.data);
  const decayColumns: (number | null)[][] = [positiveOrNull(curves.data, floor)];
  if (curves.irf.length === curves.data.length) {
    decaySeries.push({ label: 'IRF', ...STYLE.irf, points: { show: false } });
    decayColumns.push(positiveOrNull(curves.irf, floor));
  }
  decaySeries.push({ label: 'Model', ...STYLE.model, points: { show: false } });
  decayColumns.push(positiveOrNull(curves.model, floor));
  const decayWindow = (lo: number, hi: number) =>
    windowColumns(curves.timeNs, curves.data, decayColumns, lo, hi);

  const handles: PlotHandle[] = [];
  const decay = basePlot(
    'Decay, IRF and model',
    `${base}-decay`,
    container,
    300,
    {
      scales: { x: { time: false }, y: { distr: 3, log: 10 } },
      axes: [timeAxis('Time (ns)'), valueAxis('Counts per channel')],
      series: decaySeries,
      cursor,
    },
    decayWindow(0, last),
    `${sampleName}: decay, IRF and model`,
  );
  handles.push(decay);

  const residualWindow = (lo: number, hi: number) =>
    windowColumns(curves.timeNs, curves.weightedResiduals, [curves.weightedResiduals], lo, hi);
  const residuals = basePlot(
    'Weighted residuals',
    `${base}-residuals`,
    container,
    150,
    {
      scales: {
        x: { time: false },
        // Symmetric about zero, so that a lean to one side shows at a glance.
        y: {
          range: (_u, min, max) => {
            const m = Math.max(Math.abs(min), Math.abs(max), 1) * 1.1;
            return [-m, m];
          },
        },
      },
      axes: [timeAxis('Time (ns)'), valueAxis('Residual / σ')],
      series: [{ label: 'Time (ns)' }, { label: 'Residual', ...STYLE.residual, points: { show: false } }],
      cursor,
      hooks: { draw: [zeroLine] },
    },
    residualWindow(0, last),
    `${sampleName}: weighted residuals`,
  );
  handles.push(residuals);
  refineOnZoom(decay.plot, curves.timeNs, decayWindow);
  refineOnZoom(residuals.plot, curves.timeNs, residualWindow);

  // Zoom one time axis, zoom the other: both show the same channels.
  let syncing = false;
  const link = (from: uPlotType, to: uPlotType) => {
    from.hooks.setScale = [
      ...(from.hooks.setScale ?? []),
      (u: uPlotType, key: string) => {
        if (key !== 'x' || syncing) return;
        syncing = true;
        const { min, max } = u.scales.x;
        if (min !== undefined && max !== undefined) to.setScale('x', { min, max });
        syncing = false;
      },
    ];
  };
  link(decay.plot, residuals.plot);
  link(residuals.plot, decay.plot);

  // The report carries the autocorrelation to half the fit range already (see writePackedCurves).
  const dt = curves.timeNs.length > 1 ? curves.timeNs[1] - curves.timeNs[0] : 1;
  const ac = curves.autocorrelation;
  const lag = ac.map((_, j) => j * dt);
  handles.push(
    basePlot(
      'Residual autocorrelation',
      `${base}-autocorrelation`,
      container,
      150,
      {
        scales: { x: { time: false } },
        axes: [timeAxis('Lag (ns)'), valueAxis('C(lag)')],
        series: [
          { label: 'Lag (ns)' },
          { label: 'Autocorrelation', ...STYLE.autocorrelation, points: { show: false } },
        ],
        hooks: { draw: [zeroLine] },
      },
      [lag, ac] as uPlotType.AlignedData,
      `${sampleName}: residual autocorrelation`,
    ),
  );
  return handles;
}

/** Merges two ascending x columns into one, with each y column null where it has no value. */
function alignColumns(
  a: { x: number[]; y: number[] },
  b: { x: number[]; y: number[] },
): [number[], (number | null)[], (number | null)[]] {
  const xs = [...new Set([...a.x, ...b.x])].sort((p, q) => p - q);
  const ya = new Map(a.x.map((x, i) => [x, a.y[i]]));
  const yb = new Map(b.x.map((x, i) => [x, b.y[i]]));
  return [xs, xs.map((x) => ya.get(x) ?? null), xs.map((x) => yb.get(x) ?? null)];
}

/** Points with error bars and the fitted law; clicking a point reports its sample. */
export function drawSeriesPlot(
  container: HTMLElement,
  series: SeriesResult,
  title: string,
  onPick: (sample: string) => void,
): PlotHandle {
  const view = seriesDisplay(series);
  const pts = view.points;
  const [x, y, fit] = alignColumns({ x: pts.map((p) => p.x), y: pts.map((p) => p.y) }, view.curve);
  const whiskers = (u: uPlotType) => {
    const ctx = u.ctx;
    ctx.save();
    ctx.strokeStyle = STYLE.seriesPoints.stroke;
    ctx.lineWidth = Math.max(1, devicePixelRatio);
    const bottom = u.bbox.top + u.bbox.height;
    for (const p of pts) {
      if (!(p.yHigh > p.yLow)) continue;
      const cx = u.valToPos(p.x, 'x', true);
      const y0 = Number.isFinite(p.yLow) ? u.valToPos(p.yLow, 'y', true) : bottom;
      const y1 = u.valToPos(p.yHigh, 'y', true);
      const cap = 4 * devicePixelRatio;
      ctx.beginPath();
      ctx.moveTo(cx, y0);
      ctx.lineTo(cx, y1);
      ctx.moveTo(cx - cap, y0);
      ctx.lineTo(cx + cap, y0);
      ctx.moveTo(cx - cap, y1);
      ctx.lineTo(cx + cap, y1);
      ctx.stroke();
    }
    ctx.restore();
  };
  const finiteLows = pts.map((p) => p.yLow).filter((v) => Number.isFinite(v));
  const handle = basePlot(
    title,
    `series-${series.model}`,
    container,
    260,
    {
      scales: {
        x: { time: false },
        y: {
          // Leave room for the error bars.
          range: (_u, min, max) => {
            const lo = Math.min(min, ...finiteLows);
            const hi = Math.max(max, ...pts.map((p) => p.yHigh));
            const pad = (hi - lo) * 0.08 || Math.abs(hi) * 0.1 || 1;
            return [lo - pad, hi + pad];
          },
        },
      },
      axes: [
        { ...valueAxis(view.xLabel, 40), values: tickLabels },
        { ...valueAxis(view.yLabel, 80), values: tickLabels },
      ],
      series: [
        { label: view.xLabel },
        {
          label: 'Measured',
          stroke: STYLE.seriesPoints.stroke,
          width: 0,
          paths: () => null,
          points: { show: true, size: 8, stroke: STYLE.seriesPoints.stroke, fill: STYLE.seriesPoints.fill },
        },
        { label: 'Fit', ...STYLE.seriesFit, points: { show: false }, spanGaps: true },
      ],
      hooks: { draw: [whiskers] },
    },
    [x, y, fit] as uPlotType.AlignedData,
  );
  const sampleAt = new Map(pts.map((p) => [p.x, p.sample]));
  handle.plot.over.addEventListener('click', () => {
    const idx = handle.plot.cursor.idx;
    const sample = idx !== null && idx !== undefined ? sampleAt.get(x[idx]) : undefined;
    if (sample !== undefined) onPick(sample);
  });
  return handle;
}
