/**
 * Writes histograms and spectra as the comma-separated text tables the importer reads: `# key: value`
 * metadata lines, one header line, then one row per channel or wavelength. Pure: returns the text,
 * the caller writes the file.
 *
 * ```
 * # sample: demo-A
 * # bin_width_ns: 0.0122
 * time_ns,counts
 * 0,12
 * 0.0122,9
 * ```
 */
import { InputError } from '../errors.js';

/** Significant digits of a time or spectral axis value: uniform to 1e-11 relative, far below the 1e-9 asked. */
const AXIS_DIGITS = 12;
/** Significant digits of a non-integer ordinate (ε, photons, mean counts). */
const VALUE_DIGITS = 10;

/** Shortest decimal of `v` to `digits` significant digits, without trailing zeros; integers as integers. */
export function formatTableNumber(v: number, digits: number): string {
  if (Number.isInteger(v) && Math.abs(v) < 1e21) return String(v);
  const s = String(Number(v.toPrecision(digits)));
  return s === '-0' ? '0' : s;
}

function checkName(what: string, name: string): void {
  if (name.length === 0 || /[,"\r\n#]/.test(name) || name.trim() !== name) {
    throw new InputError(
      `${what} '${name}' cannot be a column name: use a non-empty name without commas, quotes, '#' or line breaks`,
    );
  }
}

function metadataLines(metadata: Record<string, string>): string[] {
  return Object.entries(metadata).map(([key, value]) => {
    if (!/^[A-Za-z0-9_.\-]+$/.test(key)) {
      throw new InputError(`metadata key '${key}' must be letters, digits, '_', '.' or '-' only`);
    }
    if (/[\r\n]/.test(value)) throw new InputError(`metadata '${key}' has a line break in its value`);
    return `# ${key}: ${value.trim()}`;
  });
}

function checkFiniteColumn(name: string, values: Float64Array): void {
  for (let i = 0; i < values.length; i++) {
    if (!Number.isFinite(values[i])) {
      throw new InputError(
        `column '${name}' row ${i + 1} is ${values[i]}, which cannot be written as a number`,
      );
    }
  }
}

/**
 * A histogram table: `time_ns` (left edge of each channel) and one or more counts columns.
 * Integer counts are written as integers; times with 12 significant digits.
 */
export function formatHistogramTable(
  columns: { timeNs: Float64Array; series: { name: string; counts: Float64Array }[] },
  metadata: Record<string, string>,
): string {
  const { timeNs, series } = columns;
  if (series.length === 0) throw new InputError('a histogram table needs at least one counts column');
  const names = new Set<string>(['time_ns']);
  for (const s of series) {
    checkName('counts column', s.name);
    if (names.has(s.name)) throw new InputError(`column name '${s.name}' appears twice`);
    names.add(s.name);
    if (s.counts.length !== timeNs.length) {
      throw new InputError(
        `column '${s.name}' has ${s.counts.length} rows but the time axis has ${timeNs.length}`,
      );
    }
    checkFiniteColumn(s.name, s.counts);
  }
  checkFiniteColumn('time_ns', timeNs);
  const lines = metadataLines(metadata);
  lines.push(['time_ns', ...series.map((s) => s.name)].join(','));
  for (let i = 0; i < timeNs.length; i++) {
    let row = formatTableNumber(timeNs[i], AXIS_DIGITS);
    for (const s of series) row += ',' + formatTableNumber(s.counts[i], VALUE_DIGITS);
    lines.push(row);
  }
  return lines.join('\n') + '\n';
}

/**
 * A spectrum table: the axis column (`wavelength_nm` or `wavenumber_cm-1`) and one ordinate column
 * (`epsilon` in L mol⁻¹ cm⁻¹, `absorbance`, or `photons` per axis unit).
 */
export function formatSpectrumTable(
  axisName: 'wavelength_nm' | 'wavenumber_cm-1',
  x: Float64Array,
  yName: 'epsilon' | 'absorbance' | 'photons',
  y: Float64Array,
  metadata: Record<string, string>,
): string {
  if (x.length !== y.length)
    throw new InputError(`the axis has ${x.length} rows but '${yName}' has ${y.length}`);
  checkFiniteColumn(axisName, x);
  checkFiniteColumn(yName, y);
  const lines = metadataLines(metadata);
  lines.push(`${axisName},${yName}`);
  for (let i = 0; i < x.length; i++) {
    lines.push(`${formatTableNumber(x[i], AXIS_DIGITS)},${formatTableNumber(y[i], VALUE_DIGITS)}`);
  }
  return lines.join('\n') + '\n';
}
