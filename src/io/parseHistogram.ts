import { InputError } from '../errors.js';
import { NS_PER, type TimeUnit } from '../../shared/units.js';
import type { Histogram, ImportReport } from './types.js';
import { cellNumber, findColumn, parseColumnNumbers, readTextTable, type TextTable } from './textTable.js';
import { classifyTimeColumn, parseTimeUnit } from './columnNames.js';
import { findMetadataBinWidth } from './metadata.js';
import { checkCounts, formatNumber, relativeDiffers } from './validate.js';

export interface HistogramParseOptions {
  /** File name (or `file#column`) used in every message. */
  source: string;
  /**
   * The counts column: a header name (case-insensitive), or a 1-based column index as an editor
   * counts them (the time column included). A string of digits that is not a header name is read as
   * an index. Default: the only counts column; with several, an error lists them.
   */
  column?: string | number;
  /**
   * Channel width, ns. Needed when the file has no time column and no bin-width metadata. When the
   * file has a time axis, it must agree with it within 0.1 %.
   */
  binWidthNs?: number;
  /**
   * Unit of the first column of a table without a header (`'channel'` for channel indices). Default:
   * the `# time_unit:` metadata, else inferred by matching the column's step to a known bin width.
   */
  timeUnit?: TimeUnit | 'channel';
}

/** Relative tolerance for a uniform time axis and for agreeing bin widths. */
export const AXIS_TOLERANCE = 1e-3;

type TimeSpec = { index: number; unit: TimeUnit | 'channel'; how: string } | null;

/**
 * Reads a photon-counting histogram from a text table (see FORMATS.md for every layout). The time
 * axis is stored as the left edge of each channel: values in a time column are taken as channel
 * starts, and a `channel` column means index × bin width. Everything is converted to ns. The axis
 * must be strictly increasing and uniform within 0.1 % of its median step (or within the precision
 * the values are printed with); it is then stored exactly uniform, t₀ + i·Δt with Δt from its span.
 */
export function parseHistogramText(text: string, options: HistogramParseOptions): Histogram {
  const { source } = options;
  if (options.binWidthNs !== undefined && !(Number.isFinite(options.binWidthNs) && options.binWidthNs > 0)) {
    throw new InputError(`the bin width given, ${options.binWidthNs} ns, is not a positive number`, {
      file: source,
    });
  }
  return histogramFromTable(readTextTable(text, source), options);
}

// The axes are filled in functions of their own so that `histogramFromTable`, which runs once per
// file and mostly calls others, has no loop over the channels: the engine then leaves it unoptimised
// rather than compiling it, and all it inlines, for every worker thread of a batch.

/** t_i = start + i·step, i < n. */
function stepAxis(n: number, startNs: number, stepNs: number): Float64Array {
  const t = new Float64Array(n);
  for (let i = 0; i < n; i++) t[i] = startNs + i * stepNs;
  return t;
}

/** t_i = (first + i)·width, i < n: channel indices from `first` on. */
function channelAxis(n: number, first: number, widthNs: number): Float64Array {
  const t = new Float64Array(n);
  for (let i = 0; i < n; i++) t[i] = (first + i) * widthNs;
  return t;
}

/**
 * The histogram in a table already read by `readTextTable` (or by its general reader alone): the
 * whole of `parseHistogramText` after the split, with the same checks and messages.
 */
