import { formatNumber, formatValueError } from '../../shared/format.js';
import { SERIES_COUNT_PARAMETERS, type SampleResult, type SeriesResult } from '../../shared/schema.js';
import { csvQuote } from './csvCells.js';

/** Full precision for machine-readable tables: the shortest text that reads back to the same double. */
function num(x: number | undefined | null): string {
  return x === undefined || x === null || Number.isNaN(x) ? '' : String(x);
}

function maxComponents(samples: SampleResult[]): number {
  return samples.reduce((m, s) => Math.max(m, s.fit?.components.length ?? 0), 0);
}

function metadataColumns(samples: SampleResult[]): string[] {
  const cols: string[] = [];
  for (const s of samples) for (const k of Object.keys(s.metadata)) if (!cols.includes(k)) cols.push(k);
  return cols;
}

/**
 * results.csv: one row per sample, numbers at full precision (for spreadsheets and scripts; the
 * rounded, human table is summary.md). Component columns cover the largest model in the batch.
 */
export function formatResultsCsv(samples: SampleResult[]): string {
  const nc = maxComponents(samples);
  const meta = metadataColumns(samples);
  const header = ['sample', 'status', 'group', 'n_components'];
  for (let i = 1; i <= nc; i++) header.push(`tau${i}_ns`, `tau${i}_err_ns`, `f${i}`, `f${i}_err`, `a${i}`);
  header.push(
    'tau_amp_avg_ns',
    'tau_amp_avg_err_ns',
    'tau_int_avg_ns',
    'tau_int_avg_err_ns',
    'shift_ns',
    'background',
    'chi2_red',
    'deviance_per_dof',
    'durbin_watson',
    'global_chi2_red',
    'qy',
    'qy_err',
    'kr_per_s',
    'kr_err_per_s',
    'knr_per_s',
    'knr_err_per_s',
    'kr_sb_per_s',
    'kr_ratio',
    'kr_ratio_err',
    ...meta,
    'warnings',
    'error',
  );
  const lines = [header.map(csvQuote).join(',')];
  // A sample with fewer components leaves the rest of the component columns empty.
  const emptyComponent = ',,,,';
  for (const s of samples) {
    const row = csvRowOf(s);
    const cells = [row.lead];
    for (let i = 0; i < nc; i++) cells.push(row.components[i] ?? emptyComponent);
    cells.push(row.values);
    for (const k of meta) cells.push(csvQuote(s.metadata[k] ?? ''));
    cells.push(row.tail);
    lines.push(cells.join(','));
  }
  return lines.join('\n') + '\n';
}

/**
 * A sample's row of results.csv in the pieces that do not depend on the rest of the batch, quoted and
 * joined: lead (sample … n_components), one piece per component, the values from the average
 * lifetimes to the Strickler–Berg ratio, and the warnings and error; the metadata cells are added by
 * column. Kept per result, so that a batch can format each row as its sample arrives
 * (`prepareResultsCsvRow`) rather than all of them once the last one is in.
 */
interface CsvRowParts {
  lead: string;
  components: string[];
  values: string;
  tail: string;
}

/** `make(s)`, made once per result and kept with it. */
function keptFor<T>(kept: WeakMap<SampleResult, T>, s: SampleResult, make: (s: SampleResult) => T): T {
  let value = kept.get(s);
  if (value === undefined) {
    value = make(s);
    kept.set(s, value);
  }
  return value;
}

const csvRows = new WeakMap<SampleResult, CsvRowParts>();

function csvRowOf(s: SampleResult): CsvRowParts {
  return keptFor(csvRows, s, csvRowParts);
}

/** Formats a result's row of results.csv ahead of `formatResultsCsv` (same text either way). */
export function prepareResultsCsvRow(s: SampleResult): void {
  csvRowOf(s);
}

