import { describe, expect, it } from 'vitest';
import { parseCsvCells } from '../../src/batch/csvCells.js';
import { parseManifest } from '../../src/batch/manifest.js';
import { errorOf } from './errorOf.js';

describe('parseCsvCells', () => {
  it('keeps the line and column of every cell, quoted cells and embedded commas included', () => {
    const rows = parseCsvCells('a,b\n"x, y",  z\n', 'm.csv');
    expect(rows[1]).toEqual([
      { value: 'x, y', line: 2, column: 1 },
      { value: 'z', line: 2, column: 10 },
    ]);
  });

  it('reads doubled quotes as one quote and skips blank and # comment lines', () => {
    const rows = parseCsvCells('# comment\n\nq\n"say ""hi"""\n', 'm.csv');
    expect(rows.map((r) => r[0].value)).toEqual(['q', 'say "hi"']);
    expect(rows[1][0].line).toBe(4);
  });

  it('names the line and column of a quote that is never closed', () => {
    const e = errorOf(() => parseCsvCells('a,b\n1,"open\n', 'm.csv'));
    expect(e.message).toBe('m.csv line 2, column 3: a quoted cell is never closed (missing ")');
  });
});

describe('parseManifest', () => {
  it('splits known columns from metadata, which is carried through untouched', () => {
    const m = parseManifest('sample,decay,Temperature_K,qy\ns1,d1.csv, 293.15 ,0.5\n', { source: 'm.csv' });
    expect(m.rows).toHaveLength(1);
    expect(m.rows[0].sample).toBe('s1');
    expect(m.rows[0].cells.decay?.value).toBe('d1.csv');
    expect(m.rows[0].cells.qy?.value).toBe('0.5');
    expect(m.rows[0].metadata).toEqual({ Temperature_K: '293.15' });
    expect(m.rows[0].row).toBe(1);
    expect(m.rows[0].line).toBe(2);
  });

  it('matches known column names case-insensitively', () => {
    const m = parseManifest('Sample,DECAY,IRF\ns1,d.csv,i.csv\n', { source: 'm.csv' });
    expect(m.rows[0].cells.irf?.value).toBe('i.csv');
  });

  it('refuses a manifest without a decay column, naming what it found', () => {
    const e = errorOf(() => parseManifest('sample,irf\ns1,i.csv\n', { source: 'm.csv' }));
    expect(e.message).toBe(
      "m.csv line 1: the header has no 'decay' column; a manifest needs at least sample,decay (found: sample, irf)",
    );
  });

  it('refuses a repeated sample id at the cell of the second one', () => {
    const e = errorOf(() => parseManifest('sample,decay\na,1.csv\nb,2.csv\na,3.csv\n', { source: 'm.csv' }));
    expect(e.message).toBe(
      "m.csv line 4, column 1: sample id 'a' is used twice (first on line 2); ids must be unique",
    );
  });

  it('refuses a row with more cells than the header at the first extra cell', () => {
    const e = errorOf(() => parseManifest('sample,decay\na,1.csv,oops\n', { source: 'm.csv' }));
    expect(e.line).toBe(2);
    expect(e.column).toBe(9);
  });

  it('refuses an empty sample id and a repeated column', () => {
    expect(errorOf(() => parseManifest('sample,decay\n,1.csv\n', { source: 'm.csv' })).message).toBe(
      'm.csv line 2, column 1: the sample id is empty',
    );
    expect(errorOf(() => parseManifest('sample,decay,Decay\n', { source: 'm.csv' })).message).toBe(
      "m.csv line 1, column 14: column 'Decay' appears twice in the header (first at column 8)",
    );
  });

  it('fills the cells of a short row with empty values', () => {
    const m = parseManifest('sample,decay,qy\na,1.csv\n', { source: 'm.csv' });
    expect(m.rows[0].cells.qy?.value).toBe('');
  });
});
