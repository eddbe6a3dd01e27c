/**
 * The importer's fast path for the common file: rows of plain decimal numbers, read straight from the
 * text into one Float64Array per column, with no string made per line or per cell. It accepts only
 * what the general table reader would read to the same numbers without a word of complaint, and
 * answers null for anything else (a quote, a comment or metadata line among the data, a bad cell, a
 * ragged row, a lone CR, mixed decimal marks …), so that the general reader, which names the line
 * and column of every refusal, takes the file from the start.
 */

/** Exact powers of ten: every 10^k with k ≤ 22 is a double, so one multiply or divide rounds correctly. */
const EXACT_POW10 = Array.from({ length: 23 }, (_, k) => 10 ** k);

/**
 * The character code at `i`, or −1 past the end. Every read goes through here: a read past the end
 * of a string (the end of a cell, or of a file without a last line break) sends the optimised code
 * to a slower path for all later reads, of every file: a quarter of the general reader's time, and a
 * fifth of the fast path's on a file without a last line break.
 */
function codeAt(text: string, i: number): number {
  return i < text.length ? text.charCodeAt(i) : -1;
}

/** Accept a decimal point (`.`) in `scanDecimal`. */
export const POINT_MARK = 1;
/** Accept a decimal comma (`,`) in `scanDecimal`. */
export const COMMA_MARK = 2;

// What the last scan found besides its value, in module variables so that the row scanner's hot
// loop allocates nothing: where it stopped, the decimal mark it met (46 for `.`, 44 for `,`, 0 for
// none), and the digits of the number before any exponent.
let scanStop = 0;
let scanMark = 0;
let scanMantissa = 0;
let scanDigits = 0;
let scanScale = 0;
let scanNegative = false;

/**
 * The common number, without an exponent and of at most 15 digits, read from `text[start]` as
 * `scanDecimal` reads it; NaN for anything else, with what it read in the module variables for
 * `scanDecimal` to go on from. Kept small so that the compiler inlines it into the row scanner:
 * called, it cost a call per cell and a heap number per fractional value (64 kB per 4096 rows).
 */
function scanPlainDecimal(text: string, start: number, marks: number): number {
  let i = start;
  let c = codeAt(text, i);
  let negative = false;
  if (c === 45 || c === 43) {
    negative = c === 45;
    c = codeAt(text, ++i);
  }
  // The whole part, then the fraction after a mark; the digit counts come from the positions.
  let mantissa = 0;
  const wholeStart = i;
  while (c >= 48 && c <= 57) {
    mantissa = mantissa * 10 + (c - 48);
    c = codeAt(text, ++i);
  }
  let digits = i - wholeStart;
  let scale = 0;
  let mark = 0;
  if ((c === 46 && (marks & POINT_MARK) !== 0) || (c === 44 && (marks & COMMA_MARK) !== 0)) {
    mark = c;
    const fractionStart = ++i;
    c = codeAt(text, i);
    while (c >= 48 && c <= 57) {
      mantissa = mantissa * 10 + (c - 48);
      c = codeAt(text, ++i);
    }
    scale = fractionStart - i;
    digits -= scale;
  }
  scanStop = i;
  scanMark = mark;
  scanDigits = digits;
  if (digits === 0 || digits > 15 || c === 101 || c === 69) {
    scanMantissa = mantissa;
    scanScale = scale;
    scanNegative = negative;
    // NaN written as 0 / 0, a number the compiler keeps unboxed: the global `NaN` is loaded as an
    // object, and returning it made every value this function returns a heap number.
    return 0 / 0;
  }
  // At most 15 digits, so at most 15 decimals: the divisor is exact.
  const v = scale < 0 ? mantissa / EXACT_POW10[-scale] : mantissa;
  return negative ? -v : v;
}

/**
 * Reads the number that starts at `text[start]` in the grammar of a plain decimal cell, the same as
 * the table reader's `[+-]?(\d+[.]?\d*|[.]\d+)([eE][+-]?\d+)?` with the accepted decimal marks
 * (`marks`, a sum of POINT_MARK and COMMA_MARK): no spaces, no `Infinity`, no hexadecimal. It stops
 * at the first character that cannot continue the number; `scanEnd()` says where. Returns NaN when
 * no number starts there or an exponent has no digits.
 *
 * The value is the double `Number` gives for that text. When the digits form an integer below 2⁵³
 * and the decimal exponent is within ±22, it is computed here by one multiply or divide of exact
 * operands, which IEEE arithmetic rounds correctly (Clinger's fast path); otherwise `Number` reads
 * the cell's text. Out-of-range text gives ±Infinity or 0, as `Number` does.
 */
export function scanDecimal(text: string, start: number, marks: number): number {
  const plain = scanPlainDecimal(text, start, marks);
  if (plain === plain || scanDigits === 0) return plain;
  let i = scanStop;
  let c = codeAt(text, i);
  let exp = 0;
  if (c === 101 || c === 69) {
    c = codeAt(text, ++i);
    let expNegative = false;
    if (c === 45 || c === 43) {
      expNegative = c === 45;
      c = codeAt(text, ++i);
    }
    const expStart = i;
    while (c >= 48 && c <= 57) {
      // Beyond 10⁶ the value is 0 or Infinity whatever follows; stop growing the integer.
      if (exp < 1e6) exp = exp * 10 + (c - 48);
      c = codeAt(text, ++i);
    }
    scanStop = i;
    if (i === expStart) return NaN;
    if (expNegative) exp = -exp;
  }
  const scale = scanScale + exp;
  if (scanDigits <= 15 && scale >= -22 && scale <= 22) {
    const v = scale < 0 ? scanMantissa / EXACT_POW10[-scale] : scanMantissa * EXACT_POW10[scale];
    return scanNegative ? -v : v;
  }
  const cell = text.slice(start, i);
  return Number(scanMark === 44 ? cell.replace(',', '.') : cell);
}

