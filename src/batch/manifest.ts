import { InputError } from '../errors.js';
import { type Cell, parseCsvCells } from './csvCells.js';

/** Columns lumirate interprets; every other column is metadata carried through untouched. */
export const MANIFEST_COLUMNS = [
  'sample',
  'decay',
  'irf',
  'components',
  'statistic',
  'range',
  'fix',
  'qy',
  'qy_err',
  'solvent',
  'refractive_index',
  'absorption',
  'emission',
  'period_ns',
  'group',
] as const;

export type ManifestColumn = (typeof MANIFEST_COLUMNS)[number];

/** One data row of a manifest, its known cells by column name and its metadata cells. */
export interface ManifestRow {
  /** 1 = first data row after the header. */
  row: number;
  /** Line in the manifest where the row starts. */
  line: number;
  sample: string;
  /** Known columns present in the manifest (an empty cell means "use the settings default"). */
  cells: Partial<Record<ManifestColumn, Cell>>;
  /** Unknown columns, in manifest order, values untouched. */
  metadata: Record<string, string>;
}

export interface Manifest {
  source: string;
  columns: string[];
  rows: ManifestRow[];
}

const KNOWN = new Set<string>(MANIFEST_COLUMNS);

/**
 * Reads a batch manifest: a CSV with a header row, one sample per row. Only `sample` and `decay` are
 * required. Structural problems (no header, a missing required column, a row with too many cells, an
 * empty or repeated sample id) stop here with the line and column; the meaning of each cell is checked
 * later, per sample, so that one bad row does not stop the batch.
 */
export function parseManifest(text: string, options: { source: string }): Manifest {
  const source = options.source;
  const table = parseCsvCells(text, source);
  if (table.length === 0)
    throw new InputError('the manifest is empty; it needs a header row with at least sample,decay', {
      file: source,
    });
  const header = table[0];
  const columns = header.map((c) => c.value.trim());
  const seen = new Map<string, Cell>();
  header.forEach((cell, k) => {
    const name = columns[k];
    if (name === '')
      throw new InputError('the header has an empty column name', {
        file: source,
        line: cell.line,
        column: cell.column,
      });
    const lower = name.toLowerCase();
    const before = seen.get(lower);
    if (before) {
      throw new InputError(
        `column '${name}' appears twice in the header (first at column ${before.column})`,
        {
          file: source,
          line: cell.line,
          column: cell.column,
        },
      );
    }
    seen.set(lower, cell);
  });
  for (const required of ['sample', 'decay']) {
    if (!seen.has(required)) {
      throw new InputError(
        `the header has no '${required}' column; a manifest needs at least sample,decay (found: ${columns.join(', ')})`,
        {
          file: source,
          line: header[0].line,
        },
      );
    }
  }
  // Known names are matched case-insensitively; metadata keeps the header's spelling.
  const keys = columns.map((name) => (KNOWN.has(name.toLowerCase()) ? name.toLowerCase() : name));

  const rows: ManifestRow[] = [];
  const ids = new Map<string, number>();
  for (let r = 1; r < table.length; r++) {
    const cells = table[r];
    if (cells.length > columns.length) {
      const extra = cells[columns.length];
      throw new InputError(
        `this row has ${cells.length} cells but the header has ${columns.length} columns`,
        {
          file: source,
          line: extra.line,
          column: extra.column,
        },
      );
    }
    const known: Partial<Record<ManifestColumn, Cell>> = {};
    const metadata: Record<string, string> = {};
    keys.forEach((key, k) => {
      // A short row leaves the remaining cells empty, as spreadsheets write them.
      const cell = cells[k] ?? {
        value: '',
        line: cells[cells.length - 1].line,
        column: cells[cells.length - 1].column,
      };
      if (KNOWN.has(key)) known[key as ManifestColumn] = cell;
      else metadata[key] = cell.value;
    });
    const sampleCell = known.sample!;
    const sample = sampleCell.value.trim();
    if (sample === '')
      throw new InputError('the sample id is empty', {
        file: source,
        line: sampleCell.line,
        column: sampleCell.column,
      });
    const firstLine = ids.get(sample);
    if (firstLine !== undefined) {
      throw new InputError(
        `sample id '${sample}' is used twice (first on line ${firstLine}); ids must be unique`,
        {
          file: source,
          line: sampleCell.line,
          column: sampleCell.column,
        },
      );
    }
    ids.set(sample, sampleCell.line);
    rows.push({ row: r, line: cells[0].line, sample, cells: known, metadata });
  }
  return { source, columns, rows };
}
