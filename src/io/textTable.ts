import { createRequire } from 'node:module';
import { InputError } from '../errors.js';
import {
  COMMA_MARK,
  POINT_MARK,
  SINGLE_COLUMN,
  WHITESPACE,
  scanDecimal,
  scanCount,
  scanEnd,
  scanNumericRows,
  type NumericRows,
} from './scanNumericRows.js';

// The CSV package ships as CommonJS. Loaded through `require`, the engine need not scan its source for
// named exports, as an ESM import of it would in every thread (tens of ms each, plus compiling the scanner).
const Papa = createRequire(import.meta.url)('papaparse') as typeof import('papaparse');

/**
 * The shared first stage of every importer: text → comment metadata + a rectangular table of cell
 * strings, each row remembering its line in the file. Numbers are not parsed here (papaparse's own
 * typing turns "1,5" and "0012" into surprises); `parseCellNumber` does that with the detected
 * decimal mark and names the cell that failed.
 */

export type Delimiter = 'comma' | 'tab' | 'semicolon' | 'whitespace' | 'single column';

export interface TableRow {
  /** 1-based line number in the file. */
  line: number;
  cells: string[];
}

export interface TextTable {
  source: string;
  delimiter: Delimiter;
  decimalMark: '.' | ',';
  /** The header's names, trimmed; null when the first row is numeric. */
  header: string[] | null;
  /** Header names, or col1, col2 … without a header. */
  columns: string[];
  /**
   * Data rows; every row has `columns.length` cells. A table read by the fast path makes them only
   * when asked (for a message, say): read `rowCount` and `numbers` where they serve.
   */
  rows: TableRow[];
  /** Number of data rows. */
  rowCount: number;
  /**
   * Every cell's value, by column, when every cell is a plain decimal number (the fast path read
   * them while splitting); entries past `rowCount` are spare. Absent otherwise. The arrays may be
   * reused when another table is read: take values through `parseColumnNumbers` or `cellNumber`, or
   * read this property again after reading another table.
   */
  numbers?: Float64Array[];
  /** `# key: value` metadata, keys normalised (see `normaliseMetadataKey`). */
  metadata: Record<string, string>;
  /** The line each metadata key came from, for messages. */
  metadataLines: Record<string, number>;
  /** Line of the header, when there is one. */
  headerLine: number | null;
  warnings: string[];
}

/** Lower-case, trimmed, inner spaces and hyphens-between-words kept as written except spaces → `_`. */
export function normaliseMetadataKey(key: string): string {
  return key.trim().toLowerCase().replace(/\s+/g, '_');
}

/** Share of control characters above which a file is called binary rather than text. */
const BINARY_SHARE = 0.01;

/**
 * Refuses text that is not a text table: a NUL character, or more than 1 % control characters
 * (other than tab, CR, LF) or U+FFFD replacement characters (what a decoder makes of bytes that are
 * not UTF-8). The position is reported as a byte offset into the UTF-8 encoding.
 */
export function assertTextual(text: string, source: string): void {
  let bad = 0;
  let first = -1;
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    const isBad = (c < 32 && c !== 9 && c !== 10 && c !== 13) || c === 0x7f || c === 0xfffd;
    if (!isBad) continue;
    if (first < 0) first = i;
    bad++;
    if (c === 0) {
      throw new InputError(`is not a text table (binary data at byte ${byteOffset(text, i)}: a NUL byte)`, {
        file: source,
      });
    }
  }
  if (bad > 0 && (bad / Math.max(text.length, 1) > BINARY_SHARE || bad >= 64)) {
    throw new InputError(
      `is not a text table (binary data at byte ${byteOffset(text, first)}: ${bad} non-printable characters)`,
      { file: source },
    );
  }
}

function byteOffset(text: string, index: number): number {
  return new TextEncoder().encode(text.slice(0, index)).length;
}

