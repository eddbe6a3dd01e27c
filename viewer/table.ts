/**
 * The sample table: one row per sample (failed ones included, with their error), sortable by any column,
 * filterable by text and by status, exportable as CSV in the order shown.
 */
import type { SampleResult } from '../shared/schema.js';
import { formatNumber, formatValueError } from '../shared/format.js';
import { el, clear } from './dom.js';
import type { CsvCell } from './csv.js';

interface Column {
  /** Header text, with the unit. */
  label: string;
  /** Longer explanation shown on hover. */
  hint: string;
  /** The number sorted on (null: missing, sorted last) or the text for text columns. */
  sortKey: (s: SampleResult) => number | string | null;
  display: (s: SampleResult) => string;
  /** CSV header names and cells; value and uncertainty go in separate columns. */
  csvHeader: string[];
  csv: (s: SampleResult) => CsvCell[];
  numeric: boolean;
}

const vErr = (v: number | undefined, e: number | undefined) =>
  v === undefined ? '' : formatValueError(v, e);
const num = (v: number | undefined) => (v === undefined || !Number.isFinite(v) ? '' : formatNumber(v));

/** Keys of metadata shown as columns: those present in any sample, in order of first appearance, at most 6. */
function metadataKeys(samples: SampleResult[]): string[] {
  const keys: string[] = [];
  for (const s of samples)
    for (const k of Object.keys(s.metadata ?? {})) if (!keys.includes(k) && keys.length < 6) keys.push(k);
  return keys;
}

const warningCache = new WeakMap<SampleResult, string[]>();

/** Every warning of a sample (its own, the fit's, the rates' and Strickler–Berg's), each once. */
function warningsOf(s: SampleResult): string[] {
  let w = warningCache.get(s);
  if (!w) {
    w = [
      ...(s.warnings ?? []),
      ...(s.fit?.warnings ?? []),
      ...(s.rates?.warnings ?? []),
      ...(s.sb?.warnings ?? []),
    ].filter((x, i, all) => all.indexOf(x) === i);
    warningCache.set(s, w);
  }
  return w;
}
export { warningsOf };

