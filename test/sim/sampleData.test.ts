import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { parseHistogramText } from '../../src/io/parseHistogram.js';
import { parseSpectrumText } from '../../src/io/parseSpectrum.js';

// The demo data are invented; these checks keep the committed files readable, small and consistent
// with the truth they claim, whose worked values come from outside the project.
const dir = join(import.meta.dirname, '..', '..', 'sample-data');

function manifest(name: string): Record<string, string>[] {
  const [header, ...rows] = readFileSync(join(dir, name), 'utf8').trim().split('\n');
  const cols = header.split(',');
  return rows.map((r) => Object.fromEntries(r.split(',').map((v, i) => [cols[i], v])));
}

interface Truth {
  samples: {
    sample: string;
    components: { tauNs: number; amplitudeFraction: number }[];
    krPerS: number;
    knrPerS: number[];
    qyTrue: number;
    temperatureK?: number;
    quencherM?: number;
  }[];
}
const truth: Truth = JSON.parse(readFileSync(join(dir, 'truth.json'), 'utf8'));
const bySample = new Map(truth.samples.map((s) => [s.sample, s]));

function sizeOf(path: string): number {
  const st = statSync(path);
  if (!st.isDirectory()) return st.size;
  return readdirSync(path).reduce((s, f) => s + sizeOf(join(path, f)), 0);
}

describe('sample-data', () => {
  it('stays under 5 MB', () => {
    expect(sizeOf(dir)).toBeLessThan(5 * 1024 * 1024);
  });

  it('has a manifest whose every file and column the importer reads', () => {
    const rows = manifest('manifest.csv');
    expect(rows.length).toBe(truth.samples.length);
    for (const row of rows) {
      expect(bySample.has(row.sample)).toBe(true);
      for (const key of ['decay', 'irf'] as const) {
        const [file, column] = row[key].split('#');
        const h = parseHistogramText(readFileSync(join(dir, file), 'utf8'), { source: row[key], column });
        expect(h.binWidthNs).toBeCloseTo(0.0122, 9);
        expect(Number(h.metadata.period_ns)).toBe(Number(row.period_ns));
      }
      const abs = parseSpectrumText(readFileSync(join(dir, row.absorption), 'utf8'), {
        source: row.absorption,
        kind: 'absorption',
      });
      expect(abs.axis).toBe('nm');
      const em = parseSpectrumText(readFileSync(join(dir, row.emission), 'utf8'), {
        source: row.emission,
        kind: 'emission',
      });
      expect(em.emissionOrdinate).toBe('photonsPerAxisUnit');
    }
  });

  it('peaks near 10 000 counts in every decay', () => {
    for (const row of manifest('manifest.csv')) {
      const [file, column] = row.decay.split('#');
      const h = parseHistogramText(readFileSync(join(dir, file), 'utf8'), { source: row.decay, column });
      // Poisson(1e4) plus a background of a few counts: ±4σ = ±400.
      expect(Math.abs(Math.max(...h.counts) - 10_000)).toBeLessThan(450);
    }
  });

  it('follows the Arrhenius worked values at 293.15 K and 313.15 K', () => {
    // REFERENCE-VALUES §12 (arithmetic VERIFIED): k_r = 1e8, k0 = 1e7, A = 1e13 s⁻¹, Ea = 30 kJ/mol →
    // 293.15 K: τ = 6.445693 ns, Φ = 0.644569; 313.15 K: τ = 4.782885 ns.
    const t293 = bySample.get('qx1-ethanol-293K')!;
    const t313 = bySample.get('qx1-ethanol-313K')!;
    expect(t293.components[0].tauNs).toBeCloseTo(6.445693, 5);
    expect(t293.qyTrue).toBeCloseTo(0.644569, 5);
    expect(t313.components[0].tauNs).toBeCloseTo(4.782885, 5);
  });

  it('follows the Stern–Volmer worked value at 0.05 M', () => {
    // REFERENCE-VALUES §12: τ0 = 4 ns, k_q = 1e10 M⁻¹ s⁻¹, [Q] = 0.05 M → τ = 1.333333 ns.
    expect(bySample.get('qx2-acetonitrile-q0.05M')!.components[0].tauNs).toBeCloseTo(1.333333, 5);
    expect(bySample.get('qx2-acetonitrile-q0.00M')!.components[0].tauNs).toBeCloseTo(4, 9);
  });

  it('keeps k_r + k_nr = 1/τ for every component', () => {
    for (const s of truth.samples) {
      s.components.forEach((c, i) => expect((s.krPerS + s.knrPerS[i]) * c.tauNs * 1e-9).toBeCloseTo(1, 6));
    }
  });

  it('lists the bad rows of the error demo after three good ones', () => {
    const rows = manifest('manifest-with-bad-rows.csv');
    expect(rows.map((r) => r.sample)).toEqual([
      'qx1-ethanol',
      'qx2-ethanol',
      'qx3-acetonitrile',
      'qx9-missing',
      'garbage-decay',
      'qx2-ethanol-bad-irf',
    ]);
    expect(() => statSync(join(dir, rows[3].decay))).toThrow();
    expect(() =>
      parseHistogramText(readFileSync(join(dir, rows[4].decay), 'utf8'), { source: rows[4].decay }),
    ).toThrow(/line 5/);
    const irf = parseHistogramText(readFileSync(join(dir, rows[5].irf), 'utf8'), { source: rows[5].irf });
    expect(irf.binWidthNs).toBeCloseTo(0.0244, 9);
  });
});
