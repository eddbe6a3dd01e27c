import { InputError } from '../errors.js';
import type { Spectrum, SpectrumAxis, SpectrumImportReport } from './types.js';
import { cellNumber, findColumn, readTextTable, type TextTable } from './textTable.js';
import { splitNameUnit } from './columnNames.js';
import { metadataNumber } from './metadata.js';
import { MAX_COUNTS } from './validate.js';

export interface SpectrumParseOptions {
  /** File name used in every message. */
  source: string;
  kind: 'absorption' | 'emission';
  /** Axis of a file whose header does not say it (or that has no header). Default: from the header or `# axis:`. */
  axis?: SpectrumAxis;
  /** Concentration for absorbance → ε, mol/L. Default: `# concentration_M:` metadata (also `_mM`, `_uM`). */
  concentrationM?: number;
  /** Path length for absorbance → ε, cm. Default: `# path_length_cm:` metadata (also `_mm`). */
  pathLengthCm?: number;
  /** The ordinate column (name or 1-based index) when the file has several. */
  column?: string | number;
}

type Ordinate = 'epsilon' | 'absorbance' | 'photons' | 'energy';

const AXIS_STEMS: Record<SpectrumAxis, string[]> = {
  nm: ['wavelength', 'lambda', 'wl', 'λ', 'wave_length'],
  'cm-1': ['wavenumber', 'wave_number', 'nu', 'ν', 'ν̃', 'energy_cm'],
};
const CM1_UNITS = ['cm-1', 'cm^-1', 'cm⁻¹', '1/cm', 'cm^{-1}', 'cm**-1', 'cm−1'];
const EPSILON_STEMS = [
  'epsilon',
  'ε',
  'eps',
  'molar_absorption_coefficient',
  'molar_absorptivity',
  'extinction_coefficient',
];
const EPSILON_UNITS = [
  'm-1cm-1',
  'm^-1cm^-1',
  'm⁻¹cm⁻¹',
  'l/mol/cm',
  'l/(mol*cm)',
  'l/(molcm)',
  'lmol-1cm-1',
  'lmol⁻¹cm⁻¹',
  'l/mol·cm',
  'l/(mol·cm)',
];
const ABSORBANCE_STEMS = ['absorbance', 'abs', 'a', 'od', 'optical_density'];
const PHOTON_STEMS = [
  'photons',
  'photon_counts',
  'counts',
  'intensity',
  'emission',
  'fluorescence',
  'signal',
  'photons_per_nm',
  'photons_per_cm-1',
];
const ENERGY_STEMS = ['energy', 'energy_intensity', 'power'];

function classifyAxis(name: string): { axis: SpectrumAxis } | { bad: string } | null {
  const lower = name.trim().toLowerCase();
  if (lower === 'nm') return { axis: 'nm' };
  if (CM1_UNITS.includes(lower)) return { axis: 'cm-1' };
  const { stem, unit } = splitNameUnit(name);
  for (const axis of ['nm', 'cm-1'] as const) {
    if (!AXIS_STEMS[axis].includes(stem) && !AXIS_STEMS[axis].includes(lower)) continue;
    const u = unit?.replace(/\s+/g, '') ?? null;
    if (axis === 'nm' && u === 'nm') return { axis };
    if (axis === 'cm-1' && u !== null && CM1_UNITS.includes(u)) return { axis };
    return {
      bad: u
        ? `'${unit}' is not a unit lumirate reads for ${stem} (use ${axis === 'nm' ? 'nm' : 'cm-1'})`
        : 'it names no unit',
    };
  }
  return null;
}