export function histogramFromTable(table: TextTable, options: HistogramParseOptions): Histogram {
  const { source } = options;
  const ctx = { source, lines: table.metadataLines };
  const metaBin = findMetadataBinWidth(table.metadata, ctx);
  const metaBinNs = metaBin?.ns;
  const warnings = [...table.warnings];

  const time = findTimeColumn(table, options, metaBinNs);
  const countsIndex = chooseCountsColumn(table, options.column, time?.index ?? -1);
  const countsName = table.columns[countsIndex];
  if (table.rowCount < 2) {
    throw new InputError('has only one data row; a histogram needs at least two channels', {
      file: source,
      line: table.rows[0].line,
    });
  }

  const counts = parseColumnNumbers(table, countsIndex, 'a count');
  warnings.push(...checkCounts(counts, table, countsIndex));

  let binWidthNs: number;
  let binWidthSource: string;
  let timeNs: Float64Array;
  let timeColumn: string | null = null;
  let timeUnit: string | null = null;
  const n = counts.length;

  if (time && time.unit !== 'channel') {
    timeColumn = table.columns[time.index];
    timeUnit = time.unit;
    const axis = readUniformAxis(table, time.index, NS_PER[time.unit]);
    binWidthNs = axis.stepNs;
    binWidthSource = `time column '${timeColumn}' (${time.how})`;
    for (const [given, what, line] of [
      [metaBinNs, 'the bin-width metadata', metaBin ? table.metadataLines[metaBin.key] : undefined],
      [options.binWidthNs, 'the bin width given', undefined],
    ] as const) {
      if (given !== undefined && relativeDiffers(given, binWidthNs, AXIS_TOLERANCE)) {
        throw new InputError(
          `${what} (${formatNumber(given)} ns) disagrees with the time axis step (${formatNumber(binWidthNs)} ns) by more than 0.1 %; correct one of them`,
          { file: source, line },
        );
      }
    }
    timeNs = stepAxis(n, axis.startNs, binWidthNs);
  } else {
    const bw = chooseBinWidth(options.binWidthNs, metaBinNs, source, warnings);
    if (!bw) {
      throw new InputError(
        `has no time column and no bin width: add a time column (time_ns, time_ps …), a '# bin_width_ns: …' line, or give the bin width`,
        { file: source },
      );
    }
    binWidthNs = bw.ns;
    binWidthSource = bw.how;
    if (time) {
      timeColumn = table.columns[time.index];
      timeUnit = 'channel';
      timeNs = channelAxis(n, readChannelIndices(table, time.index), binWidthNs);
    } else timeNs = channelAxis(n, 0, binWidthNs);
  }

  assertRepresentableAxis(timeNs, binWidthNs, source);

  const countsColumns = table.columns.length - (time ? 1 : 0);
  const report: ImportReport = {
    delimiter: table.delimiter,
    decimalMark: table.decimalMark,
    hasHeader: table.header !== null,
    columns: table.columns,
    timeColumn,
    timeUnit,
    binWidthSource,
    countsColumn: countsName,
    layout: time ? 'table' : 'counts',
  };
  return {
    timeNs,
    counts,
    binWidthNs,
    metadata: { ...table.metadata },
    source: countsColumns > 1 ? `${source}#${countsName}` : source,
    warnings,
    report,
  };
}

function chooseBinWidth(
  optionNs: number | undefined,
  metaNs: number | undefined,
  source: string,
  warnings: string[],
): { ns: number; how: string } | null {
  if (optionNs !== undefined) {
    if (metaNs !== undefined && relativeDiffers(optionNs, metaNs, AXIS_TOLERANCE)) {
      warnings.push(
        `the bin width given (${formatNumber(optionNs)} ns) overrides the file's metadata (${formatNumber(metaNs)} ns)`,
      );
    }
    return { ns: optionNs, how: 'given as an option' };
  }
  if (metaNs !== undefined) return { ns: metaNs, how: `metadata of ${source}` };
  return null;
}