function buildColumns(samples: SampleResult[]): { columns: Column[]; notesColumn: Column } {
  const notesColumn: Column = {
    label: 'Notes',
    hint: 'Warnings, or the error that stopped a failed sample',
    sortKey: (s) => (s.status === 'failed' ? 1000 : warningsOf(s).length),
    display: (s) => {
      if (s.status === 'failed') return s.error ?? 'failed';
      const w = warningsOf(s);
      return w.length === 0 ? '' : w.length === 1 ? w[0] : `${w.length} warnings: ${w[0]} …`;
    },
    csvHeader: ['notes'],
    csv: (s) => [s.status === 'failed' ? (s.error ?? 'failed') : warningsOf(s).join('; ')],
    numeric: false,
  };
  const cols: Column[] = [
    {
      label: 'Sample',
      hint: 'Sample name as given in the manifest',
      sortKey: (s) => s.sample,
      display: (s) => s.sample,
      csvHeader: ['sample'],
      csv: (s) => [s.sample],
      numeric: false,
    },
    {
      label: 'Status',
      hint: 'ok, or failed with the reason in Notes',
      sortKey: (s) => s.status,
      display: (s) => s.status,
      csvHeader: ['status'],
      csv: (s) => [s.status],
      numeric: false,
    },
    // Right after the status, so that a failure's reason is read with it.
    notesColumn,
  ];
  if (samples.some((s) => s.group)) {
    cols.push({
      label: 'Group',
      hint: 'Group of linked (global) analysis',
      sortKey: (s) => s.group ?? null,
      display: (s) => s.group ?? '',
      csvHeader: ['group'],
      csv: (s) => [s.group ?? ''],
      numeric: false,
    });
  }
  for (const key of metadataKeys(samples)) {
    const isNum = samples.every(
      (s) => s.metadata?.[key] === undefined || Number.isFinite(Number(s.metadata[key])),
    );
    cols.push({
      label: key,
      hint: `Manifest column "${key}", as written`,
      sortKey: (s) => {
        const v = s.metadata?.[key];
        if (v === undefined || v === '') return null;
        return isNum ? Number(v) : v;
      },
      display: (s) => s.metadata?.[key] ?? '',
      csvHeader: [key],
      csv: (s) => [s.metadata?.[key] ?? ''],
      numeric: isNum,
    });
  }
  const maxComp = Math.min(3, Math.max(0, ...samples.map((s) => s.fit?.components.length ?? 0)));
  cols.push({
    label: 'n',
    hint: 'Number of exponential components',
    sortKey: (s) => s.fit?.nComponents ?? null,
    display: (s) => (s.fit ? String(s.fit.nComponents) : ''),
    csvHeader: ['components'],
    csv: (s) => [s.fit?.nComponents],
    numeric: true,
  });
  for (let c = 0; c < maxComp; c++) {
    cols.push({
      label: `τ${c + 1} (ns)`,
      hint: `Lifetime of component ${c + 1} ± one standard error, ns`,
      sortKey: (s) => s.fit?.components[c]?.tauNs ?? null,
      display: (s) => vErr(s.fit?.components[c]?.tauNs, s.fit?.components[c]?.tauErrNs),
      csvHeader: [`tau${c + 1}_ns`, `tau${c + 1}_err_ns`],
      csv: (s) => [s.fit?.components[c]?.tauNs, s.fit?.components[c]?.tauErrNs],
      numeric: true,
    });
  }
  if (maxComp > 1) {
    cols.push({
      label: '⟨τ⟩amp (ns)',
      hint: 'Amplitude-weighted average lifetime Σaτ/Σa ± standard error, ns',
      sortKey: (s) => s.fit?.tauAmpAvgNs ?? null,
      display: (s) => vErr(s.fit?.tauAmpAvgNs, s.fit?.tauAmpAvgErrNs),
      csvHeader: ['tau_amp_avg_ns', 'tau_amp_avg_err_ns'],
      csv: (s) => [s.fit?.tauAmpAvgNs, s.fit?.tauAmpAvgErrNs],
      numeric: true,
    });
  }
  cols.push(
    {
      label: 'χ²ᵣ',
      hint: 'Reduced Pearson χ² (dimensionless)',
      sortKey: (s) => s.fit?.chi2Reduced ?? null,
      display: (s) => (s.fit ? formatNumber(s.fit.chi2Reduced, { digits: 3 }) : ''),
      csvHeader: ['chi2_reduced'],
      csv: (s) => [s.fit?.chi2Reduced],
      numeric: true,
    },
    {
      label: 'DW',
      hint: 'Durbin–Watson statistic of the residuals (dimensionless)',
      sortKey: (s) => s.fit?.durbinWatson ?? null,
      display: (s) => (s.fit ? formatNumber(s.fit.durbinWatson, { digits: 3 }) : ''),
      csvHeader: ['durbin_watson'],
      csv: (s) => [s.fit?.durbinWatson],
      numeric: true,
    },
  );
  if (samples.some((s) => s.rates)) {
    cols.push(
      {
        label: 'Φ',
        hint: 'Fluorescence quantum yield ± error (dimensionless)',
        sortKey: (s) => s.rates?.qy ?? null,
        display: (s) => vErr(s.rates?.qy, s.rates?.qyErr),
        csvHeader: ['qy', 'qy_err'],
        csv: (s) => [s.rates?.qy, s.rates?.qyErr],
        numeric: true,
      },
      {
        label: 'k_r (s⁻¹)',
        hint: 'Radiative rate constant Φ/τ ± error, s⁻¹',
        sortKey: (s) => s.rates?.krPerS ?? null,
        display: (s) => vErr(s.rates?.krPerS, s.rates?.krErrPerS),
        csvHeader: ['kr_per_s', 'kr_err_per_s'],
        csv: (s) => [s.rates?.krPerS, s.rates?.krErrPerS],
        numeric: true,
      },
      {
        label: 'k_nr (s⁻¹)',
        hint: 'Non-radiative rate constant (1 − Φ)/τ ± error, s⁻¹',
        sortKey: (s) => s.rates?.knrPerS ?? null,
        display: (s) => vErr(s.rates?.knrPerS, s.rates?.knrErrPerS),
        csvHeader: ['knr_per_s', 'knr_err_per_s'],
        csv: (s) => [s.rates?.knrPerS, s.rates?.knrErrPerS],
        numeric: true,
      },
    );
  }
  if (samples.some((s) => s.sb)) {
    cols.push({
      label: 'k_r / k_r,SB',
      hint: 'Measured radiative rate over the Strickler–Berg prediction (dimensionless)',
      sortKey: (s) => s.sb?.krRatio ?? null,
      display: (s) => num(s.sb?.krRatio),
      csvHeader: ['kr_over_kr_sb'],
      csv: (s) => [s.sb?.krRatio],
      numeric: true,
    });
  }
  return { columns: cols, notesColumn };
}