function classifyOrdinate(name: string, kind: 'absorption' | 'emission'): Ordinate | { bad: string } | null {
  const lower = name.trim().toLowerCase().replace(/\s+/g, '_');
  const { stem, unit } = splitNameUnit(name);
  const u = unit?.replace(/\s+/g, '') ?? null;
  if (kind === 'absorption') {
    if (EPSILON_STEMS.includes(lower)) return 'epsilon';
    if (EPSILON_STEMS.includes(stem)) {
      return u && EPSILON_UNITS.includes(u)
        ? 'epsilon'
        : { bad: `'${unit}' is not L mol⁻¹ cm⁻¹ (write epsilon_M-1cm-1)` };
    }
    if (ABSORBANCE_STEMS.includes(lower)) return 'absorbance';
    return null;
  }
  if (PHOTON_STEMS.includes(lower) || PHOTON_STEMS.includes(stem)) return 'photons';
  if (ENERGY_STEMS.includes(lower) || ENERGY_STEMS.includes(stem)) return 'energy';
  return null;
}

/**
 * Reads an absorption or emission spectrum (see FORMATS.md). Absorption is returned as the molar
 * absorption coefficient ε in L mol⁻¹ cm⁻¹; absorbance is converted with the Beer–Lambert law,
 * ε = A / (c·l). Emission is kept as photon counts per axis unit unless `# ordinate: energy` (or an
 * energy column) marks an energy spectrum. The result is sorted ascending on its axis; negative
 * ordinates (baseline noise) are kept and reported.
 */
