import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { InputError } from '../../src/errors.js';
import { histogramFromTable, parseHistogramText } from '../../src/io/parseHistogram.js';
import { COMMA_MARK, POINT_MARK, scanDecimal, scanEnd } from '../../src/io/scanNumericRows.js';
import {
  cellNumber,
  parseColumnNumbers,
  readGeneralTable,
  readTextTable,
  type TextTable,
} from '../../src/io/textTable.js';

/**
 * The table reader has a fast path for rows of plain numbers and a general reader for everything
 * else. The general reader is the reference here: on any text the two must give the same table, the
 * same numbers bit for bit, the same histogram, and the same refusal at the same line and column.
 * Numbers are also checked against the engine's own string-to-number conversion (ECMAScript
 * StringToNumber, correctly rounded). Property runs are seeded so that a failure can be replayed.
 */

type Outcome<T> = { ok: true; value: T } | { ok: false; message: string; line?: number; column?: number };

function attempt<T>(fn: () => T): Outcome<T> {
  try {
    return { ok: true, value: fn() };
  } catch (err) {
    if (!(err instanceof InputError)) throw err;
    return { ok: false, message: err.message, line: err.line, column: err.column };
  }
}

/** Everything a table says, with each column's numbers (or the error reading them) and its rows. */
function tableSummary(t: TextTable) {
  return {
    delimiter: t.delimiter,
    decimalMark: t.decimalMark,
    header: t.header,
    columns: t.columns,
    rowCount: t.rowCount,
    metadata: t.metadata,
    metadataLines: t.metadataLines,
    headerLine: t.headerLine,
    warnings: t.warnings,
    // Arrays of numbers compared with Object.is, so that −0 and 0 differ.
    numbers: t.columns.map((_, j) => {
      const r = attempt(() => parseColumnNumbers(t, j));
      return r.ok ? Array.from(r.value, (v) => (Object.is(v, -0) ? '-0' : v)) : r;
    }),
    rows: t.rows,
  };
}

function expectSameTable(text: string): { fast: Outcome<TextTable>; general: Outcome<TextTable> } {
  const fast = attempt(() => readTextTable(text, 'f.csv'));
  const general = attempt(() => readGeneralTable(text, 'f.csv'));
  if (fast.ok && general.ok) expect(tableSummary(fast.value)).toEqual(tableSummary(general.value));
  else expect(fast).toEqual(general);
  return { fast, general };
}

function histogramSummary(table: Outcome<TextTable>) {
  if (!table.ok) return table;
  const h = attempt(() => histogramFromTable(table.value, { source: 'f.csv', binWidthNs: 0.01 }));
  if (!h.ok) return h;
  return { ...h.value, timeNs: Array.from(h.value.timeNs), counts: Array.from(h.value.counts) };
}

const digits = (min: number, max: number) =>
  fc.array(fc.integer({ min: 0, max: 9 }), { minLength: min, maxLength: max }).map((d) => d.join(''));

/** A plain decimal cell with the decimal mark `.`: signs, leading zeros, exponents, up to 18 digits. */
const plainNumber = fc
  .record({
    sign: fc.constantFrom('', '', '-', '+'),
    whole: digits(0, 12),
    point: fc.boolean(),
    fraction: digits(0, 8),
    exp: fc.option(fc.integer({ min: -30, max: 30 }), { nil: undefined, freq: 4 }),
    expCase: fc.constantFrom('e', 'E'),
    special: fc.constantFrom(null, null, null, null, null, null, '0', '-0', '+0', '0.0', '-0.0', '1e-320'),
  })
  .map(({ sign, whole, point, fraction, exp, expCase, special }) => {
    if (special) return special;
    const body = point ? `${whole}.${fraction}` : whole + fraction;
    return `${sign}${body}${exp === undefined ? '' : `${expCase}${exp}`}`;
  })
  .filter((s) => /\d/.test(s.replace(/[eE].*$/, '')));

const SEPARATORS = [',', '\t', ';', ' ', '   ', ''] as const;