function csvRowParts(s: SampleResult): CsvRowParts {
  const f = s.fit;
  const joined = (cells: string[]) => cells.map(csvQuote).join(',');
  const components = (f?.components ?? []).map((c) =>
    joined([
      num(c.tauNs),
      num(c.tauErrNs),
      num(c.intensityFraction),
      num(c.intensityFractionErr),
      num(c.amplitude),
    ]),
  );
  return {
    lead: joined([s.sample, s.status, s.group ?? '', num(f?.nComponents)]),
    components,
    values: joined([
      num(f?.tauAmpAvgNs),
      num(f?.tauAmpAvgErrNs),
      num(f?.tauIntAvgNs),
      num(f?.tauIntAvgErrNs),
      num(f?.shiftNs),
      num(f?.background),
      num(f?.chi2Reduced),
      num(f?.deviancePerDof),
      num(f?.durbinWatson),
      num(s.global?.chi2Reduced),
      num(s.rates?.qy),
      num(s.rates?.qyErr),
      num(s.rates?.krPerS),
      num(s.rates?.krErrPerS),
      num(s.rates?.knrPerS),
      num(s.rates?.knrErrPerS),
      num(s.sb?.krSbPerS),
      num(s.sb?.krRatio),
      num(s.sb?.krRatioErr),
    ]),
    tail: joined([allWarnings(s).join('; '), s.error ?? '']),
  };
}

/** The sample's own warnings and those of its fit, rates and Strickler–Berg parts, without repeats. */
export function allWarnings(s: SampleResult): string[] {
  const out = [
    ...s.warnings,
    ...(s.fit?.warnings ?? []),
    ...(s.rates?.warnings ?? []),
    ...(s.sb?.warnings ?? []),
  ];
  return [...new Set(out)];
}

/** errors.log: one line per failed sample — sample id, manifest row, the error. Empty when none failed. */
export function formatErrorsLog(samples: SampleResult[]): string {
  const failed = samples.filter((s) => s.status === 'failed');
  return failed.map((s) => `${s.sample}\trow ${s.manifestRow ?? '?'}\t${s.error ?? 'failed'}\n`).join('');
}

function cell(value: number | undefined, err: number | undefined): string {
  if (value === undefined || !Number.isFinite(value)) return '–';
  return formatValueError(value, err);
}

function escapeMd(text: string): string {
  return text.replace(/\|/g, '\\|').replace(/\n/g, ' ');
}

/**
 * A fitted sample's row of summary.md in the pieces that do not depend on the rest of the batch
 * (which columns there are), each piece its cells joined: kept per result as for results.csv, so that
 * a batch rounds each row as its sample arrives (`prepareSummaryRow`).
 */
interface SummaryRowParts {
  sample: string;
  /** τᵢ and fᵢ of each component. */
  components: string[];
  /** Both average lifetimes and χ²red. */
  averages: string;
  global: string;
  /** Φ, k_r, k_nr. */
  rates: string;
  /** k_r,SB and k_r/k_r,SB. */
  sb: string;
}

const summaryRows = new WeakMap<SampleResult, SummaryRowParts>();

function summaryRowOf(s: SampleResult): SummaryRowParts {
  return keptFor(summaryRows, s, summaryRowParts);
}

/** Rounds a fitted result's row of summary.md ahead of `formatSummaryMarkdown` (same text either way). */
export function prepareSummaryRow(s: SampleResult): void {
  if (s.status === 'ok' && s.fit) summaryRowOf(s);
}

function summaryRowParts(s: SampleResult): SummaryRowParts {
  const f = s.fit!;
  const joined = (cells: string[]) => cells.join(' | ');
  return {
    sample: escapeMd(s.sample),
    components: f.components.map((c) =>
      joined([cell(c.tauNs, c.tauErrNs), cell(c.intensityFraction, c.intensityFractionErr)]),
    ),
    averages: joined([
      cell(f.tauAmpAvgNs, f.tauAmpAvgErrNs),
      cell(f.tauIntAvgNs, f.tauIntAvgErrNs),
      formatNumber(f.chi2Reduced, { digits: 3 }),
    ]),
    global: s.global ? formatNumber(s.global.chi2Reduced, { digits: 3 }) : '–',
    rates: joined([
      cell(s.rates?.qy, s.rates?.qyErr),
      cell(s.rates?.krPerS, s.rates?.krErrPerS),
      cell(s.rates?.knrPerS, s.rates?.knrErrPerS),
    ]),
    sb: joined([
      cell(s.sb?.krSbPerS, undefined),
      s.sb?.krRatio === undefined
        ? '–'
        : s.sb.krRatioErr
          ? cell(s.sb.krRatio, s.sb.krRatioErr)
          : formatNumber(s.sb.krRatio, { digits: 3 }),
    ]),
  };
}

