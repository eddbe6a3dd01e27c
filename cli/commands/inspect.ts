import type { Command } from 'commander';
import { InputError } from '../../src/errors.js';
import { summariseMetadata } from '../../src/io/metadata.js';
import { parseTimeUnit } from '../../src/io/columnNames.js';
import type { Histogram, Spectrum, SpectrumAxis } from '../../src/io/types.js';
import type { TimeUnit } from '../../shared/units.js';
import { formatNumber } from '../../src/io/validate.js';
import { readAllHistograms, readArrivalsFile, readSpectrumFile } from '../readInput.js';
import { action } from '../run.js';

interface InspectOptions {
  column?: string;
  binWidthNs?: string;
  timeUnit?: string;
  arrivals?: boolean;
  arrivalUnit?: string;
  rangeNs?: string;
  spectrum?: string;
  axis?: string;
  concentrationM?: string;
  pathLengthCm?: string;
  json?: boolean;
}

/** What `inspect --json` prints for a histogram. */
export interface HistogramInspection {
  source: string;
  layout: string;
  delimiter: string | null;
  decimalMark: string | null;
  hasHeader: boolean | null;
  columns: string[];
  timeColumn: string | null;
  timeUnit: string | null;
  countsColumn: string | null;
  binWidthSource: string | null;
  channels: number;
  binWidthNs: number;
  startNs: number;
  endNs: number;
  totalCounts: number;
  peakCounts: number;
  peakChannel: number;
  peakTimeNs: number;
  periodNs: number | null;
  sample: string | null;
  countRatePerS: number | null;
  /** Detector count rate × period: the share of excitation pulses that yield a count. */
  detectionsPerPulse: number | null;
  excitationNm: number | null;
  emissionNm: number | null;
  metadata: Record<string, string>;
  warnings: string[];
}

/**
 * Above this share of pulses with a detection, pile-up distorts a TCSPC histogram noticeably
 * (common practice: keep it below 1–5 %).
 */
const PILE_UP_SHARE = 0.05;

/** What `inspect --spectrum … --json` prints. */
export interface SpectrumInspection {
  source: string;
  kind: string;
  axis: SpectrumAxis;
  points: number;
  min: number;
  max: number;
  peakAt: number;
  peakValue: number;
  emissionOrdinate: string | null;
  delimiter: string | null;
  decimalMark: string | null;
  hasHeader: boolean | null;
  columns: string[];
  axisColumn: string | null;
  axisSource: string | null;
  ordinateColumn: string | null;
  ordinate: string | null;
  metadata: Record<string, string>;
  warnings: string[];
}

function positiveOption(text: string | undefined, flag: string): number | undefined {
  if (text === undefined) return undefined;
  const t = text.trim();
  const v = Number(t);
  if (t === '' || !/^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(t) || !(v > 0) || !Number.isFinite(v)) {
    throw new InputError(`${flag} '${text}' must be a positive number`);
  }
  return v;
}

function timeUnitOption(
  text: string | undefined,
  flag: string,
  allowChannel: boolean,
): TimeUnit | 'channel' | undefined {
  if (text === undefined) return undefined;
  if (allowChannel && text.trim().toLowerCase() === 'channel') return 'channel';
  const u = parseTimeUnit(text);
  if (!u)
    throw new InputError(
      `${flag} '${text}' must be one of fs, ps, ns, us, ms, s${allowChannel ? ', channel' : ''}`,
    );
  return u;
}

/** `--range-ns 0:50` (also `0,50`). */
function rangeOption(text: string | undefined): [number, number] | undefined {
  if (text === undefined) return undefined;
  const m = /^\s*([^:,]+)\s*[:,]\s*([^:,]+)\s*$/.exec(text);
  const a = m ? Number(m[1]) : NaN;
  const b = m ? Number(m[2]) : NaN;
  if (!m || !Number.isFinite(a) || !Number.isFinite(b) || !(b > a)) {
    throw new InputError(`--range-ns '${text}' must be START:END in ns with END > START, for example 0:50`);
  }
  return [a, b];
}

