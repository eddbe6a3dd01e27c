import { describe, expect, it } from 'vitest';
import { parseSpectrumText } from '../../src/io/parseSpectrum.js';
import { formatSpectrumTable } from '../../src/io/writeTable.js';
import { expectInputError } from './expectInputError.js';

const F = 'abs.csv';
const arr = (a: Float64Array) => Array.from(a);

describe('absorption', () => {
  it('reads epsilon on a wavelength axis and sorts it ascending', () => {
    const s = parseSpectrumText('wavelength_nm,epsilon\n500,30000\n400,1000\n450,12000\n', {
      source: F,
      kind: 'absorption',
    });
    expect(s.axis).toBe('nm');
    expect(arr(s.x)).toEqual([400, 450, 500]);
    expect(arr(s.y)).toEqual([1000, 12000, 30000]);
    expect(s.emissionOrdinate).toBeUndefined();
    expect(s.report).toMatchObject({ axisColumn: 'wavelength_nm', ordinateColumn: 'epsilon' });
  });

  it('reads what the table writer writes', () => {
    const x = Float64Array.from([400, 401, 402]);
    const y = Float64Array.from([1.5e4, 1.6e4, 1.7e4]);
    const s = parseSpectrumText(
      formatSpectrumTable('wavelength_nm', x, 'epsilon', y, { solvent: 'ethanol' }),
      { source: F, kind: 'absorption' },
    );
    expect(arr(s.y)).toEqual(arr(y));
    expect(s.metadata.solvent).toBe('ethanol');
  });

  it.each(['epsilon_M-1cm-1', 'epsilon (M^-1 cm^-1)', 'epsilon (L/mol/cm)'])(
    'accepts the ordinate name %s',
    (name) => {
      expect(
        parseSpectrumText(`wavelength (nm),${name}\n400,1\n410,2\n`, { source: F, kind: 'absorption' }).y[1],
      ).toBe(2);
    },
  );

  it('converts absorbance to epsilon with the Beer–Lambert law, c and l from metadata or options', () => {
    // Beer–Lambert law A = ε·c·l (IUPAC Gold Book, "Beer–Lambert law"): A = 0.5, c = 1e-5 M, l = 1 cm → ε = 5e4 L mol⁻¹ cm⁻¹.
    const text = '# concentration_M: 1e-5\n# path_length_cm: 1\nwavelength_nm,absorbance\n400,0.1\n450,0.5\n';
    const s = parseSpectrumText(text, { source: F, kind: 'absorption' });
    expect(s.y[1]).toBeCloseTo(5e4, 8);
    expect(s.report?.ordinate).toMatch(/absorbance → ε/);
    // 10 µM in a 2 mm cell: A = 0.5 → ε = 0.5 / (1e-5 × 0.2) = 2.5e5.
    const t = parseSpectrumText(
      '# concentration_uM: 10\n# path_length_mm: 2\nwavelength_nm,absorbance\n400,0.1\n450,0.5\n',
      { source: F, kind: 'absorption' },
    );
    expect(t.y[1]).toBeCloseTo(2.5e5, 6);
    const u = parseSpectrumText('wavelength_nm,absorbance\n400,0.1\n450,0.5\n', {
      source: F,
      kind: 'absorption',
      concentrationM: 2e-5,
      pathLengthCm: 0.5,
    });
    expect(u.y[1]).toBeCloseTo(5e4, 8);
  });

  it('refuses absorbance without a concentration or path length, saying which is missing', () => {
    expectInputError(
      () =>
        parseSpectrumText('# path_length_cm: 1\nwavelength_nm,absorbance\n400,0.1\n450,0.5\n', {
          source: F,
          kind: 'absorption',
        }),
      {
        file: F,
        line: 2,
        column: 2,
        match: /needs the concentration to give ε/,
      },
    );
  });

  it('keeps negative absorption values and warns about them', () => {
    const s = parseSpectrumText('wavelength_nm,epsilon\n600,-3\n500,100\n650,-1\n', {
      source: F,
      kind: 'absorption',
    });
    expect(arr(s.y)).toEqual([100, -3, -1]);
    expect(s.warnings.join()).toMatch(/2 negative absorption values \(first on line 2\)/);
  });

  it('reads a wavenumber axis in cm⁻¹ spelled several ways', () => {
    for (const name of ['wavenumber_cm-1', 'wavenumber (cm-1)', 'wavenumber (cm^-1)', 'wavenumber/cm-1']) {
      const s = parseSpectrumText(`${name},epsilon\n25000,10\n20000,20\n`, { source: F, kind: 'absorption' });
      expect(s.axis).toBe('cm-1');
      expect(arr(s.x)).toEqual([20000, 25000]);
    }
  });

  it('reads a headerless file when the axis is given, and reports how the ordinate was taken', () => {
    const s = parseSpectrumText('400;1,5\n410;2,5\n', { source: F, kind: 'absorption', axis: 'nm' });
    expect(arr(s.y)).toEqual([1.5, 2.5]);
    expect(s.report?.ordinate).toMatch(/ε/);
    expectInputError(() => parseSpectrumText('400,1\n410,2\n', { source: F, kind: 'absorption' }), {
      file: F,
      line: 1,
      match: /spectral axis is unknown/,
    });
  });
});

