import { describe, expect, it } from 'vitest';
import { csvCell, toCsv } from '../../viewer/csv.js';

describe('CSV of the sample table', () => {
  it('quotes cells with commas, quotes or line breaks as RFC 4180 says', () => {
    expect(csvCell('a,b')).toBe('"a,b"');
    expect(csvCell('say "hi"')).toBe('"say ""hi"""');
    expect(csvCell('two\nlines')).toBe('"two\nlines"');
  });

  it('defuses text a spreadsheet would run as a formula, but leaves negative numbers alone', () => {
    expect(csvCell('=HYPERLINK("x")')).toBe(`"'=HYPERLINK(""x"")"`);
    expect(csvCell('@sum')).toBe("'@sum");
    expect(csvCell(-1.5)).toBe('-1.5');
  });

  it('writes missing and non-finite numbers as empty cells', () => {
    expect(toCsv(['a', 'b', 'c'], [[null, Number.NaN, 2]])).toBe('a,b,c\r\n,,2\r\n');
  });
});