/** The index just past the number the last `scanDecimal` read (or where it failed). */
export function scanEnd(): number {
  return scanStop;
}

/**
 * The columns every scan writes into, kept for the next one. Fresh arrays for each file (two of
 * ~80 kB for a 4096-channel histogram) made the memory allocator return their pages to the system
 * when they were collected and fault them in again for the next file: most of the page faults of a
 * batch worker, each costly on a virtual machine.
 */
const scratch: Float64Array[] = [];
let scans = 0;

/**
 * How many scans have run in this thread: the columns of a scan stay valid while this is unchanged
 * (the next scan writes into the same arrays).
 */
export function scanCount(): number {
  return scans;
}

/** The scratch columns, each at least `capacity` long. */
function scratchColumns(width: number, capacity: number): Float64Array[] {
  const columns: Float64Array[] = [];
  for (let j = 0; j < width; j++) {
    if (scratch.length <= j || scratch[j].length < capacity) scratch[j] = new Float64Array(capacity);
    columns.push(scratch[j]);
  }
  return columns;
}

/** The columns of a numeric table read by `scanNumericRows`. */
export interface NumericRows {
  /**
   * One array per column; only the first `rowCount` entries are rows (the rest is spare capacity).
   * Shared with the next scan, which writes over them (see `scanCount`).
   */
  columns: Float64Array[];
  rowCount: number;
  decimalMark: '.' | ',';
}

/** `scanNumericRows` separator: one column, no separator. */
export const SINGLE_COLUMN = -1;
/** `scanNumericRows` separator: any run of spaces and tabs. */
export const WHITESPACE = -2;

/**
 * Reads rows of `width` plain decimal cells from `start` to the end of the text, cells separated by
 * `separator` (a character code, SINGLE_COLUMN or WHITESPACE), spaces or tabs (when tab is not the
 * separator) allowed around a cell, a separator allowed after the last cell, lines ended by LF or CRLF,
 * empty lines skipped. Decimal commas
 * are accepted where the separator is not a comma; a file using both marks is left to the general
 * reader, which names the cell. Returns null unless every line is such a row, there is at least one,
 * and every value is finite.
 */
export function scanNumericRows(
  text: string,
  start: number,
  width: number,
  separator: number,
): NumericRows | null {
  const n = text.length;
  const marks = separator === 44 ? POINT_MARK : POINT_MARK | COMMA_MARK;
  // Spaces, and tabs where they do not separate, may pad a cell (tested inline: a closure per
  // character cost a fifth of the scan).
  const tabPads = separator !== 9;
  const whitespace = separator === WHITESPACE;
  // A first guess at the number of rows from the first line's length; doubled when it runs out.
  const firstEnd = text.indexOf('\n', start);
  scans++;
  let columns = scratchColumns(
    width,
    Math.ceil((n - start) / Math.max(1, (firstEnd < 0 ? n : firstEnd) - start + 1)) + 16,
  );
  let capacity = columns[0]?.length ?? 0;
  for (const col of columns) capacity = Math.min(capacity, col.length);
  let rows = 0;
  let sawPoint = false;
  let sawComma = false;
  let i = start;
  while (i < n) {
    let c = codeAt(text, i);
    if (c === 10) {
      i++;
      continue;
    }
    if (c === 13 && codeAt(text, i + 1) === 10) {
      i += 2;
      continue;
    }
    if (rows === capacity) {
      capacity *= 2;
      columns = columns.map((col, j) => {
        const grown = new Float64Array(capacity);
        grown.set(col.subarray(0, rows));
        return (scratch[j] = grown);
      });
    }
    for (let j = 0; j < width; j++) {
      while (c === 32 || (c === 9 && tabPads)) c = codeAt(text, ++i);
      // The common number is stored apart from the rest, so that its value stays an unboxed double.
      const v = scanPlainDecimal(text, i, marks);
      if (v === v) columns[j][rows] = v;
      else {
        const w = scanDecimal(text, i, marks);
        if (!Number.isFinite(w)) return null;
        columns[j][rows] = w;
      }
      if (scanMark === 46) sawPoint = true;
      else if (scanMark === 44) sawComma = true;
      const end = (i = scanStop);
      c = codeAt(text, i);
      while (c === 32 || (c === 9 && tabPads)) c = codeAt(text, ++i);
      if (j < width - 1) {
        if (whitespace) {
          if (i === end) return null;
        } else {
          if (c !== separator) return null;
          c = codeAt(text, ++i);
        }
      }
    }
    // A separator after the last cell (spreadsheet exports) leaves an empty field, which is dropped.
    if (c === separator && separator > 0) {
      c = codeAt(text, ++i);
      while (c === 32 || (c === 9 && tabPads)) c = codeAt(text, ++i);
    }
    if (c === 13) c = codeAt(text, ++i);
    if (c === 10) i++;
    else if (i < n) return null;
    rows++;
  }
  if (rows === 0 || (sawPoint && sawComma)) return null;
  return { columns, rowCount: rows, decimalMark: sawComma ? ',' : '.' };
}
