/**
 * What the importer hands to the rest of lumirate. Arrays are typed and never shared with the caller's
 * input; functions that transform a histogram return a new one.
 */

/** What the importer inferred from a file, reported so that nothing is guessed silently. */
export interface ImportReport {
  /** 'comma' | 'tab' | 'semicolon' | 'whitespace' | 'single column'. */
  delimiter: string;
  decimalMark: '.' | ',';
  hasHeader: boolean;
  /** Header names (or generated names col1, col2 … without a header). */
  columns: string[];
  /** The time column's name and unit, or how the bin width was obtained when there is none. */
  timeColumn: string | null;
  timeUnit: string | null;
  binWidthSource: string;
  /** The chosen counts column. */
  countsColumn: string;
  /** 'table' (time + counts columns), 'counts' (counts only), 'arrivals' (photon arrival list). */
  layout: 'table' | 'counts' | 'arrivals';
}

/** A photon-counting histogram on a uniform time axis. */
export interface Histogram {
  /** Left edge of each channel, ns; strictly increasing and uniform. */
  timeNs: Float64Array;
  /** Counts per channel; finite and ≥ 0. */
  counts: Float64Array;
  /** Channel width, ns. */
  binWidthNs: number;
  /** `# key: value` metadata from the file (keys lower-cased, trimmed), plus anything the caller adds. */
  metadata: Record<string, string>;
  /** Where it came from, for messages: a file name, `file#column`, or 'simulated'. */
  source: string;
  /** Non-fatal findings (non-integer counts …). */
  warnings: string[];
  /** How the file was read; absent for histograms made in memory. */
  report?: ImportReport;
}

export type SpectrumAxis = 'nm' | 'cm-1';

/**
 * A spectrum on its native axis, ascending. Absorption ordinates are molar absorption coefficients
 * (L mol⁻¹ cm⁻¹; converted from absorbance on import when concentration and path length are given).
 * Emission ordinates are relative photon counts per unit of the axis (per nm or per cm⁻¹) unless
 * `emissionOrdinate` says otherwise.
 */
export interface Spectrum {
  kind: 'absorption' | 'emission';
  axis: SpectrumAxis;
  x: Float64Array;
  y: Float64Array;
  /** For emission: what a y value means. */
  emissionOrdinate?: 'photonsPerAxisUnit' | 'energyPerAxisUnit';
  metadata: Record<string, string>;
  source: string;
  warnings: string[];
  /** How the file was read; absent for spectra made in memory. */
  report?: SpectrumImportReport;
}

/** What the importer inferred from a spectrum file. */
export interface SpectrumImportReport {
  delimiter: string;
  decimalMark: '.' | ',';
  hasHeader: boolean;
  columns: string[];
  /** The axis column and how its unit was known. */
  axisColumn: string;
  axisSource: string;
  ordinateColumn: string;
  /** How the ordinate was read, e.g. 'absorbance → ε with c = 1e-05 M, l = 1 cm'. */
  ordinate: string;
}