export type StatusFilter = 'all' | 'ok' | 'failed' | 'warnings';

/** Rows put into the page per task. */
const ROW_SLICE = 100;

export interface SampleTable {
  element: HTMLElement;
  /** Sample indices in the order shown (filtered and sorted). */
  visibleOrder(): number[];
  select(index: number): void;
  csv(): { header: string[]; rows: CsvCell[][] };
}

export function createSampleTable(samples: SampleResult[], onSelect: (index: number) => void): SampleTable {
  const { columns, notesColumn } = buildColumns(samples);
  let sortCol = -1;
  let sortDir: 1 | -1 = 1;
  let text = '';
  let status: StatusFilter = 'all';
  let selected = -1;
  let order: number[] = samples.map((_, i) => i);

  const search = el('input', {
    className: 'lr-search',
    attrs: { type: 'search', placeholder: 'Filter by name, metadata, note…', 'aria-label': 'Filter samples' },
  });
  const statusSelect = el('select', { attrs: { 'aria-label': 'Show samples by status' } });
  for (const [value, label] of [
    ['all', 'all samples'],
    ['ok', 'fitted'],
    ['failed', 'failed'],
    ['warnings', 'with warnings'],
  ] as const) {
    statusSelect.appendChild(el('option', { attrs: { value } }, label));
  }
  const countNote = el('span', { className: 'lr-count' });

  const headRow = el('tr');
  const headers = columns.map((c, ci) => {
    const th = el('th', { title: c.hint, attrs: { scope: 'col', 'aria-sort': 'none' } });
    const button = el('button', { className: 'lr-sort', attrs: { type: 'button' } }, c.label);
    button.addEventListener('click', () => {
      if (sortCol === ci) sortDir = sortDir === 1 ? -1 : 1;
      else {
        sortCol = ci;
        sortDir = 1;
      }
      refresh();
    });
    th.appendChild(button);
    if (c.numeric) th.classList.add('lr-num');
    headRow.appendChild(th);
    return th;
  });
  const tbody = el('tbody');
  const rows = samples.map((s, i) => {
    const tr = el('tr', { attrs: { 'data-index': String(i), 'aria-selected': 'false' } });
    if (s.status === 'failed') tr.classList.add('lr-failed');
    else if (warningsOf(s).length) tr.classList.add('lr-warned');
    for (const c of columns) {
      const td = el('td', null, c.display(s));
      if (c.numeric) td.classList.add('lr-num');
      tr.appendChild(td);
    }
    tr.cells[0].classList.add('lr-name');
    const notes = tr.cells[columns.indexOf(notesColumn)];
    notes.classList.add('lr-notes');
    notes.title = notes.textContent ?? '';
    tr.addEventListener('click', () => onSelect(i));
    return tr;
  });
  const haystacks = samples.map((s) =>
    [s.sample, s.status, s.group ?? '', s.error ?? '', ...Object.values(s.metadata ?? {}), ...warningsOf(s)]
      .join('\n')
      .toLowerCase(),
  );

  function matches(i: number): boolean {
    const s = samples[i];
    if (status === 'ok' && s.status !== 'ok') return false;
    if (status === 'failed' && s.status !== 'failed') return false;
    if (status === 'warnings' && warningsOf(s).length === 0) return false;
    return text === '' || haystacks[i].includes(text);
  }

  function compare(a: number, b: number): number {
    if (sortCol < 0) return a - b;
    const ka = columns[sortCol].sortKey(samples[a]);
    const kb = columns[sortCol].sortKey(samples[b]);
    // Missing values go last whichever way the column is sorted.
    if (ka === null || kb === null) return ka === kb ? a - b : ka === null ? 1 : -1;
    const c =
      typeof ka === 'number' && typeof kb === 'number'
        ? ka - kb
        : String(ka).localeCompare(String(kb), undefined, { numeric: true });
    return c !== 0 ? c * sortDir : a - b;
  }

  function refresh(): void {
    order = samples
      .map((_, i) => i)
      .filter(matches)
      .sort(compare);
    headers.forEach((th, ci) =>
      th.setAttribute('aria-sort', ci !== sortCol ? 'none' : sortDir === 1 ? 'ascending' : 'descending'),
    );
    clear(tbody);
    clearTimeout(pendingRows);
    attachRows(0);
    countNote.textContent = `${order.length} of ${samples.length} samples shown`;
  }

  // Rows go into the page in slices: the first slice at once, the rest in later tasks, so that a
  // table of hundreds of samples does not hold up the first drawn plot. Order, keys and CSV use the
  // whole list from the start.
  let pendingRows: ReturnType<typeof setTimeout> | undefined;
  function attachRows(from: number): void {
    const to = Math.min(order.length, from + ROW_SLICE);
    const slice = document.createDocumentFragment();
    for (let k = from; k < to; k++) slice.appendChild(rows[order[k]]);
    tbody.appendChild(slice);
    if (to < order.length) pendingRows = setTimeout(() => attachRows(to), 0);
  }

  search.addEventListener('input', () => {
    text = search.value.trim().toLowerCase();
    refresh();
  });
  statusSelect.addEventListener('change', () => {
    status = statusSelect.value as StatusFilter;
    refresh();
  });

  const table = el('table', { className: 'lr-table' }, el('thead', null, headRow), tbody);
  const scroller = el('div', { className: 'lr-table-scroll', attrs: { tabindex: '-1' } }, table);
  const tools = el('div', { className: 'lr-table-tools' }, search, statusSelect, countNote);
  const element = el('div', { className: 'lr-table-block' }, tools, scroller);
  refresh();

  return {
    element,
    visibleOrder: () => order.slice(),
    select(index: number) {
      if (selected >= 0) {
        rows[selected].classList.remove('lr-selected');
        rows[selected].setAttribute('aria-selected', 'false');
      }
      selected = index;
      const tr = rows[index];
      tr.classList.add('lr-selected');
      tr.setAttribute('aria-selected', 'true');
      // Keep the selected row in view inside the scrolling table only (once it is in the page).
      if (!tr.isConnected) return;
      const top = tr.offsetTop - (table.tHead?.offsetHeight ?? 0);
      if (top < scroller.scrollTop) scroller.scrollTop = top;
      else if (tr.offsetTop + tr.offsetHeight > scroller.scrollTop + scroller.clientHeight)
        scroller.scrollTop = tr.offsetTop + tr.offsetHeight - scroller.clientHeight;
    },
    csv: () => ({
      header: columns.flatMap((c) => c.csvHeader),
      rows: order.map((i) => columns.flatMap((c) => c.csv(samples[i]))),
    }),
  };
}