describe('emission', () => {
  it('reads photon counts per axis unit', () => {
    const s = parseSpectrumText('wavelength_nm,photons\n520,5\n500,10\n', {
      source: 'em.csv',
      kind: 'emission',
    });
    expect(s.emissionOrdinate).toBe('photonsPerAxisUnit');
    expect(arr(s.y)).toEqual([10, 5]);
  });

  it('marks an energy spectrum from "# ordinate: energy"', () => {
    const s = parseSpectrumText('# ordinate: energy\nwavelength_nm,intensity\n500,1\n510,2\n', {
      source: 'em.csv',
      kind: 'emission',
    });
    expect(s.emissionOrdinate).toBe('energyPerAxisUnit');
    expectInputError(
      () =>
        parseSpectrumText('# ordinate: watts\nwavelength_nm,intensity\n500,1\n510,2\n', {
          source: 'em.csv',
          kind: 'emission',
        }),
      {
        file: 'em.csv',
        line: 1,
      },
    );
  });

  it('warns when a wavelength axis holds values that look like wavenumbers', () => {
    const s = parseSpectrumText('wavelength_nm,counts\n20000,1\n21000,2\n', {
      source: 'em.csv',
      kind: 'emission',
    });
    expect(s.warnings.join()).toMatch(/look like wavenumbers/);
  });
});

describe('bad spectra', () => {
  it('refuses a repeated axis value, naming both lines', () => {
    expectInputError(
      () =>
        parseSpectrumText('wavelength_nm,epsilon\n400,1\n410,2\n400,3\n', { source: F, kind: 'absorption' }),
      {
        file: F,
        line: 4,
        column: 1,
        match: /repeats line 2/,
      },
    );
  });

  it('refuses non-positive or non-numeric axis values and unknown ordinate names', () => {
    expectInputError(
      () => parseSpectrumText('wavelength_nm,epsilon\n0,1\n410,2\n', { source: F, kind: 'absorption' }),
      { file: F, line: 2, column: 1, match: /: wavelength 0 is not positive$/ },
    );
    expectInputError(
      () => parseSpectrumText('wavelength_nm,epsilon\n400,1\n410,x\n', { source: F, kind: 'absorption' }),
      { file: F, line: 3, column: 2 },
    );
    expectInputError(
      () => parseSpectrumText('wavelength_nm,weird\n400,1\n410,2\n', { source: F, kind: 'absorption' }),
      { file: F, line: 1, column: 2, match: /not a known absorption ordinate/ },
    );
    expectInputError(
      () => parseSpectrumText('wavelength_um,epsilon\n0.4,1\n0.41,2\n', { source: F, kind: 'absorption' }),
      { file: F, line: 1, column: 1, match: /'um' is not a unit/ },
    );
    expectInputError(
      () =>
        parseSpectrumText('wavelength_nm,epsilon\n\n400,1\n# note\n410,2e16\n', {
          source: F,
          kind: 'absorption',
        }),
      {
        file: F,
        line: 5,
        column: 2,
        match: /: 2e16 is beyond any plausible absorption value \(\|y\| > 1e15\)$/,
      },
    );
  });

  it('refuses an axis given that contradicts the header', () => {
    expectInputError(
      () =>
        parseSpectrumText('wavelength_nm,epsilon\n400,1\n410,2\n', {
          source: F,
          kind: 'absorption',
          axis: 'cm-1',
        }),
      { file: F, line: 1, column: 1 },
    );
  });
});
