import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { SCHEMA_VERSION } from '../../shared/schema.js';
import { firstJsonError } from '../../src/batch/jsonPositions.js';
import { fitResultWith } from '../physics/fitFixture.js';
import { runCliSync } from './runCli.js';

const dir = mkdtempSync(join(tmpdir(), 'lumirate-physics-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const at = (name: string) => join(dir, name);
const rel = (a: number, b: number) => Math.abs(a / b - 1);

const lumirate = (...args: string[]) => runCliSync(args);

/** A fit result file with two components a = (0.5, 0.5), τ = (1, 4) ns: ⟨τ⟩_a = 2.5 ns (REFERENCE-VALUES §7). */
function fitJson() {
  return fitResultWith(
    [
      { tauNs: 1, tauErrNs: 0.02, amplitude: 500 },
      { tauNs: 4, tauErrNs: 0.02, amplitude: 500 },
    ],
    0.03,
  );
}

function sampleResult(sample: string) {
  return {
    schemaVersion: SCHEMA_VERSION,
    sample,
    status: 'ok',
    metadata: {},
    fit: fitJson(),
    warnings: [],
    provenance: {
      lumirateVersion: '0',
      schemaVersion: SCHEMA_VERSION,
      inputs: [],
      settings: {},
      timeUtc: '',
      seed: null,
    },
  };
}

describe('firstJsonError', () => {
  it('agrees with the engine’s JSON.parse on what is valid, and points at the first bad character', () => {
    const cases: [string, number][] = [
      ['{"a":1}', -1],
      ['{"a":[1,{"b":"x\\"y"}],"c":-1.5e-3}', -1],
      ['[1e5, true, null, false]', -1],
      ['{"a":}', 5],
      ['[1,2,]', 5],
      ['{"a":1} x', 8],
      ['"abc', 4],
      ['-01', 2],
      ["{'a':1}", 1],
    ];
    for (const [text, offset] of cases) {
      let valid = true;
      try {
        JSON.parse(text);
      } catch {
        valid = false;
      }
      const offsetFound = firstJsonError(text)?.offset ?? -1;
      expect(offsetFound < 0).toBe(valid);
      expect(offsetFound).toBe(offset);
    }
  });
});

describe('lumirate rates', () => {
  it('prints rates with units in the JSON field names (REFERENCE-VALUES §7 worked example)', () => {
    const r = lumirate(
      'rates',
      '--tau-ns',
      '4',
      '--tau-err-ns',
      '0.04',
      '--qy',
      '0.5',
      '--qy-err',
      '0.02',
      '--json',
    );
    expect(r.code).toBe(0);
    const j = JSON.parse(r.stdout);
    // §7 (VERIFIED): k_r = k_nr = 1.2500e8 ± 5.1539e6 s⁻¹.
    expect(rel(j.krPerS, 1.25e8)).toBeLessThan(1e-12);
    expect(rel(j.knrPerS, 1.25e8)).toBeLessThan(1e-12);
    expect(rel(j.krErrPerS, 5.1539e6)).toBeLessThan(1e-4);
    expect(rel(j.knrErrPerS, 5.1539e6)).toBeLessThan(1e-4);
    expect(j.tau0Ns).toBeCloseTo(8, 12);
  });

  it('refuses Φ = 1.3 with exit code 2 and one error line', () => {
    const r = lumirate('rates', '--tau-ns', '4', '--qy', '1.3');
    expect(r.code).toBe(2);
    expect(r.stdout).toBe('');
    expect(r.stderr).toMatch(/^error: the quantum yield Φ = 1\.3 is outside \(0, 1\]/);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
  });

  it('takes the amplitude-weighted lifetime from a fit file and a chosen sample of a results file', () => {
    writeFileSync(at('fit.json'), JSON.stringify(fitJson()));
    const a = lumirate('rates', '--from', at('fit.json'), '--qy', '0.4', '--json');
    expect(a.code).toBe(0);
    const j = JSON.parse(a.stdout);
    expect(j.tauBasis).toBe('amplitudeWeighted');
    expect(j.tauNs).toBe(2.5);
    expect(rel(j.krPerS, 0.4 / 2.5e-9)).toBeLessThan(1e-12);

    writeFileSync(at('results.json'), JSON.stringify([sampleResult('dye-a'), sampleResult('dye-b')]));
    const b = lumirate('rates', '--from', at('results.json'), '--qy', '0.4');
    expect(b.code).toBe(2);
    expect(b.stderr).toMatch(/holds 2 fitted samples; pick one with --sample \(dye-a, dye-b\)/);
    const c = lumirate(
      'rates',
      '--from',
      at('results.json'),
      '--sample',
      'dye-b',
      '--qy',
      '0.4',
      '--common-kr',
    );
    expect(c.code).toBe(0);
    expect(c.stdout).toMatch(/sample dye-b/);
    expect(c.stdout).toMatch(/per component \(common k_r\)/);
    expect(c.stdout).toMatch(/amplitude-weighted average/);
  });

  it('names the line and column of broken JSON', () => {
    writeFileSync(at('broken.json'), '{\n  "schemaVersion": "1.0.0",\n  "components": [,]\n}\n');
    const r = lumirate('rates', '--from', at('broken.json'), '--qy', '0.4');
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(
      /broken\.json line 3, column 18: not valid JSON: expected a value but found ','/,
    );
  });
});

// REFERENCE-VALUES §6 worked example (b) (VERIFIED): the Gaussian bands on a 1 nm grid, emission in photons per nm;
// k_r = 2.092710e8 s⁻¹ with n = 1.3611 (ethanol's n_D in the built-in table, CRC, FROM MEMORY).
function writeSpectra(negativeBand = false) {
  const eps = (nu: number) => 5e4 * Math.exp(-((nu - 20000) ** 2) / (2 * 1000 ** 2));
  const F = (nu: number) => Math.exp(-((nu - 18500) ** 2) / (2 * 900 ** 2));
  const abs = ['# ordinate_unit: L mol-1 cm-1', 'wavelength_nm,epsilon'];
  const em = ['# ordinate: photons', 'wavelength_nm,photons'];
  for (let l = 300; l <= 1200; l++) {
    const e = negativeBand && l >= 470 && l <= 480 ? -9000 : eps(1e7 / l);
    abs.push(`${l},${e.toPrecision(15)}`);
    em.push(`${l},${((F(1e7 / l) * 1e7) / l ** 2).toPrecision(15)}`);
  }
  const name = negativeBand ? 'neg' : 'ok';
  writeFileSync(at(`${name}-abs.csv`), abs.join('\n') + '\n');
  writeFileSync(at(`${name}-em.csv`), em.join('\n') + '\n');
  return { absorption: at(`${name}-abs.csv`), emission: at(`${name}-em.csv`) };
}

describe('lumirate sb', () => {
  it('reproduces the Gaussian worked example from files, with a solvent name, and compares with Φ and τ', () => {
    const f = writeSpectra();
    const r = lumirate(
      'sb',
      '--absorption',
      f.absorption,
      '--emission',
      f.emission,
      '--solvent',
      'ethanol',
      '--tau-ns',
      '4.5',
      '--qy',
      '0.9',
      '--json',
    );
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.stdout);
    expect(rel(j.krSbPerS, 2.09271e8)).toBeLessThan(1e-3);
    expect(rel(j.tau0SbNs, 4.778492)).toBeLessThan(1e-3);
    expect(rel(j.oscillatorStrength, 0.541306)).toBeLessThan(1e-3); // REFERENCE-VALUES §5 (VERIFIED)
    expect(j.dipoleDebye).toBeGreaterThan(0);
    expect(j.einsteinAVacuumPerS).toBeGreaterThan(0);
    expect(rel(j.krRatio, 0.9 / 4.5e-9 / 2.09271e8)).toBeLessThan(1e-3);
    expect(j.emissionAssumption).toMatch(/λ² Jacobian/);
    expect(j.bandChoice).toMatch(/automatic/);
  });

  it('reads absorbance with concentration and path length (Beer–Lambert) and gives the same rate', () => {
    // A = ε·c·l with c = 1e-5 M and l = 1 cm; the importer turns it back into ε (Beer–Lambert, common practice).
    const eps = (nu: number) => 5e4 * Math.exp(-((nu - 20000) ** 2) / (2 * 1000 ** 2));
    const lines = ['wavelength_nm,absorbance'];
    for (let l = 300; l <= 1200; l++) lines.push(`${l},${(eps(1e7 / l) * 1e-5).toPrecision(15)}`);
    writeFileSync(at('absorbance.csv'), lines.join('\n') + '\n');
    const f = writeSpectra();
    const r = lumirate(
      'sb',
      '--absorption',
      at('absorbance.csv'),
      '--emission',
      f.emission,
      '--n',
      '1.3611',
      '--concentration-m',
      '1e-5',
      '--path-length-cm',
      '1',
      '--json',
    );
    expect(r.code).toBe(0);
    expect(rel(JSON.parse(r.stdout).krSbPerS, 2.09271e8)).toBeLessThan(1e-3); // REFERENCE-VALUES §6 (VERIFIED)
  });

  it('refuses an unknown solvent, listing the known ones', () => {
    const f = writeSpectra();
    const r = lumirate(
      'sb',
      '--absorption',
      f.absorption,
      '--emission',
      f.emission,
      '--solvent',
      'unobtainium',
    );
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(
      /^error: unknown solvent 'unobtainium'\. Known solvents: water, methanol, ethanol/,
    );
  });

  it('refuses negative ε inside the band, naming the file', () => {
    const f = writeSpectra(true);
    const r = lumirate(
      'sb',
      '--absorption',
      f.absorption,
      '--emission',
      f.emission,
      '--n',
      '1.3611',
      '--band-nm',
      '400:700',
    );
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(
      /neg-abs\.csv: ε = -9000 L mol⁻¹ cm⁻¹ at 4[78]\d\.0 nm inside the integration band is negative/,
    );
  });
});

describe('lumirate qy', () => {
  it('computes the single-point worked example against a built-in standard (REFERENCE-VALUES §8)', () => {
    // §8 (VERIFIED): Φ_R = 0.546, F/F_R = 0.80, A = 0.050, A_R = 0.040, n = 1.3611, n_R = 1.3330 → 0.368473.
    const r = lumirate(
      'qy',
      '--standard',
      'quinine-h2so4',
      '--sample-f',
      '0.8',
      '--sample-a',
      '0.05',
      '--sample-solvent',
      'EtOH',
      '--ref-f',
      '1',
      '--ref-a',
      '0.04',
      '--json',
    );
    expect(r.code).toBe(0);
    const j = JSON.parse(r.stdout);
    expect(rel(j.qy, 0.368473)).toBeLessThan(1e-6);
    expect(j.standard.id).toBe('quinine-h2so4');
    expect(j.method).toBe('single-point');
  });

  it('uses the gradient method for dilution series and warns about inner filtering above A = 0.1', () => {
    // Simulation truth: F = 1e7·Φ·(1 − 10^−A)/n², sample Φ = 0.3 in ethanol, standard Φ_R = 0.546 in water.
    const F = (qy: number, a: number, n: number) => ((1e7 * qy * (1 - 10 ** -a)) / n ** 2).toPrecision(12);
    const as = [0.02, 0.05, 0.08, 0.12];
    const r = lumirate(
      'qy',
      '--ref-qy',
      '0.546',
      '--ref-solvent',
      'water',
      '--sample-solvent',
      'ethanol',
      '--sample-a',
      as.join(','),
      '--sample-f',
      as.map((a) => F(0.3, a, 1.3611)).join(','),
      '--ref-a',
      as.join(','),
      '--ref-f',
      as.map((a) => F(0.546, a, 1.333)).join(','),
      '--json',
    );
    expect(r.code).toBe(0);
    const j = JSON.parse(r.stdout);
    expect(j.method).toBe('gradient');
    expect(rel(j.qy, 0.3)).toBeLessThan(1e-9);
    expect(j.warnings.join(' ')).toMatch(/1 sample point\(s\) have absorbance above 0\.1/);
    expect(r.stderr).toMatch(/^warning: 1 sample point/);
  });

  it('lists the standards and solvents with their sources', () => {
    const r = lumirate('qy', '--list-standards', '--json');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.stdout);
    expect(j.standards.find((s: { id: string }) => s.id === 'fluorescein-naoh').source).toMatch(/Magde/);
    expect(j.solvents.length).toBeGreaterThan(10);
  });

  it('refuses a number with a decimal comma, naming the option', () => {
    const r = lumirate(
      'qy',
      '--ref-qy',
      '0,546',
      '--ref-n',
      '1.333',
      '--sample-n',
      '1.36',
      '--sample-f',
      '1',
      '--sample-a',
      '0.05',
      '--ref-f',
      '1',
      '--ref-a',
      '0.05',
    );
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/--ref-qy '0,546' is not a number \(use a decimal point/);
  });
});