export function parseSpectrumText(text: string, options: SpectrumParseOptions): Spectrum {
  const { source, kind } = options;
  const table = readTextTable(text, source);
  const { columns } = table;
  const warnings = [...table.warnings];

  // Axis column.
  let axisIndex = -1;
  let axis: SpectrumAxis | undefined;
  let axisSource = '';
  if (table.header) {
    columns.forEach((name, j) => {
      const c = classifyAxis(name);
      if (!c || axisIndex >= 0) return;
      if ('bad' in c) {
        throw new InputError(
          `column '${name}' looks like a spectral axis but ${c.bad}; name it wavelength_nm or wavenumber_cm-1`,
          {
            file: source,
            line: table.headerLine!,
            column: j + 1,
          },
        );
      }
      axisIndex = j;
      axis = c.axis;
      axisSource = `unit from the column name '${name}'`;
    });
  }
  if (axisIndex < 0) {
    axis = options.axis ?? metaAxis(table);
    if (!axis) {
      throw new InputError(
        `the spectral axis is unknown; name the first column wavelength_nm or wavenumber_cm-1, add '# axis: nm', or give the axis`,
        { file: source, line: table.headerLine ?? table.rows[0].line, column: 1 },
      );
    }
    axisIndex = 0;
    axisSource = options.axis
      ? `axis ${axis} given, first column`
      : `axis ${axis} from '# axis', first column`;
  } else if (options.axis && options.axis !== axis) {
    throw new InputError(
      `column '${columns[axisIndex]}' is in ${axis} but the axis given is ${options.axis}`,
      {
        file: source,
        line: table.headerLine!,
        column: axisIndex + 1,
      },
    );
  }
  if (columns.length < 2)
    throw new InputError('has one column; a spectrum needs an axis and an ordinate column', { file: source });

  // Ordinate column.
  const others = columns.map((_, j) => j).filter((j) => j !== axisIndex);
  const list = others.map((j) => `'${columns[j]}' (${j + 1})`).join(', ');
  let yIndex: number;
  if (options.column !== undefined) {
    yIndex = findColumn(columns, options.column);
    if (!others.includes(yIndex))
      throw new InputError(`has no ordinate column '${options.column}'; choose one of ${list}`, {
        file: source,
        line: table.headerLine ?? undefined,
      });
  } else if (others.length === 1) {
    yIndex = others[0];
  } else {
    const known = table.header ? others.filter((j) => classifyOrdinate(columns[j], kind) !== null) : [];
    if (known.length !== 1)
      throw new InputError(`has several ordinate columns; choose one of ${list}`, {
        file: source,
        line: table.headerLine ?? undefined,
      });
    yIndex = known[0];
  }

  let ordinate: Ordinate;
  const c = table.header ? classifyOrdinate(columns[yIndex], kind) : null;
  if (c !== null && typeof c === 'object') {
    throw new InputError(`column '${columns[yIndex]}': ${c.bad}`, {
      file: source,
      line: table.headerLine!,
      column: yIndex + 1,
    });
  }
  if (c) ordinate = c;
  else if (table.header) {
    const expected =
      kind === 'absorption'
        ? "'epsilon' (L mol⁻¹ cm⁻¹) or 'absorbance'"
        : "'photons', 'counts' or 'intensity'";
    throw new InputError(`column '${columns[yIndex]}' is not a known ${kind} ordinate; name it ${expected}`, {
      file: source,
      line: table.headerLine!,
      column: yIndex + 1,
    });
  } else if (kind === 'absorption') {
    ordinate = concentrationOf(table, options) !== undefined ? 'absorbance' : 'epsilon';
  } else ordinate = 'photons';
  if (kind === 'emission' && ordinate === 'photons' && table.metadata.ordinate !== undefined) {
    const o = table.metadata.ordinate.trim().toLowerCase();
    if (o === 'energy') ordinate = 'energy';
    else if (o !== 'photons' && o !== 'photon' && o !== 'counts') {
      throw new InputError(`metadata 'ordinate: ${table.metadata.ordinate}' must be 'photons' or 'energy'`, {
        file: source,
        line: table.metadataLines.ordinate,
      });
    }
  }

  // Values. Rows (each cell's text and line) are asked for only where a message needs them: a table
  // read by the fast path makes them on demand.
  const n = table.rowCount;
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  let negatives = 0;
  let firstNegative = 0;
  const at = (i: number, j: number) => ({ file: source, line: table.rows[i].line, column: j + 1 });
  for (let i = 0; i < n; i++) {
    x[i] = cellNumber(table, i, axisIndex, axis === 'nm' ? 'a wavelength' : 'a wavenumber');
    if (!(x[i] > 0))
      throw new InputError(
        `${axis === 'nm' ? 'wavelength' : 'wavenumber'} ${table.rows[i].cells[axisIndex].trim()} is not positive`,
        at(i, axisIndex),
      );
    y[i] = cellNumber(table, i, yIndex);
    if (Math.abs(y[i]) > MAX_COUNTS)
      throw new InputError(
        `${table.rows[i].cells[yIndex].trim()} is beyond any plausible ${kind} value (|y| > 1e15)`,
        at(i, yIndex),
      );
    if (y[i] < 0 && negatives++ === 0) firstNegative = i;
  }
  if (n < 2)
    throw new InputError('has only one data row; a spectrum needs at least two points', {
      file: source,
      line: table.rows[0].line,
    });
  if (negatives > 0) {
    warnings.push(
      `${negatives} negative ${kind} ${negatives === 1 ? 'value' : 'values'} (first on line ${table.rows[firstNegative].line}), kept as they are (baseline noise?)`,
    );
  }

  // Sort ascending on the axis; two rows at the same axis value cannot both be right.
  const order = Array.from({ length: n }, (_, i) => i).sort((a, b) => x[a] - x[b]);
  for (let k = 1; k < n; k++) {
    if (x[order[k]] === x[order[k - 1]]) {
      const [a, b] = [order[k - 1], order[k]].sort((p, q) => p - q);
      throw new InputError(
        `${axis} value ${table.rows[b].cells[axisIndex].trim()} repeats line ${table.rows[a].line}; each axis value may appear once`,
        {
          file: source,
          line: table.rows[b].line,
          column: axisIndex + 1,
        },
      );
    }
  }
  const xs = Float64Array.from(order, (i) => x[i]);
  let ys = Float64Array.from(order, (i) => y[i]);
  const median = xs[n >> 1];
  if (axis === 'nm' && median > 5000)
    warnings.push(`wavelengths around ${median} nm look like wavenumbers; check the axis`);
  if (axis === 'cm-1' && median < 2000)
    warnings.push(`wavenumbers around ${median} cm⁻¹ look like wavelengths; check the axis`);

  let ordinateText: string =
    ordinate === 'epsilon'
      ? 'ε, L mol⁻¹ cm⁻¹'
      : ordinate === 'photons'
        ? 'photon counts per axis unit'
        : 'energy per axis unit';
  if (ordinate === 'absorbance') {
    const cM = concentrationOf(table, options);
    const lCm = pathLengthOf(table, options);
    if (cM === undefined || lCm === undefined) {
      throw new InputError(
        `column '${columns[yIndex]}' holds absorbance, which needs ${cM === undefined ? 'the concentration' : ''}${cM === undefined && lCm === undefined ? ' and ' : ''}${lCm === undefined ? 'the path length' : ''} to give ε: add '# concentration_M: …' and '# path_length_cm: …' lines or give them`,
        { file: source, line: table.headerLine ?? undefined, column: yIndex + 1 },
      );
    }
    ys = ys.map((a) => a / (cM * lCm));
    ordinateText = `absorbance → ε = A/(c·l) with c = ${cM} M, l = ${lCm} cm`;
  }
  const report: SpectrumImportReport = {
    delimiter: table.delimiter,
    decimalMark: table.decimalMark,
    hasHeader: table.header !== null,
    columns: [...columns],
    axisColumn: columns[axisIndex],
    axisSource,
    ordinateColumn: columns[yIndex],
    ordinate: ordinateText,
  };
  return {
    kind,
    axis: axis!,
    x: xs,
    y: ys,
    ...(kind === 'emission'
      ? {
          emissionOrdinate:
            ordinate === 'energy' ? ('energyPerAxisUnit' as const) : ('photonsPerAxisUnit' as const),
        }
      : {}),
    metadata: { ...table.metadata },
    source,
    warnings,
    report,
  };
}

