import { describe, expect, it } from 'vitest';
import { InputError } from '../../src/errors.js';
import {
  findSolvent,
  QY_STANDARDS,
  qyStandard,
  refractiveIndexOf,
  SOLVENTS,
} from '../../src/physics/standards.js';

// REFERENCE-VALUES §10: n_D at 20 °C, CRC Handbook of Chemistry and Physics, all FROM MEMORY; tolerance ±5e-4.
const CRC_ND: Record<string, number> = {
  water: 1.333,
  methanol: 1.3288,
  ethanol: 1.3611,
  acetonitrile: 1.3442,
  cyclohexane: 1.4262,
  'n-hexane': 1.3749,
  acetone: 1.3588,
  glycerol: 1.4746,
  toluene: 1.4961,
  benzene: 1.5011,
  chloroform: 1.4459,
  dichloromethane: 1.4242,
  DMSO: 1.4793,
  THF: 1.4072,
  '1-propanol': 1.385,
  'ethylene glycol': 1.4318,
};

describe('refractiveIndexOf', () => {
  it('returns the handbook n_D of every listed solvent', () => {
    for (const [name, nD] of Object.entries(CRC_ND))
      expect(Math.abs(refractiveIndexOf(name) - nD)).toBeLessThanOrEqual(5e-4);
  });
  it('knows common abbreviations, ignoring case, spaces and hyphens', () => {
    expect(refractiveIndexOf('EtOH')).toBe(refractiveIndexOf('ethanol'));
    expect(refractiveIndexOf('MeCN')).toBe(refractiveIndexOf('acetonitrile'));
    expect(refractiveIndexOf('  Ethylene-Glycol ')).toBe(refractiveIndexOf('ethylene glycol'));
    expect(refractiveIndexOf('h2o')).toBe(1.333);
    expect(findSolvent('dmso')?.name).toBe('dimethyl sulfoxide');
  });
  it('refuses an unknown name and lists the known ones', () => {
    expect(() => refractiveIndexOf('unobtainium')).toThrow(InputError);
    expect(() => refractiveIndexOf('unobtainium')).toThrow(
      /unknown solvent 'unobtainium'\. Known solvents: water, methanol, ethanol/,
    );
  });
  it('marks every value with its source and whether it is from memory', () => {
    for (const s of SOLVENTS) {
      expect(s.source).toMatch(/CRC Handbook/);
      expect(s.fromMemory).toBe(true);
    }
  });
});

describe('quantum-yield standards', () => {
  it('carry the literature values of the reference list', () => {
    // REFERENCE-VALUES §8, all FROM MEMORY.
    expect(qyStandard('quinine-h2so4').qy).toBe(0.546); // Melhuish 1961; Eaton 1988
    expect(qyStandard('quinine-hclo4').qy).toBe(0.6); // Brouwer 2011
    expect(qyStandard('fluorescein-naoh').qy).toBe(0.925); // Magde, Wong & Seybold 2002
    expect(qyStandard('rhodamine6g-etoh').qy).toBe(0.95); // Magde et al. 2002
    expect(qyStandard('anthracene-etoh').qy).toBe(0.27); // Melhuish 1961
    expect(qyStandard('cresylviolet-meoh').qy).toBe(0.54); // Magde et al. 1979
  });
  it('name a known solvent, a source and the from-memory status for each', () => {
    for (const s of QY_STANDARDS) {
      expect(findSolvent(s.solvent)).toBeDefined();
      expect(s.source.length).toBeGreaterThan(5);
      expect(s.fromMemory).toBe(true);
      expect(s.qy > 0 && s.qy <= 1).toBe(true);
    }
  });
  it('refuses an unknown id with the list', () => {
    expect(() => qyStandard('nope')).toThrow(
      /unknown quantum-yield standard 'nope'\. Known standards: quinine-h2so4/,
    );
  });
});