export function inspectHistogram(h: Histogram): HistogramInspection {
  let total = 0;
  let peak = -Infinity;
  let peakChannel = 0;
  for (let i = 0; i < h.counts.length; i++) {
    total += h.counts[i];
    if (h.counts[i] > peak) {
      peak = h.counts[i];
      peakChannel = i;
    }
  }
  const r = h.report;
  const n = h.counts.length;
  const meta = summariseMetadata(h.metadata, { source: h.source });
  const detectionsPerPulse =
    meta.countRatePerS !== null && meta.periodNs !== null ? meta.countRatePerS * meta.periodNs * 1e-9 : null;
  const warnings = [...h.warnings];
  if (detectionsPerPulse !== null && detectionsPerPulse > PILE_UP_SHARE) {
    warnings.push(
      `the detector count rate is ${(100 * detectionsPerPulse).toPrecision(2)} % of the excitation rate; above 1–5 % pile-up shortens the apparent lifetime`,
    );
  }
  return {
    source: h.source,
    layout: r?.layout ?? 'in memory',
    delimiter: r?.delimiter ?? null,
    decimalMark: r?.decimalMark ?? null,
    hasHeader: r?.hasHeader ?? null,
    columns: r?.columns ?? [],
    timeColumn: r?.timeColumn ?? null,
    timeUnit: r?.timeUnit ?? null,
    countsColumn: r?.countsColumn ?? null,
    binWidthSource: r?.binWidthSource ?? null,
    channels: n,
    binWidthNs: h.binWidthNs,
    startNs: h.timeNs[0],
    endNs: h.timeNs[n - 1] + h.binWidthNs,
    totalCounts: total,
    peakCounts: peak,
    peakChannel,
    peakTimeNs: h.timeNs[peakChannel],
    periodNs: meta.periodNs,
    sample: meta.sample,
    countRatePerS: meta.countRatePerS,
    detectionsPerPulse,
    excitationNm: meta.excitationNm,
    emissionNm: meta.emissionNm,
    metadata: h.metadata,
    warnings,
  };
}

export function inspectSpectrum(s: Spectrum): SpectrumInspection {
  let peakIndex = 0;
  for (let i = 1; i < s.y.length; i++) if (s.y[i] > s.y[peakIndex]) peakIndex = i;
  const r = s.report;
  return {
    source: s.source,
    kind: s.kind,
    axis: s.axis,
    points: s.x.length,
    min: s.x[0],
    max: s.x[s.x.length - 1],
    peakAt: s.x[peakIndex],
    peakValue: s.y[peakIndex],
    emissionOrdinate: s.emissionOrdinate ?? null,
    delimiter: r?.delimiter ?? null,
    decimalMark: r?.decimalMark ?? null,
    hasHeader: r?.hasHeader ?? null,
    columns: r?.columns ?? [],
    axisColumn: r?.axisColumn ?? null,
    axisSource: r?.axisSource ?? null,
    ordinateColumn: r?.ordinateColumn ?? null,
    ordinate: r?.ordinate ?? null,
    metadata: s.metadata,
    warnings: s.warnings,
  };
}

const DELIMITER_WORDS: Record<string, string> = {
  comma: 'comma-separated',
  tab: 'tab-separated',
  semicolon: 'semicolon-separated',
  whitespace: 'whitespace-separated',
  'single column': 'one column',
};

function lines(rows: [string, string | string[]][]): string {
  const out: string[] = [];
  for (const [label, value] of rows) {
    const values = Array.isArray(value) ? (value.length ? value : ['none']) : [value];
    values.forEach((v, i) => out.push(`  ${(i === 0 ? label : '').padEnd(11)} ${v}`));
  }
  return out.join('\n');
}

function metadataLines(meta: Record<string, string>): string[] {
  return Object.entries(meta).map(([k, v]) => `${k}: ${v}`);
}

export function describeHistogram(i: HistogramInspection): string {
  const fmt = formatNumber;
  const layout =
    i.layout === 'arrivals'
      ? `photon arrival list (${i.countsColumn}, unit ${i.timeUnit})`
      : i.timeColumn
        ? `table: time column '${i.timeColumn}' (${i.timeUnit}), counts column '${i.countsColumn}'`
        : `counts only: column '${i.countsColumn}'`;
  return [
    `${i.source}${i.sample ? ` (sample ${i.sample})` : ''}`,
    lines([
      ['layout', layout],
      [
        'read as',
        `${DELIMITER_WORDS[i.delimiter ?? ''] ?? i.delimiter}, decimal mark '${i.decimalMark}', ${i.hasHeader ? `header: ${i.columns.join(', ')}` : `no header (${i.columns.join(', ')})`}`,
      ],
      ['bin width', `${fmt(i.binWidthNs)} ns (${i.binWidthSource})`],
      ['channels', `${i.channels}, ${fmt(i.startNs)} to ${fmt(i.endNs)} ns`],
      [
        'counts',
        `total ${fmt(i.totalCounts)}, peak ${fmt(i.peakCounts)} in channel ${i.peakChannel} at ${fmt(i.peakTimeNs)} ns`,
      ],
      ['period', i.periodNs === null ? 'not given' : `${fmt(i.periodNs)} ns (from metadata)`],
      [
        'count rate',
        i.countRatePerS === null
          ? 'not given'
          : `${fmt(i.countRatePerS)} /s${i.detectionsPerPulse === null ? '' : `, ${fmt(100 * i.detectionsPerPulse)} % of pulses`}`,
      ],
      ['metadata', metadataLines(i.metadata)],
      ['warnings', i.warnings],
    ]),
  ].join('\n');
}