/** A table of plain numbers with random dressing; every one is a file the fast path should take. */
const plainTable = fc
  .record({
    sep: fc.constantFrom(...SEPARATORS),
    width: fc.integer({ min: 1, max: 4 }),
    rows: fc.array(fc.array(plainNumber, { minLength: 4, maxLength: 4 }), { minLength: 1, maxLength: 30 }),
    header: fc.constantFrom(null, 'time_ns', 'time (ps)', 'channel'),
    decimalComma: fc.boolean(),
    crlf: fc.boolean(),
    trailingNewline: fc.boolean(),
    bom: fc.boolean(),
    meta: fc.boolean(),
    pads: fc.array(fc.constantFrom('', '', '', ' ', '  '), { minLength: 8, maxLength: 8 }),
    blankAt: fc.option(fc.nat(), { nil: undefined }),
    trailing: fc.array(fc.boolean(), { minLength: 8, maxLength: 8 }),
    quoted: fc.boolean(),
  })
  .map((g) => {
    const width = g.sep === '' ? 1 : g.width;
    const blank = g.sep.trim() === '';
    // A decimal comma only where the comma does not separate columns: with a semicolon or tab, or
    // with spaces below a header (a comma on the first line makes the comma the separator).
    const comma = g.decimalComma && width > 1 && (g.sep === ';' || g.sep === '\t' || (blank && g.header));
    const header = g.header;
    const nl = g.crlf ? '\r\n' : '\n';
    const lines: string[] = [];
    if (g.meta) lines.push('# sample: fast', '# bin_width_ns: 0.01', '#', '');
    // A separator after the last cell (spreadsheet exports) where there is a separator to repeat.
    const trail = (k: number) => (width > 1 && !blank && g.trailing[k % g.trailing.length] ? g.sep : '');
    const names = [header, 'counts', 'b', 'c'].slice(0, width);
    if (header)
      lines.push(names.map((h) => (g.quoted && width > 1 && !blank ? `"${h}"` : h)).join(g.sep) + trail(7));
    g.rows.forEach((row, r) => {
      const cells = row.slice(0, width).map((c, j) => {
        const pad = g.pads[(r + j) % g.pads.length];
        return pad + (comma ? c.replace('.', ',') : c) + (j % 2 ? pad : '');
      });
      lines.push(cells.join(g.sep) + trail(r));
    });
    if (g.blankAt !== undefined) lines.splice(lines.length - (g.blankAt % g.rows.length), 0, '');
    const text = (g.bom ? '\ufeff' : '') + lines.join(nl) + (g.trailingNewline ? nl : '');
    return { text, cells: g.rows.map((row) => row.slice(0, width)) };
  });

describe('scanning a decimal number in place', () => {
  it('gives the double the engine gives and stops after the number', () => {
    fc.assert(
      fc.property(plainNumber, fc.constantFrom(',', ';', '\t', '\r', '\n', ' ', 'x'), (cell, after) => {
        const text = `x${cell}${after}9`;
        const v = scanDecimal(text, 1, POINT_MARK);
        expect(Object.is(v, Number(cell))).toBe(true);
        expect(scanEnd()).toBe(1 + cell.length);
      }),
      { seed: 7, numRuns: 2000 },
    );
  });

  it('reads beyond 15 digits and beyond 10^±22 through the engine, exactly', () => {
    // Clinger's fast path ends at 15 digits and 10^22; these cells sit just past it.
    for (const cell of [
      '1234567890123456',
      '0.1234567890123456789',
      '1e23',
      '9.999e-23',
      '1e400',
      '2e-400',
    ]) {
      expect(Object.is(scanDecimal(cell, 0, POINT_MARK), Number(cell))).toBe(true);
      expect(scanEnd()).toBe(cell.length);
    }
  });

  it('reads a decimal comma only when asked to', () => {
    expect(scanDecimal('1,25', 0, COMMA_MARK)).toBe(1.25);
    expect(scanDecimal('1,25', 0, POINT_MARK)).toBe(1);
    expect(scanEnd()).toBe(1);
    expect(scanDecimal('1.25', 0, COMMA_MARK)).toBe(1);
  });

  it('finds no number in a sign, a point, an exponent without digits or a word', () => {
    for (const cell of ['-', '+', '.', '-.', 'e5', '1e', '1e+', 'NaN', 'Infinity', ' 1']) {
      const v = scanDecimal(cell, 0, POINT_MARK);
      expect(Number.isNaN(v), cell).toBe(true);
    }
  });
});