const NUMBER = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;
const NUMBER_COMMA = /^[+-]?(?:\d+,?\d*|,\d+)(?:[eE][+-]?\d+)?$/;
/** A cell that only reads as a number with a decimal comma: digits, one comma, digits. */
const COMMA_DECIMAL_ONLY = /^[+-]?(?:\d*,\d+|\d+,\d*)(?:[eE][+-]?\d+)?$/;

/** A cell that reads as a number with a decimal point. */
const POINT_DECIMAL = /^[+-]?(?:\d*\.\d+|\d+\.\d*)(?:[eE][+-]?\d+)?$/;

/** True when the cell reads as a number under the given decimal mark. */
export function looksNumeric(cell: string, decimalMark: '.' | ','): boolean {
  return (decimalMark === '.' ? NUMBER : NUMBER_COMMA).test(cell.trim());
}

/**
 * Parses one cell as a finite number with the file's decimal mark, or throws an InputError naming
 * the line, the column and the text.
 */
export function parseCellNumber(
  cell: string,
  decimalMark: '.' | ',',
  where: { file: string; line: number; column: number },
  what = 'a number',
): number {
  const t = cell.trim();
  if (t === '') throw new InputError(`empty cell where ${what} was expected`, where);
  if (!looksNumeric(t, decimalMark)) {
    const hint =
      decimalMark === ',' && NUMBER.test(t) && t.includes('.')
        ? ' (this file uses decimal commas, but this cell has a decimal point)'
        : decimalMark === '.' && COMMA_DECIMAL_ONLY.test(t)
          ? ' (a decimal comma needs a semicolon or tab as the column separator)'
          : '';
    throw new InputError(`'${clip(t)}' is not ${what}${hint}`, where);
  }
  const v = Number(decimalMark === ',' ? t.replace(',', '.') : t);
  if (!Number.isFinite(v)) throw new InputError(`'${clip(t)}' is out of the range of finite numbers`, where);
  return v;
}

/**
 * Parses a whole column as finite numbers, naming the first cell that is not one. A table read by the
 * fast path has them already; otherwise the common cell (already trimmed, plain decimal) is scanned
 * by hand with no regular expression or new string, and the rest go through the general rules.
 */
export function parseColumnNumbers(table: TextTable, index: number, what = 'a number'): Float64Array {
  if (table.numbers) return table.numbers[index].slice(0, table.rowCount);
  const { rows, decimalMark, source } = table;
  const re = decimalMark === '.' ? NUMBER : NUMBER_COMMA;
  const marks = decimalMark === '.' ? POINT_MARK : COMMA_MARK;
  const out = new Float64Array(rows.length);
  for (let i = 0; i < rows.length; i++) {
    const cell = rows[i].cells[index];
    let v = scanDecimal(cell, 0, marks);
    if (scanEnd() !== cell.length || Number.isNaN(v))
      v = re.test(cell) ? Number(decimalMark === ',' ? cell.replace(',', '.') : cell) : NaN;
    out[i] = Number.isFinite(v)
      ? v
      : parseCellNumber(cell, decimalMark, { file: source, line: rows[i].line, column: index + 1 }, what);
  }
  return out;
}

/**
 * The number in one cell: from the columns read by the fast path when there are some (every cell of
 * such a table is a finite number), else parsed from the cell's text, with the error `parseCellNumber` gives.
 */
export function cellNumber(table: TextTable, row: number, index: number, what = 'a number'): number {
  if (table.numbers) return table.numbers[index][row];
  const { line, cells } = table.rows[row];
  return parseCellNumber(
    cells[index],
    table.decimalMark,
    { file: table.source, line, column: index + 1 },
    what,
  );
}

function clip(s: string): string {
  return s.length > 40 ? `${s.slice(0, 37)}…` : s;
}

/** Lines that hold data or the header, as parallel arrays (one object per line costs at 10⁶ lines). */
interface ContentLines {
  line: number[];
  text: string[];
}

/** Where `# key: value` comment lines are collected, with a warning for a key given twice. */
interface MetadataSink {
  metadata: Record<string, string>;
  metadataLines: Record<string, number>;
  warnings: string[];
}