export function describeSpectrum(i: SpectrumInspection): string {
  const fmt = formatNumber;
  const unit = i.axis === 'nm' ? 'nm' : 'cm⁻¹';
  return [
    `${i.source}`,
    lines([
      ['spectrum', `${i.kind}, axis '${i.axisColumn}' in ${unit} (${i.axisSource})`],
      ['ordinate', `'${i.ordinateColumn}': ${i.ordinate}`],
      [
        'read as',
        `${DELIMITER_WORDS[i.delimiter ?? ''] ?? i.delimiter}, decimal mark '${i.decimalMark}', ${i.hasHeader ? `header: ${i.columns.join(', ')}` : 'no header'}`,
      ],
      ['points', `${i.points}, ${fmt(i.min)} to ${fmt(i.max)} ${unit}`],
      ['peak', `${fmt(i.peakValue)} at ${fmt(i.peakAt)} ${unit}`],
      ['metadata', metadataLines(i.metadata)],
      ['warnings', i.warnings],
    ]),
  ].join('\n');
}

/** `lumirate inspect FILE`: what the importer sees in a file, before anything is fitted. */
export function register(program: Command): void {
  program
    .command('inspect')
    .description(
      'Show how a histogram, photon arrival list or spectrum file is read: layout, separator, units, bin width, channels, counts, metadata and warnings.',
    )
    .argument('<file>', 'a text table; FILE#COLUMN picks one decay from a file that holds several')
    .option('--column <name|index>', 'counts (or ordinate) column by header name or 1-based index')
    .option('--bin-width-ns <ns>', 'channel width when the file has no time column and no bin-width metadata')
    .option(
      '--time-unit <unit>',
      'unit of the first column of a table without a header (fs, ps, ns, us, ms, s or channel)',
    )
    .option(
      '--arrivals',
      'the file lists photon arrival times, one per row: histogram them (needs --bin-width-ns)',
    )
    .option(
      '--arrival-unit <unit>',
      'unit of the arrival times when the header does not say (fs, ps, ns, us, ms, s)',
    )
    .option('--range-ns <start:end>', 'histogram range for arrivals, ns (default: 0 to the last arrival)')
    .option('--spectrum <kind>', 'read a spectrum instead: absorption or emission')
    .option('--axis <axis>', 'spectral axis when the header does not say: nm or cm-1')
    .option('--concentration-m <M>', 'concentration for an absorbance spectrum, mol/L')
    .option('--path-length-cm <cm>', 'path length for an absorbance spectrum, cm')
    .option(
      '--json',
      'print the inspection as JSON on stdout (an array, one entry per decay, for a file of several decays)',
    )
    .action(
      action((file: string, opts: InspectOptions) => {
        const binWidthNs = positiveOption(opts.binWidthNs, '--bin-width-ns');
        let text: string;
        let warnings: string[];
        let json: unknown;
        if (opts.spectrum !== undefined) {
          if (opts.spectrum !== 'absorption' && opts.spectrum !== 'emission') {
            throw new InputError(`--spectrum '${opts.spectrum}' must be absorption or emission`);
          }
          if (opts.axis !== undefined && opts.axis !== 'nm' && opts.axis !== 'cm-1') {
            throw new InputError(`--axis '${opts.axis}' must be nm or cm-1`);
          }
          const s = readSpectrumFile(file, {
            kind: opts.spectrum,
            axis: opts.axis as SpectrumAxis | undefined,
            concentrationM: positiveOption(opts.concentrationM, '--concentration-m'),
            pathLengthCm: positiveOption(opts.pathLengthCm, '--path-length-cm'),
            column: opts.column,
          });
          const i = inspectSpectrum(s);
          json = i;
          text = describeSpectrum(i);
          warnings = i.warnings;
        } else {
          let hs: Histogram[];
          if (opts.arrivals) {
            if (binWidthNs === undefined)
              throw new InputError('--arrivals needs --bin-width-ns to histogram the arrival times');
            hs = [
              readArrivalsFile(file, {
                binWidthNs,
                rangeNs: rangeOption(opts.rangeNs),
                unit: timeUnitOption(opts.arrivalUnit, '--arrival-unit', false) as TimeUnit | undefined,
                column: opts.column,
              }),
            ];
          } else {
            for (const [flag, v] of [
              ['--arrival-unit', opts.arrivalUnit],
              ['--range-ns', opts.rangeNs],
            ] as const) {
              if (v !== undefined) throw new InputError(`${flag} applies only with --arrivals`);
            }
            // A file of several decays is shown decay by decay unless one is chosen.
            hs = readAllHistograms(file, {
              column: opts.column,
              binWidthNs,
              timeUnit: timeUnitOption(opts.timeUnit, '--time-unit', true),
            });
          }
          const inspections = hs.map(inspectHistogram);
          json = inspections.length === 1 ? inspections[0] : inspections;
          text = inspections.map(describeHistogram).join('\n\n');
          warnings = inspections.flatMap((i) =>
            inspections.length === 1 ? i.warnings : i.warnings.map((w) => `${i.source}: ${w}`),
          );
        }
        if (opts.json) {
          process.stdout.write(`${JSON.stringify(json, null, 2)}\n`);
          for (const w of warnings) process.stderr.write(`warning: ${w}\n`);
        } else {
          process.stdout.write(`${text}\n`);
        }
      }),
    );
}
