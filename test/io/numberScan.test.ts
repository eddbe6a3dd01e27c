import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { parseColumnNumbers, readTextTable, splitAt } from '../../src/io/textTable.js';
import { kthSmallest } from '../../src/io/parseHistogram.js';
import { expectInputError } from './expectInputError.js';

/**
 * The importer scans plain decimal cells by hand on its fast path. Reference: the JavaScript
 * engine's own string-to-number conversion (ECMAScript StringToNumber, correctly rounded), which the
 * scanner must match bit for bit, on both sides of its limits (15 digits, exponents of ±22).
 */
const digits = (min: number, max: number) =>
  fc.array(fc.integer({ min: 0, max: 9 }), { minLength: min, maxLength: max }).map((d) => d.join(''));

const cellText = fc
  .record({
    sign: fc.constantFrom('', '-', '+'),
    whole: digits(0, 18),
    point: fc.boolean(),
    fraction: digits(0, 18),
    exp: fc.option(fc.integer({ min: -40, max: 40 }), { nil: undefined }),
    expCase: fc.constantFrom('e', 'E'),
  })
  .map(({ sign, whole, point, fraction, exp, expCase }) => {
    const body = point ? `${whole}.${fraction}` : whole + fraction;
    return `${sign}${body}${exp === undefined ? '' : `${expCase}${exp}`}`;
  })
  .filter((s) => /\d/.test(s.replace(/[eE].*$/, '')));

describe('parsing a numeric column', () => {
  it('gives exactly the double the engine gives for every plain decimal cell', () => {
    fc.assert(
      fc.property(fc.array(cellText, { minLength: 1, maxLength: 40 }), (cells) => {
        const table = readTextTable(['value', ...cells].join('\n') + '\n', 'cells.txt');
        const got = parseColumnNumbers(table, 0);
        const want = cells.map(Number);
        for (let i = 0; i < cells.length; i++) expect(Object.is(got[i], want[i])).toBe(true);
      }),
      { numRuns: 300 },
    );
  });

  it('reads a decimal comma as the engine reads the same cell with a point', () => {
    const table = readTextTable('a;b\n1,5;0,0122\n-2,25e3;7\n', 'comma.txt');
    expect(Array.from(parseColumnNumbers(table, 0))).toEqual([1.5, -2250]);
    expect(Array.from(parseColumnNumbers(table, 1))).toEqual([Number('0.0122'), 7]);
  });

  it('still names the line and column of a cell that is no number', () => {
    const table = readTextTable('t,c\n0,1\n1,1e\n', 'bad.csv');
    expectInputError(() => parseColumnNumbers(table, 1, 'a count'), {
      file: 'bad.csv',
      line: 3,
      column: 2,
      match: /'1e' is not a count/,
    });
  });
});

describe('cutting a line at its separator', () => {
  it('gives the fields String.prototype.split gives, empty ones included', () => {
    // Reference: the ECMAScript String.prototype.split of the engine.
    fc.assert(
      fc.property(
        fc.string({ unit: fc.constantFrom('a', '1', ',', ';', '\t', ' ', '.') }),
        fc.constantFrom(',', ';', '\t'),
        (text, sep) => {
          expect(splitAt(text, sep)).toEqual(text.split(sep));
        },
      ),
      { numRuns: 500 },
    );
  });
});

describe('the median step of a time axis', () => {
  it('is the value a full numeric sort puts at that rank', () => {
    // Reference: TypedArray.prototype.sort of the engine (numeric order).
    fc.assert(
      fc.property(
        fc.array(fc.double({ min: 1e-300, max: 1, noNaN: true }), { minLength: 1, maxLength: 300 }),
        fc.nat(),
        (xs, r) => {
          const k = r % xs.length;
          const sorted = Float64Array.from(xs).sort();
          expect(kthSmallest(Float64Array.from(xs), k)).toBe(sorted[k]);
        },
      ),
      { numRuns: 500 },
    );
  });
});