/** Reads one comment line (trimmed, starting with `#`) on line `line` into the metadata, if it is `key: value`. */
function readCommentLine(trimmed: string, line: number, sink: MetadataSink): void {
  const m = /^#+\s*([^:=]*?[^\s:=])\s*[:=]\s*(.*)$/.exec(trimmed);
  if (!m) return;
  const { metadata, metadataLines } = sink;
  const key = normaliseMetadataKey(m[1]);
  const value = m[2].trim();
  if (key in metadata && metadata[key] !== value) {
    sink.warnings.push(
      `metadata '${key}' is given twice (line ${metadataLines[key]}: '${metadata[key]}', line ${line}: '${value}'); the later value is used`,
    );
  }
  metadata[key] = value;
  metadataLines[key] = line;
}

/**
 * The first content line's cells, without the empty last field a trailing separator leaves
 * (spreadsheet exports), and the header they make: null when every cell reads as a number.
 */
function firstRow(cells: string[]): { first: string[]; header: string[] | null } {
  const first = cells.length > 1 && cells[cells.length - 1].trim() === '' ? cells.slice(0, -1) : cells;
  const numeric = first.every((c) => looksNumeric(c, '.') || looksNumeric(c, ','));
  return { first, header: numeric ? null : first.map((c) => c.trim()) };
}

/** The first unnamed or repeated header name, as the error to throw, or null. */
function headerProblem(columns: string[], line: number, source: string): InputError | null {
  const seen = new Map<string, number>();
  for (let j = 0; j < columns.length; j++) {
    const name = columns[j];
    if (name === '')
      return new InputError(`header column ${j + 1} has no name`, { file: source, line, column: j + 1 });
    const key = name.toLowerCase();
    const before = seen.get(key);
    if (before !== undefined) {
      return new InputError(`header names '${name}' twice (columns ${before + 1} and ${j + 1})`, {
        file: source,
        line,
        column: j + 1,
      });
    }
    seen.set(key, j);
  }
  return null;
}

/**
 * Splits text into a table. Accepts a UTF-8 byte-order mark, CRLF/CR/LF line ends, blank lines and
 * `#` comment lines anywhere; `# key: value` (or `# key = value`) comments become metadata.
 *
 * Most files are comment lines, a header and rows of plain numbers: those are read by a scanner that
 * makes no string per line or cell (see `scanNumericRows`). Whatever it declines, from the first
 * character, goes to the general reader, which alone refuses files and so names every bad cell.
 */
export function readTextTable(text: string, source: string): TextTable {
  return readPlainTable(text, source) ?? readGeneralTable(text, source);
}

/**
 * Whitespace tables may have headers like "time (ps)": the names of such a header line with each
 * parenthesised or bracketed unit joined to the word before it. The readers use them when that makes
 * the header as wide as the data.
 */