/**
 * summary.md: a table ready to paste into a manuscript. Each value is rounded to its uncertainty
 * (shared/format.ts); units sit in the header. Failed samples follow in a list with their errors.
 */
export function formatSummaryMarkdown(
  samples: SampleResult[],
  series: SeriesResult[] = [],
  title = 'lumirate batch',
): string {
  const nc = maxComponents(samples);
  const ok = samples.filter((s) => s.status === 'ok');
  const hasRates = ok.some((s) => s.rates);
  const hasSb = ok.some((s) => s.sb);
  const hasGlobal = ok.some((s) => s.global);
  const head = ['Sample'];
  for (let i = 1; i <= nc; i++) head.push(`τ${sub(i)} (ns)`, `f${sub(i)}`);
  head.push('⟨τ⟩amp (ns)', '⟨τ⟩int (ns)', 'χ²red');
  if (hasGlobal) head.push('global χ²red');
  if (hasRates) head.push('Φ', 'k_r (s⁻¹)', 'k_nr (s⁻¹)');
  if (hasSb) head.push('k_r,SB (s⁻¹)', 'k_r/k_r,SB');
  const out: string[] = [`# ${title}`, ''];
  out.push(`${ok.length} of ${samples.length} samples fitted.`, '');
  out.push(`| ${head.join(' | ')} |`, `|${head.map((_, k) => (k === 0 ? ':---' : '---:')).join('|')}|`);
  // A sample with fewer components leaves the rest of the component columns empty.
  const emptyComponent = `${cell(undefined, undefined)} | ${cell(undefined, undefined)}`;
  for (const s of ok) {
    const cells = summaryRowOf(s);
    const row = [cells.sample];
    for (let i = 0; i < nc; i++) row.push(cells.components[i] ?? emptyComponent);
    row.push(cells.averages);
    if (hasGlobal) row.push(cells.global);
    if (hasRates) row.push(cells.rates);
    if (hasSb) row.push(cells.sb);
    out.push(`| ${row.join(' | ')} |`);
  }
  out.push('');
  if (ok.some((s) => s.fit && s.fit.nComponents > 1)) {
    out.push(
      'fᵢ: fraction of the steady-state intensity, aᵢτᵢ/Σaⱼτⱼ. ⟨τ⟩amp = Σaᵢτᵢ/Σaᵢ; ⟨τ⟩int = Σaᵢτᵢ²/Σaᵢτᵢ.',
      '',
    );
  }
  out.push('Uncertainties are one standard error; each value is rounded to its uncertainty.', '');
  for (const sr of series) {
    out.push(`## Series: ${sr.model} against ${sr.xName}`, '');
    out.push('| parameter | value |', '|:---|---:|');
    for (const [k, v] of Object.entries(sr.parameters)) {
      if (/Err/.test(k)) continue;
      const errKey = k.replace(/^([a-zA-Z0-9]+?)(Kj|Ev|Per|Ns|Nm|_)/, '$1Err$2');
      const err = errKey !== k ? sr.parameters[errKey] : undefined;
      out.push(`| ${escapeMd(k)} | ${SERIES_COUNT_PARAMETERS.has(k) ? String(v) : cell(v, err)} |`);
    }
    if (sr.chi2Reduced !== null)
      out.push(`| χ²red (${sr.dof} dof) | ${formatNumber(sr.chi2Reduced, { digits: 3 })} |`);
    out.push('');
    for (const w of sr.warnings) out.push(`- warning: ${escapeMd(w)}`);
    if (sr.warnings.length) out.push('');
  }
  const failed = samples.filter((s) => s.status === 'failed');
  if (failed.length) {
    out.push('## Failed samples', '');
    for (const s of failed) out.push(`- ${escapeMd(s.sample)}: ${escapeMd(s.error ?? 'failed')}`);
    out.push('');
  }
  return out.join('\n').trimEnd() + '\n';
}

function sub(i: number): string {
  return String.fromCharCode(0x2080 + i);
}