describe('the fast path of the table reader', () => {
  it('takes every table of plain numbers and reads it exactly as the general reader does (1500 tables)', () => {
    fc.assert(
      fc.property(plainTable, ({ text, cells }) => {
        const { fast } = expectSameTable(text);
        expect(fast.ok).toBe(true);
        const table = (fast as { value: TextTable }).value;
        // The fast path really ran: only it fills in the numbers.
        expect(table.numbers).toBeDefined();
        expect(table.rowCount).toBe(cells.length);
        for (let j = 0; j < cells[0].length; j++) {
          const got = parseColumnNumbers(table, j);
          cells.forEach((row, r) => expect(Object.is(got[r], Number(row[j]))).toBe(true));
        }
      }),
      { seed: 11, numRuns: 1500 },
    );
  });

  it('grows its columns when the rows outnumber the guess made from the first line', () => {
    // The guess divides the text by the first line's length: a long first line and short ones after
    // it make the columns double several times.
    const rows = Array.from({ length: 300 }, (_, i) => `${i + 1},${(i * 7) % 13}`);
    const text = `x,y\n0.000000000000000001,1000000000000000\n${rows.join('\n')}\n`;
    const { fast } = expectSameTable(text);
    const table = (fast as { value: TextTable }).value;
    expect(table.numbers).toBeDefined();
    expect(table.rowCount).toBe(301);
    expect(Array.from(parseColumnNumbers(table, 0).subarray(299))).toEqual([299, 300]);
  });

  it("keeps a table's numbers when another file is read after it (the scanner reuses its arrays)", () => {
    const a = readTextTable('time_ns,c\n0,5\n1,7\n2,9\n', 'a.csv');
    const b = readTextTable('time_ns,c\n0,100\n1,200\n', 'b.csv');
    expect(Array.from(parseColumnNumbers(a, 1))).toEqual([5, 7, 9]);
    expect(cellNumber(a, 2, 0)).toBe(2);
    expect(Array.from(parseColumnNumbers(b, 1))).toEqual([100, 200]);
    expect(Array.from(histogramFromTable(a, { source: 'a.csv' }).counts)).toEqual([5, 7, 9]);
  });

  it('joins a unit to its name in a whitespace header when that makes it as wide as the rows', () => {
    const { fast } = expectSameTable('time (ps)   counts [1]\n0 1\n1 2\n');
    const table = (fast as { value: TextTable }).value;
    expect(table.numbers).toBeDefined();
    expect(table.columns).toEqual(['time(ps)', 'counts[1]']);
  });

  it('leaves a file with an unusual line to the general reader, which reads it alike', () => {
    const cases = [
      'time_ns,counts\n0,1\n# late: metadata\n1,2\n', // a comment among the data
      'time_ns,counts\n0,1,,\n1,2\n', // two trailing separators: refused
      'time_ns,counts\n"0",1\n1,2\n', // a quoted cell
      '"time_ns,counts\n0,1\n1,2\n', // an unterminated quote: refused
      '"time_ns,counts\n0,1\n1,\u00002\n', // and binary data, which is named first
      'time_ns,counts\r0,1\r1,2\r', // CR line ends
      'time (ps) counts\n0 1\n1 2 3\n', // a ragged whitespace table: refused
      'a;b\n1,5;2\n2.5;3\n', // mixed decimal marks: refused
      'time_ns,counts\n0,1\n1\n', // a short row: refused
      'time_ns,counts\n0,1\n1,x\n', // a word: refused when the column is read
      'time_ns,,counts\n0,1,2\n1,2,3\n', // a column without a name: refused
      'time_ns,counts,Counts\n0,1,2\n1,2,3\n', // a name given twice: refused
    ];
    for (const text of cases) {
      const { fast } = expectSameTable(text);
      if (fast.ok) expect(fast.value.numbers).toBeUndefined();
    }
  });

  it('agrees with the general reader on damaged tables, refusals included (3000 tables)', () => {
    const damage = fc.record({
      at: fc.nat(),
      text: fc.constantFrom(
        'x',
        '',
        ' ',
        '\t',
        ',',
        ';',
        '.',
        '-',
        '+',
        'e',
        'E7',
        '"',
        '#',
        '# k: v\n',
        '\n',
        '\r',
        '\r\n',
        '\u0000',
        '\u0007',
        '\ufffd',
        '\ufeff',
        '\u00a0',
        '1e999',
        '٣',
      ),
      cut: fc.boolean(),
    });
    fc.assert(
      fc.property(plainTable, fc.array(damage, { minLength: 1, maxLength: 3 }), ({ text }, ds) => {
        const damaged = ds.reduce((t, d) => {
          const at = d.at % (t.length + 1);
          return t.slice(0, at) + d.text + t.slice(d.cut ? at + 1 : at);
        }, text);
        const { fast, general } = expectSameTable(damaged);
        expect(histogramSummary(fast)).toEqual(histogramSummary(general));
      }),
      { seed: 12, numRuns: 3000 },
    );
  });

  it('names the line and column of a bad cell put at a random place, as the general reader does', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 3, max: 40 }),
        fc.nat(),
        fc.nat(),
        fc.constantFrom('abc', '1e', '--1', '1.2.3', 'NaN', '1e999', '', ' ', '0x10', '1 2'),
        fc.constantFrom(',', ';', '\t'),
        fc.boolean(),
        (n, rowPick, colPick, bad, sep, crlf) => {
          const rows = Array.from({ length: n }, (_, i) => [(i * 0.01).toFixed(2), String(100 + i)]);
          const r = rowPick % n;
          const c = colPick % 2;
          rows[r][c] = bad;
          const nl = crlf ? '\r\n' : '\n';
          const text = `# bin_width_ns: 0.01${nl}time_ns${sep}counts${nl}${rows.map((row) => row.join(sep)).join(nl)}${nl}`;
          const err = attempt(() => parseHistogramText(text, { source: 'f.csv' }));
          expect(err.ok).toBe(false);
          const general = attempt(() =>
            histogramFromTable(readGeneralTable(text, 'f.csv'), { source: 'f.csv' }),
          );
          expect(err).toEqual(general);
          // Line 1 is the metadata, line 2 the header: row r is on line r + 3.
          expect(err).toMatchObject({ line: r + 3 });
          expect(err).toMatchObject({ column: c + 1 });
        },
      ),
      { seed: 13, numRuns: 500 },
    );
  });

  it('gives the same histogram and the same refusal of its values as the general reader', () => {
    const files = [
      'time_ns,counts\n0,5\n0.01,7\n0.02,9\n', // plain
      'time_ns,counts\n0,5\n0.01,7.5\n0.02,9\n', // a non-whole count: a warning quoting the cell
      'time_ns,counts\n0,5\n0.01,-7\n0.02,9\n', // a negative count
      'time_ns,counts\n0,5\n0.01,2e15\n0.02,9\n', // an implausible count
      'time_ns,counts\n0,5\n0.02,7\n0.01,9\n', // time going back
      'time_ns,counts\n0,5\n0.01,7\n0.03,9\n0.04,9\n', // a gap in the axis
      'time_ns,counts\n0,5\n0.010,7\n0.021,9\n0.030,9\n', // steps uneven by the printing only
      'channel,counts\n0,5\n1,7\n3,9\n', // a missing channel
      'channel,counts\n4,5\n5,7\n6,9\n', // channels from 4
      '0,5\n1,7\n2,9\n', // no header: channel indices
      '0,5\n0.01,7\n0.02,9\n', // no header: a time axis in ns
      '5\n7\n9\n', // counts only
      '# bin_width_ps: 10\n# bin_width_ps: 12\ntime_ns,counts\n0,5\n0.01,7\n', // metadata given twice
      'time_ns,counts\n0,0\n0.01,0\n', // every count zero
    ];
    for (const text of files) {
      const fast = attempt(() => readTextTable(text, 'f.csv'));
      const general = attempt(() => readGeneralTable(text, 'f.csv'));
      expect(fast.ok && fast.value.numbers).toBeTruthy();
      expect(histogramSummary(fast)).toEqual(histogramSummary(general));
    }
  });
});