/** Finds the time or channel column, or decides there is none. */
function findTimeColumn(
  table: TextTable,
  options: HistogramParseOptions,
  knownBinNs: number | undefined,
): TimeSpec {
  const { source } = options;
  if (table.header) {
    const found: { index: number; unit: TimeUnit | 'channel' }[] = [];
    table.columns.forEach((name, j) => {
      const c = classifyTimeColumn(name);
      if (!c) return;
      if (c.kind === 'time-without-unit') {
        throw new InputError(
          `column '${name}' looks like a time axis but ${c.unitText ? `'${c.unitText}' is not a time unit` : 'names no unit'}; name it like time_ns, time_ps, 'time (ns)' or channel`,
          { file: source, line: table.headerLine!, column: j + 1 },
        );
      }
      found.push({ index: j, unit: c.kind === 'channel' ? 'channel' : c.unit });
    });
    if (found.length > 1) {
      throw new InputError(
        `has more than one time column (${found.map((f) => `'${table.columns[f.index]}'`).join(', ')}); keep one`,
        { file: source, line: table.headerLine!, column: found[1].index + 1 },
      );
    }
    if (found.length === 1 && table.columns.length === 1) {
      throw new InputError(
        `has only the time column '${table.columns[0]}' and no counts: if it lists photon arrival times, read it as an arrival list`,
        { file: source, line: table.headerLine! },
      );
    }
    return found.length ? { ...found[0], how: `unit ${found[0].unit} from its name` } : null;
  }
  if (table.columns.length === 1) return null;

  // No header, several columns: the first is the time axis, in a unit we are told or can match.
  const given = options.timeUnit;
  if (given) return { index: 0, unit: given, how: `unit ${given} given as an option` };
  if (table.metadata.time_unit !== undefined) {
    const raw = table.metadata.time_unit.trim().toLowerCase();
    const unit = raw === 'channel' ? 'channel' : parseTimeUnit(raw);
    if (!unit) {
      throw new InputError(
        `metadata 'time_unit: ${table.metadata.time_unit}' is not a time unit (fs, ps, ns, us, ms, s or channel)`,
        {
          file: source,
          line: table.metadataLines.time_unit,
        },
      );
    }
    return { index: 0, unit, how: `unit ${unit} from '# time_unit'` };
  }
  const binNs = options.binWidthNs ?? knownBinNs;
  if (binNs !== undefined && table.rowCount >= 2) {
    const a = cellNumber(table, 0, 0);
    const b = cellNumber(table, 1, 0);
    const step = b - a;
    if (step === 1 && Number.isInteger(a))
      return { index: 0, unit: 'channel', how: 'channel indices (step 1)' };
    for (const unit of ['ns', 'ps', 'us', 'fs'] as const) {
      if (!relativeDiffers(step * NS_PER[unit], binNs, 0.01)) {
        return {
          index: 0,
          unit,
          how: `unit ${unit} inferred: its step matches the bin width ${formatNumber(binNs)} ns`,
        };
      }
    }
  }
  throw new InputError(
    `has ${table.columns.length} columns and no header, so the unit of the first (time) column is unknown; add a header such as time_ns,counts or a '# time_unit: ns' line`,
    { file: source, line: table.rows[0].line, column: 1 },
  );
}

/**
 * The counts columns of a histogram table, in file order, without reading the counts: for listing
 * the decays of a multi-decay file. Throws the same InputErrors as `parseHistogramText` for a file
 * whose layout cannot be read.
 */
export function histogramCountsColumns(
  text: string,
  options: Omit<HistogramParseOptions, 'column'>,
): string[] {
  const table = readTextTable(text, options.source);
  const metaBin = findMetadataBinWidth(table.metadata, {
    source: options.source,
    lines: table.metadataLines,
  });
  const time = findTimeColumn(table, options, metaBin?.ns);
  return table.columns.filter((_, j) => j !== time?.index);
}

function chooseCountsColumn(
  table: TextTable,
  column: string | number | undefined,
  timeIndex: number,
): number {
  const { source, columns } = table;
  // Choice errors point at the header, where the names are.
  const at = { file: source, line: table.headerLine ?? undefined };
  const choices = columns
    .map((name, j) => ({ name, j }))
    .filter(({ j }) => j !== timeIndex)
    .map(({ name, j }) => `'${name}' (${j + 1})`)
    .join(', ');
  if (choices === '')
    throw new InputError('has no counts column', { file: source, line: table.headerLine ?? undefined });
  if (column === undefined) {
    if (columns.length - (timeIndex >= 0 ? 1 : 0) === 1) return timeIndex === 0 ? 1 : 0;
    throw new InputError(`has several counts columns; choose one of ${choices}`, at);
  }
  const index = findColumn(columns, column);
  if (index < 0) {
    const what = typeof column === 'number' ? `${column} (it has ${columns.length})` : `'${column}'`;
    throw new InputError(`has no column ${what}; choose one of ${choices}`, at);
  }
  if (index === timeIndex) {
    throw new InputError(`column ${column} is the time axis, not counts; choose one of ${choices}`, at);
  }
  return index;
}

/**
 * The last guard on the promise of a Histogram: a finite, strictly increasing axis. Times so large
 * that the step vanishes in their rounding, or that overflow on conversion to ns, end here.
 */
function assertRepresentableAxis(timeNs: Float64Array, binWidthNs: number, source: string): void {
  let ok = Number.isFinite(binWidthNs) && binWidthNs > 0;
  for (let i = 0; ok && i < timeNs.length; i++) {
    ok = Number.isFinite(timeNs[i]) && (i === 0 || timeNs[i] > timeNs[i - 1]);
  }
  if (!ok) {
    throw new InputError(
      `its time axis (start ${formatNumber(timeNs[0])} ns, step ${formatNumber(binWidthNs)} ns) cannot be represented: the times are too large for their step`,
      { file: source },
    );
  }
}