function metaAxis(table: TextTable): SpectrumAxis | undefined {
  const raw = table.metadata.axis;
  if (raw === undefined) return undefined;
  const a = raw.trim().toLowerCase();
  if (a === 'nm' || a === 'wavelength_nm') return 'nm';
  if (CM1_UNITS.includes(a) || a === 'wavenumber_cm-1') return 'cm-1';
  throw new InputError(`metadata 'axis: ${raw}' must be nm or cm-1`, {
    file: table.source,
    line: table.metadataLines.axis,
  });
}

function positiveOption(value: number | undefined, what: string, source: string): number | undefined {
  if (value === undefined) return undefined;
  if (!(Number.isFinite(value) && value > 0))
    throw new InputError(`the ${what} given, ${value}, is not a positive number`, { file: source });
  return value;
}

/** The first of several metadata keys (each with its scale to the wanted unit) that is present. */
function metaScaled(table: TextTable, keys: [string, number][], what: string): number | undefined {
  for (const [key, scale] of keys) {
    const v = metadataNumber(table.metadata, key, { source: table.source, lines: table.metadataLines });
    if (v === undefined) continue;
    if (!(v > 0))
      throw new InputError(`metadata '${key}' must be a positive ${what}`, {
        file: table.source,
        line: table.metadataLines[key],
      });
    return v * scale;
  }
  return undefined;
}

function concentrationOf(table: TextTable, o: SpectrumParseOptions): number | undefined {
  return (
    positiveOption(o.concentrationM, 'concentration (M)', o.source) ??
    metaScaled(
      table,
      [
        ['concentration_m', 1],
        ['concentration_mm', 1e-3],
        ['concentration_um', 1e-6],
        ['concentration_µm', 1e-6],
      ],
      'concentration',
    )
  );
}

function pathLengthOf(table: TextTable, o: SpectrumParseOptions): number | undefined {
  return (
    positiveOption(o.pathLengthCm, 'path length (cm)', o.source) ??
    metaScaled(
      table,
      [
        ['path_length_cm', 1],
        ['path_length_mm', 0.1],
        ['pathlength_cm', 1],
      ],
      'path length',
    )
  );
}
