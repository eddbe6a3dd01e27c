import { InputError } from '../errors.js';

/** One cell of a comma-separated table with the place it was read from (1-based, as an editor shows). */
export interface Cell {
  value: string;
  line: number;
  column: number;
}

/**
 * Splits comma-separated text into rows of cells, keeping each cell's line and column so that later
 * checks can point at it. RFC 4180 quoting: a quoted cell may hold commas, doubled quotes and line
 * breaks. Blank lines and lines starting with `#` are skipped. Cells are trimmed unless quoted.
 */
export function parseCsvCells(text: string, source: string): Cell[][] {
  const rows: Cell[][] = [];
  let i = 0;
  let line = 1;
  let col = 1;
  const n = text.length;
  if (text.charCodeAt(0) === 0xfeff) i = 1;
  while (i < n) {
    // Start of a record: skip blank and comment lines.
    if (text[i] === '\n' || text[i] === '\r') {
      if (text[i] === '\r' && text[i + 1] === '\n') i++;
      i++;
      line++;
      col = 1;
      continue;
    }
    if (text[i] === '#') {
      while (i < n && text[i] !== '\n') i++;
      continue;
    }
    const row: Cell[] = [];
    for (;;) {
      // Leading spaces before a cell are not part of it.
      while (i < n && (text[i] === ' ' || text[i] === '\t')) {
        i++;
        col++;
      }
      const cellLine = line;
      const cellCol = col;
      let value = '';
      if (text[i] === '"') {
        i++;
        col++;
        for (;;) {
          if (i >= n)
            throw new InputError('a quoted cell is never closed (missing ")', {
              file: source,
              line: cellLine,
              column: cellCol,
            });
          const ch = text[i];
          if (ch === '"') {
            if (text[i + 1] === '"') {
              value += '"';
              i += 2;
              col += 2;
              continue;
            }
            i++;
            col++;
            break;
          }
          if (ch === '\n') {
            line++;
            col = 1;
          } else col++;
          value += ch;
          i++;
        }
        while (i < n && (text[i] === ' ' || text[i] === '\t')) {
          i++;
          col++;
        }
        if (i < n && text[i] !== ',' && text[i] !== '\n' && text[i] !== '\r') {
          throw new InputError(
            `unexpected '${text[i]}' after a quoted cell; expected a comma or the end of the line`,
            {
              file: source,
              line,
              column: col,
            },
          );
        }
      } else {
        const start = i;
        while (i < n && text[i] !== ',' && text[i] !== '\n' && text[i] !== '\r') i++;
        value = text.slice(start, i).trimEnd();
        col += i - start;
      }
      row.push({ value, line: cellLine, column: cellCol });
      if (i < n && text[i] === ',') {
        i++;
        col++;
        continue;
      }
      break;
    }
    rows.push(row);
  }
  return rows;
}

/** Quotes a cell for CSV output when it needs it (comma, quote, line break, leading/trailing space). */
export function csvQuote(value: string): string {
  if (/[",\r\n]/.test(value) || value !== value.trim()) return `"${value.replace(/"/g, '""')}"`;
  return value;
}