function joinUnitsToNames(headerLine: string): string[] {
  return headerLine
    .trim()
    .replace(/\s+(?=[([/])/g, '')
    .replace(/\/\s+/g, '/')
    .split(/\s+/);
}

/** Separator character codes of the delimiters the fast path reads. */
const SEPARATOR_CODE: Record<Delimiter, number> = {
  comma: 44,
  tab: 9,
  semicolon: 59,
  whitespace: WHITESPACE,
  'single column': SINGLE_COLUMN,
};

/** True for a character that the textual check counts against a file, and for a CR inside a line. */
function hasControlCharacter(line: string): boolean {
  for (let i = 0; i < line.length; i++) {
    const c = line.charCodeAt(i);
    if ((c < 32 && c !== 9) || c === 0x7f || c === 0xfffd) return true;
  }
  return false;
}

/**
 * The fast path: comment and blank lines, then a header or a first data row, then nothing but rows
 * of plain numbers. Null for any other file, or anything the general reader would warn about or refuse.
 */
function readPlainTable(text: string, source: string): TextTable | null {
  const sink: MetadataSink = { metadata: {}, metadataLines: {}, warnings: [] };
  let pos = text.charCodeAt(0) === 0xfeff ? 1 : 0;
  let line = 0;
  let firstText: string | null = null;
  let firstStart = 0;
  while (pos < text.length) {
    const nl = text.indexOf('\n', pos);
    const end = nl < 0 ? text.length : nl;
    const raw = text.slice(pos, end > pos && text.charCodeAt(end - 1) === 13 ? end - 1 : end);
    line++;
    if (hasControlCharacter(raw)) return null;
    firstStart = pos;
    pos = end + 1;
    const trimmed = raw.trim();
    if (trimmed === '') continue;
    if (trimmed.startsWith('#')) {
      readCommentLine(trimmed, line, sink);
      continue;
    }
    firstText = raw;
    break;
  }
  if (firstText === null) return null;
  const delimiter = detectDelimiter(firstText);
  const separator = SEPARATOR_CODE[delimiter];
  let cells: string[];
  if (!firstText.includes('"')) cells = splitPlainLine(firstText, delimiter);
  else if (separator < 0) return null;
  else {
    // A quoted header (a common export) over plain numbers; a bad quote is the general reader's to name.
    try {
      cells = splitQuoted(firstText, line, PAPA_DELIMITER[delimiter], source);
    } catch {
      return null;
    }
  }
  const { first, header } = firstRow(cells);
  const dataStart = header ? Math.min(pos, text.length) : firstStart;
  let columns = header ?? first.map((_, j) => `col${j + 1}`);
  let width = first.length;
  let scanned = scanNumericRows(text, dataStart, width, separator);
  if (!scanned && header && delimiter === 'whitespace') {
    // Rows as wide as the header with its units joined to their names take those names.
    const joined = joinUnitsToNames(firstText);
    width = joined.length;
    if (joined.length !== header.length) scanned = scanNumericRows(text, dataStart, width, separator);
    columns = joined;
  }
  if (!scanned || (header && headerProblem(columns, line, source))) return null;
  const scan = { start: dataStart, width, separator };
  return new ScannedTable(
    text,
    source,
    delimiter,
    scanned,
    scan,
    header,
    columns,
    sink,
    header ? line : null,
  );
}

/**
 * A table read by the fast path. Its rows of cell text are made only for a caller that asks (for a
 * message, say), by the general reader. A class rather than an object literal with a getter: every
 * such literal gets a shape of its own, so code reading many tables would see a new one each time
 * and have its compiled form thrown away.
 */
class ScannedTable implements TextTable {
  readonly decimalMark: TextTable['decimalMark'];
  readonly rowCount: number;
  readonly metadata: Record<string, string>;
  readonly metadataLines: Record<string, number>;
  readonly warnings: string[];
  private cellRows: TableRow[] | null = null;
  /** The scanner's columns, and the scan they come from (see `scanCount`). */
  private scannedColumns: Float64Array[];
  private scanId: number;

  constructor(
    private readonly text: string,
    readonly source: string,
    readonly delimiter: TextTable['delimiter'],
    scanned: NumericRows,
    /** Where and how the scanner read the rows, to read them again. */
    private readonly scan: { start: number; width: number; separator: number },
    readonly header: string[] | null,
    readonly columns: string[],
    sink: MetadataSink,
    readonly headerLine: number | null,
  ) {
    this.decimalMark = scanned.decimalMark;
    this.rowCount = scanned.rowCount;
    this.scannedColumns = scanned.columns;
    this.scanId = scanCount();
    this.metadata = sink.metadata;
    this.metadataLines = sink.metadataLines;
    this.warnings = sink.warnings;
  }

  /**
   * The scanner shares its arrays with the next scan (of any file): when one has run since, this
   * table's text is scanned again, to the same numbers.
   */
  get numbers(): Float64Array[] {
    if (this.scanId !== scanCount()) {
      const { start, width, separator } = this.scan;
      this.scannedColumns = scanNumericRows(this.text, start, width, separator)!.columns;
      this.scanId = scanCount();
    }
    return this.scannedColumns;
  }

  get rows(): TableRow[] {
    this.cellRows ??= readGeneralTable(this.text, this.source).rows;
    return this.cellRows;
  }
}

/**
 * The general reader: every layout FORMATS.md describes, and every refusal with its line and column.
 * `readTextTable` uses it for whatever its fast path declines; call it directly only to compare the two.
 */
export function readGeneralTable(text: string, source: string): TextTable {
  assertTextual(text, source);
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  // A plain split is several times faster than the regular expression when there is no CR at all.
  const lines = text.includes('\r') ? text.split(/\r\n|\r|\n/) : text.split('\n');
  const sink: MetadataSink = { metadata: {}, metadataLines: {}, warnings: [] };
  const content: ContentLines = { line: [], text: [] };
  for (let i = 0; i < lines.length; i++) {
    const raw = lines[i];
    // Fast path for the common data line, which starts with a digit, sign or point.
    const c0 = raw.charCodeAt(0);
    if ((c0 >= 48 && c0 <= 57) || c0 === 45 || c0 === 46 || c0 === 43) {
      content.line.push(i + 1);
      content.text.push(raw);
      continue;
    }
    const trimmed = raw.trim();
    if (trimmed === '') continue;
    if (trimmed.startsWith('#')) {
      readCommentLine(trimmed, i + 1, sink);
      continue;
    }
    content.line.push(i + 1);
    content.text.push(raw);
  }
  if (content.text.length === 0) {
    throw new InputError(
      lines.some((l) => l.trim() !== '') ? 'holds only comment lines and no data' : 'is empty',
      { file: source },
    );
  }

  const delimiter = detectDelimiter(content.text[0]);
  const split = splitLines(content, delimiter, source);
  const { first, header } = firstRow(split[0]);
  const headerLine = header ? content.line[0] : null;
  const dataCells = header ? split.slice(1) : split;
  const dataLineOffset = header ? 1 : 0;
  if (dataCells.length === 0) {
    throw new InputError('has a header line but no data rows', {
      file: source,
      line: headerLine ?? undefined,
    });
  }

  let columns = header ?? first.map((_, j) => `col${j + 1}`);
  if (header && delimiter === 'whitespace' && header.length !== dataCells[0].length) {
    const joined = joinUnitsToNames(content.text[0]);
    if (joined.length === dataCells[0].length) columns = joined;
  }
  if (header) {
    const problem = headerProblem(columns, headerLine!, source);
    if (problem) throw problem;
  }

  const width = columns.length;
  const rows: TableRow[] = [];
  for (let r = 0; r < dataCells.length; r++) {
    let cells = dataCells[r];
    // A trailing separator (common in spreadsheet exports) gives one empty last field: drop it.
    if (cells.length === width + 1 && cells[width].trim() === '') cells = cells.slice(0, width);
    if (cells.length !== width) {
      throw new InputError(
        `has ${cells.length} ${cells.length === 1 ? 'field' : 'fields'} but the ${header ? 'header' : 'first row'} has ${width}; every row needs the same columns`,
        { file: source, line: content.line[r + dataLineOffset], column: Math.min(cells.length, width) + 1 },
      );
    }
    rows.push({ line: content.line[r + dataLineOffset], cells });
  }

  const decimalMark = detectDecimalMark(rows, delimiter, source);
  return {
    source,
    delimiter,
    decimalMark,
    header,
    columns,
    rows,
    rowCount: rows.length,
    ...sink,
    headerLine,
  };
}

/** The separator is read off the first content line (the header, or the first data row). */
function detectDelimiter(first: string): Delimiter {
  if (first.includes('\t')) return 'tab';
  if (first.includes(';')) return 'semicolon';
  if (first.includes(',')) {
    // "1,5" alone on a line is a single decimal-comma number only in a one-column file, which the
    // separator rule cannot tell from two columns: a comma always separates.
    return 'comma';
  }
  if (/\S\s+\S/.test(first.trim())) return 'whitespace';
  return 'single column';
}

const PAPA_DELIMITER: Record<string, string> = { comma: ',', tab: '\t', semicolon: ';' };

function splitLines(content: ContentLines, delimiter: Delimiter, source: string): string[][] {
  if (delimiter === 'single column' || delimiter === 'whitespace')
    return content.text.map((t) => splitPlainLine(t, delimiter));
  // Lines without a quote are cut at each separator (the bulk of any numeric table, and several times
  // faster); papaparse handles quoted fields. One row per line keeps line numbers exact.
  return content.text.map((t, i) =>
    t.includes('"')
      ? splitQuoted(t, content.line[i], PAPA_DELIMITER[delimiter], source)
      : splitPlainLine(t, delimiter),
  );
}

/** The cells of a line without quotes. */
function splitPlainLine(text: string, delimiter: Delimiter): string[] {
  if (delimiter === 'single column') return [text.trim()];
  if (delimiter === 'whitespace') return text.trim().split(/\s+/);
  return splitAt(text, PAPA_DELIMITER[delimiter]);
}

/**
 * `text.split(sep)` for a one-character separator, by `indexOf` and `slice`: the same fields (an
 * empty text gives one empty field), about twice as fast on the short lines of a numeric table.
 */
export function splitAt(text: string, sep: string): string[] {
  const out: string[] = [];
  let start = 0;
  for (;;) {
    const k = text.indexOf(sep, start);
    if (k < 0) {
      out.push(text.slice(start));
      return out;
    }
    out.push(text.slice(start, k));
    start = k + 1;
  }
}

function splitQuoted(text: string, line: number, sep: string, source: string): string[] {
  const parsed = Papa.parse<string[]>(text, {
    delimiter: sep,
    newline: '\n',
    quoteChar: '"',
    header: false,
    dynamicTyping: false,
    skipEmptyLines: false,
  });
  if (parsed.errors.some((e) => e.type === 'Quotes') || parsed.data.length !== 1) {
    throw new InputError('has an unterminated quoted field; quotes must open and close on the same line', {
      file: source,
      line,
    });
  }
  return parsed.data[0];
}

/**
 * Decimal commas are recognised only where the separator is not a comma. A file that mixes a decimal
 * comma and a decimal point is refused, naming the first cell of the minority kind.
 */
function detectDecimalMark(rows: TableRow[], delimiter: Delimiter, source: string): '.' | ',' {
  if (delimiter === 'comma') return '.';
  let comma: { line: number; column: number; text: string } | null = null;
  let point: { line: number; column: number; text: string } | null = null;
  for (const row of rows) {
    for (let j = 0; j < row.cells.length; j++) {
      const cell = row.cells[j];
      // Most cells hold neither mark; the cheap test spares them the regular expressions.
      if (!comma && cell.includes(',') && COMMA_DECIMAL_ONLY.test(cell.trim())) {
        comma = { line: row.line, column: j + 1, text: cell.trim() };
      } else if (!point && cell.includes('.') && POINT_DECIMAL.test(cell.trim())) {
        point = { line: row.line, column: j + 1, text: cell.trim() };
      }
    }
    if (comma && point) break;
  }
  if (comma && point) {
    const later =
      comma.line > point.line || (comma.line === point.line && comma.column > point.column) ? comma : point;
    throw new InputError(
      `'${later.text}' mixes decimal marks: line ${(later === comma ? point : comma).line} uses '${later === comma ? '.' : ','}', this cell '${later === comma ? ',' : '.'}'; use one decimal mark throughout`,
      { file: source, line: later.line, column: later.column },
    );
  }
  return comma ? ',' : '.';
}

/**
 * Index of a column given by header name (case-insensitive) or 1-based position; a digit string that
 * is no header name is a position. −1 when there is no such column.
 */
export function findColumn(columns: string[], column: string | number): number {
  if (typeof column === 'number')
    return Number.isInteger(column) && column >= 1 && column <= columns.length ? column - 1 : -1;
  const want = column.trim().toLowerCase();
  const byName = columns.findIndex((c) => c.toLowerCase() === want);
  if (byName >= 0) return byName;
  const position = /^\d+$/.test(want) ? Number(want) : 0;
  return position >= 1 && position <= columns.length ? position - 1 : -1;
}