/** Printed precision of a number cell: one unit in its last written digit. */
function printedUlp(cell: string): number {
  const m = /^[+-]?(\d*)(?:[.,](\d*))?(?:[eE]([+-]?\d+))?$/.exec(cell.trim());
  if (!m) return 0;
  const decimals = m[2]?.length ?? 0;
  const exponent = m[3] ? Number(m[3]) : 0;
  return 10 ** (exponent - decimals);
}

/**
 * Reads a time column, checks it is strictly increasing and uniform, and returns its start and step
 * in ns. A step may differ from the median by 0.1 %, or by the rounding of the printed values (a
 * column written to 4 decimals cannot be more uniform than ±1e-4) up to 10 % of the step, whichever
 * is larger: a missing channel (a step twice the median) is always caught.
 */
function readUniformAxis(
  table: TextTable,
  index: number,
  nsPerUnit: number,
): { startNs: number; stepNs: number } {
  const { source } = table;
  const n = table.rowCount;
  const t = parseColumnNumbers(table, index, 'a time');
  let minStep = Infinity;
  let maxStep = 0;
  for (let i = 1; i < n; i++) {
    const step = t[i] - t[i - 1];
    if (step < minStep) minStep = step;
    if (step > maxStep) maxStep = step;
    if (!(t[i] > t[i - 1])) {
      // Rows are asked for only here and below: a table read by the fast path makes them on demand.
      const rows = table.rows;
      throw new InputError(
        `time ${rows[i].cells[index].trim()} does not increase after ${rows[i - 1].cells[index].trim()} on line ${rows[i - 1].line}; the time axis must be strictly increasing`,
        { file: source, line: rows[i].line, column: index + 1 },
      );
    }
  }
  const stepNs = ((t[n - 1] - t[0]) / (n - 1)) * nsPerUnit;
  // When the widest and narrowest steps are within 0.1 % of the narrowest, every step is within
  // 0.1 % of the median (which lies between them), and the median need not be found.
  if (maxStep - minStep <= AXIS_TOLERANCE * minStep) return { startNs: t[0] * nsPerUnit, stepNs };
  const steps = new Float64Array(n - 1);
  for (let i = 1; i < n; i++) steps[i - 1] = t[i] - t[i - 1];
  const median = kthSmallest(steps, (n - 2) >> 1);
  const relTol = AXIS_TOLERANCE * median;
  for (let i = 1; i < n; i++) {
    const off = Math.abs(t[i] - t[i - 1] - median);
    if (off <= relTol) continue;
    // Only a step outside 0.1 % needs the printed precision of its two cells.
    const rows = table.rows;
    const rounding = (printedUlp(rows[i].cells[index]) + printedUlp(rows[i - 1].cells[index])) / 2;
    if (off > Math.min(rounding * 1.000001, 0.1 * median)) {
      throw new InputError(
        `the time step here is ${formatNumber(t[i] - t[i - 1])} but the axis step is ${formatNumber(median)}: the time axis must be uniform within 0.1 % (gaps and merged files are not supported)`,
        { file: source, line: rows[i].line, column: index + 1 },
      );
    }
  }
  return { startNs: t[0] * nsPerUnit, stepNs };
}

/**
 * The k-th smallest value (0-based) of `values`, which it reorders: Hoare's selection, linear on
 * average, where a full sort of a 4096-step axis cost more than the rest of its checks together.
 */
export function kthSmallest(values: Float64Array, k: number): number {
  let lo = 0;
  let hi = values.length - 1;
  while (lo < hi) {
    const pivot = values[(lo + hi) >> 1];
    let i = lo;
    let j = hi;
    while (i <= j) {
      while (values[i] < pivot) i++;
      while (values[j] > pivot) j--;
      if (i <= j) {
        const t = values[i];
        values[i] = values[j];
        values[j] = t;
        i++;
        j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else return values[k];
  }
  return values[k];
}

/** Channel indices must be consecutive integers; returns the first. */
function readChannelIndices(table: TextTable, index: number): number {
  const v = parseColumnNumbers(table, index, 'a channel index');
  const first = v[0];
  for (let i = 0; i < v.length; i++) {
    if (Number.isInteger(v[i]) && v[i] === first + i) continue;
    const row = table.rows[i];
    const where = { file: table.source, line: row.line, column: index + 1 };
    if (!Number.isInteger(v[i])) {
      throw new InputError(`channel index ${row.cells[index].trim()} is not a whole number`, where);
    }
    throw new InputError(
      `channel ${v[i]} follows channel ${first + i - 1}; channels must be consecutive`,
      where,
    );
  }
  return first;
}
