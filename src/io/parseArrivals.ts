import { InputError } from '../errors.js';
import { NS_PER, type TimeUnit } from '../../shared/units.js';
import type { Histogram, ImportReport } from './types.js';
import { findColumn, parseColumnNumbers, readTextTable } from './textTable.js';
import { classifyTimeColumn, parseTimeUnit } from './columnNames.js';
import { formatNumber } from './validate.js';

export interface ArrivalsParseOptions {
  /** File name used in every message. */
  source: string;
  /** Channel width of the histogram to build, ns. Required. */
  binWidthNs: number;
  /**
   * Histogram range [start, end), ns; arrivals outside it are left out and counted in a warning.
   * Default: [0, the last arrival rounded up to a whole channel].
   */
  rangeNs?: [number, number];
  /** Unit of the arrival times. Default: from the header (`arrival_ps`, `time (ns)` …) or `# time_unit:`. */
  unit?: TimeUnit;
  /** The arrival column (name or 1-based index) when the file has several. */
  column?: string | number;
}

/** More channels than this is a mistaken bin width or range, not a histogram. */
export const MAX_ARRIVAL_CHANNELS = 1 << 24;

/**
 * Reads a photon arrival list (one arrival time per row, measured from the excitation pulse) and
 * histograms it: channel k holds the arrivals t with start + k·w ≤ t < start + (k+1)·w.
 */
export function parseArrivalsText(text: string, options: ArrivalsParseOptions): Histogram {
  const { source, binWidthNs } = options;
  if (!(Number.isFinite(binWidthNs) && binWidthNs > 0)) {
    throw new InputError(`histogramming arrivals needs a positive bin width; got ${binWidthNs} ns`, {
      file: source,
    });
  }
  if (options.rangeNs) {
    const [a, b] = options.rangeNs;
    if (!(Number.isFinite(a) && Number.isFinite(b) && b > a)) {
      throw new InputError(`the arrival range [${a}, ${b}) ns is empty or not finite`, { file: source });
    }
  }
  const table = readTextTable(text, source);
  const { columns } = table;

  let index = 0;
  if (options.column !== undefined) {
    index = findColumn(columns, options.column);
    if (index < 0) {
      throw new InputError(
        `has no column '${options.column}'; it has ${columns.map((c) => `'${c}'`).join(', ')}`,
        {
          file: source,
        },
      );
    }
  } else if (columns.length > 1) {
    const timeLike = columns
      .map((c, j) => ({ j, c: classifyTimeColumn(c) }))
      .filter((x) => x.c?.kind === 'time');
    if (timeLike.length !== 1) {
      throw new InputError(
        `has ${columns.length} columns; choose the arrival-time column (${columns.map((c, j) => `'${c}' (${j + 1})`).join(', ')})`,
        { file: source },
      );
    }
    index = timeLike[0].j;
  }

  let unit: TimeUnit | null = options.unit ?? null;
  let unitHow = 'given as an option';
  if (!unit && table.header) {
    const c = classifyTimeColumn(columns[index]);
    if (c?.kind === 'time') {
      unit = c.unit;
      unitHow = `from the column name '${columns[index]}'`;
    }
  }
  if (!unit && table.metadata.time_unit !== undefined) {
    unit = parseTimeUnit(table.metadata.time_unit);
    unitHow = "from '# time_unit'";
    if (!unit) {
      throw new InputError(
        `metadata 'time_unit: ${table.metadata.time_unit}' is not a time unit (fs, ps, ns, us, ms, s)`,
        {
          file: source,
          line: table.metadataLines.time_unit,
        },
      );
    }
  }
  if (!unit) {
    throw new InputError(
      `the unit of the arrival times is unknown; name the column like arrival_ps or time_ns, add '# time_unit: ps', or give the unit`,
      { file: source, line: table.headerLine ?? table.rows[0].line, column: index + 1 },
    );
  }

  const scale = NS_PER[unit];
  const arrivals = parseColumnNumbers(table, index, 'an arrival time');
  let maxNs = -Infinity;
  for (let i = 0; i < arrivals.length; i++) {
    const v = (arrivals[i] *= scale);
    if (!options.rangeNs && v < 0) {
      throw new InputError(
        `arrival time ${table.rows[i].cells[index].trim()} is negative; give a range that includes it or correct the file`,
        { file: source, line: table.rows[i].line, column: index + 1 },
      );
    }
    if (v > maxNs) maxNs = v;
  }

  const [start, end] = options.rangeNs ?? [0, (Math.floor(maxNs / binWidthNs) + 1) * binWidthNs];
  // The guard keeps a range of exactly k channels from coming out as k − 1 after rounding.
  const nChannels = Math.floor((end - start) / binWidthNs + 1e-9);
  if (nChannels > MAX_ARRIVAL_CHANNELS) {
    throw new InputError(
      `${formatNumber(end - start)} ns at ${formatNumber(binWidthNs)} ns per channel makes ${nChannels} channels, more than ${MAX_ARRIVAL_CHANNELS}; choose a wider bin or a shorter range`,
      { file: source },
    );
  }
  if (nChannels < 2) {
    throw new InputError(
      `the range [${start}, ${end}) ns holds fewer than two ${formatNumber(binWidthNs)} ns channels`,
      { file: source },
    );
  }
  const counts = new Float64Array(nChannels);
  let outside = 0;
  for (const t of arrivals) {
    const k = Math.floor((t - start) / binWidthNs);
    if (k >= 0 && k < nChannels) counts[k]++;
    else outside++;
  }
  const timeNs = new Float64Array(nChannels);
  for (let k = 0; k < nChannels; k++) timeNs[k] = start + k * binWidthNs;
  const warnings = [...table.warnings];
  if (outside > 0) {
    warnings.push(
      `${outside} of ${arrivals.length} arrivals fall outside [${formatNumber(start)}, ${formatNumber(end)}) ns and were left out`,
    );
  }
  const report: ImportReport = {
    delimiter: table.delimiter,
    decimalMark: table.decimalMark,
    hasHeader: table.header !== null,
    columns: [...columns],
    timeColumn: columns[index],
    timeUnit: unit,
    binWidthSource: `chosen for histogramming; arrival times in ${unit}, ${unitHow}`,
    countsColumn: `${arrivals.length} arrivals in '${columns[index]}'`,
    layout: 'arrivals',
  };
  return { timeNs, counts, binWidthNs, metadata: { ...table.metadata }, source, warnings, report };
}
