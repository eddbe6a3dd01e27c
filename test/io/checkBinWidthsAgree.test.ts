import { describe, expect, it } from 'vitest';
import { checkBinWidthsAgree } from '../../src/io/checkBinWidthsAgree.js';
import { InputError } from '../../src/errors.js';
import type { Histogram } from '../../src/io/types.js';

const make = (source: string, binWidthNs: number): Histogram => ({
  timeNs: Float64Array.from([0, binWidthNs]),
  counts: Float64Array.from([1, 1]),
  binWidthNs,
  metadata: {},
  source,
  warnings: [],
});

describe('checkBinWidthsAgree', () => {
  it('accepts widths within 0.1 %', () => {
    expect(() => checkBinWidthsAgree(make('d.csv', 0.0122), make('irf.csv', 0.0122 * 1.0009))).not.toThrow();
  });

  it('refuses widths more than 0.1 % apart, naming both files and both widths', () => {
    let err: unknown;
    try {
      checkBinWidthsAgree(make('d.csv', 0.0122), make('irf.csv', 0.0244));
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(InputError);
    expect((err as Error).message).toMatch(
      /d\.csv has 0\.0122 ns channels but the IRF irf\.csv has 0\.0244 ns/,
    );
    expect(() => checkBinWidthsAgree(make('d.csv', 1), make('irf.csv', 1.0011))).toThrow(InputError);
  });
});
