import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { parseHistogramText } from '../../src/io/parseHistogram.js';
import { parseSpectrumText } from '../../src/io/parseSpectrum.js';
import { checkBinWidthsAgree } from '../../src/io/checkBinWidthsAgree.js';
import { expectInputError } from './expectInputError.js';

// The demo scenario in sample-data/ is invented; these tests check only that the importer reads
// every file of it the way the manifest means, and refuses the two deliberately bad ones.
const root = join(import.meta.dirname, '..', '..', 'sample-data');
const read = (rel: string) => readFileSync(join(root, rel), 'utf8');
const files = (dir: string) => readdirSync(join(root, dir)).map((f) => `${dir}/${f}`);

describe('the demo data', () => {
  it('every decay and IRF file reads, each decay column of multi-decay files included', () => {
    let decays = 0;
    for (const rel of [...files('decays'), ...files('irf')]) {
      // The counts columns as the header names them (the writer puts time_ns first).
      const header = read(rel)
        .split('\n')
        .find((l) => l.startsWith('time_ns'))!;
      const columns = header.split(',').slice(1);
      for (const column of columns) {
        const h = parseHistogramText(read(rel), { source: rel, column });
        expect(h.binWidthNs).toBeCloseTo(0.0122, 9);
        expect(h.counts.every((c) => Number.isInteger(c) && c >= 0)).toBe(true);
        decays++;
      }
    }
    expect(decays).toBeGreaterThan(10);
  });

  it('every spectrum reads on a wavelength axis', () => {
    for (const rel of files('spectra')) {
      const s = parseSpectrumText(read(rel), {
        source: rel,
        kind: rel.includes('absorption') ? 'absorption' : 'emission',
      });
      expect(s.axis).toBe('nm');
      expect(s.x.length).toBeGreaterThan(100);
    }
  });

  it('the garbage decay is refused at its bad cell, and the coarse IRF at the bin-width check', () => {
    expectInputError(
      () => parseHistogramText(read('bad/garbage-decay.csv'), { source: 'bad/garbage-decay.csv' }),
      {
        file: 'bad/garbage-decay.csv',
        line: 5,
        column: 2,
      },
    );
    const decay = parseHistogramText(read('decays/qx1-ethanol.csv'), { source: 'decays/qx1-ethanol.csv' });
    const irf = parseHistogramText(read('bad/irf-coarse-bins.csv'), { source: 'bad/irf-coarse-bins.csv' });
    expect(() => checkBinWidthsAgree(decay, irf)).toThrow(
      /qx1-ethanol\.csv has 0\.0122 ns channels but the IRF bad\/irf-coarse-bins\.csv has 0\.0244 ns/,
    );
  });
});
