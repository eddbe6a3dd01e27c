/**
 * Reference data: fluorescence quantum-yield standards and solvent refractive indices. Each value
 * carries where it was published and whether it was checked against that source here. Values marked
 * `fromMemory: true` are recalled from the literature, not re-read from it: confirm them against the
 * original before relying on them for publication.
 */
import { InputError } from '../errors.js';

export interface SolventEntry {
  /** Canonical name. */
  name: string;
  /** Other names it answers to (compared case-insensitively, ignoring spaces, hyphens and underscores). */
  aliases: string[];
  /** Refractive index at the sodium D line, 20 °C. */
  nD: number;
  source: string;
  fromMemory: boolean;
  note?: string;
}

const CRC = 'CRC Handbook of Chemistry and Physics, n_D at 20 °C';

/** Refractive indices of common solvents. Temperature coefficients are about −1e-4 K⁻¹ (water) to −5e-4 K⁻¹ (organics). */
export const SOLVENTS: readonly SolventEntry[] = [
  { name: 'water', aliases: ['h2o', 'aqueous', 'buffer'], nD: 1.333, source: CRC, fromMemory: true },
  { name: 'methanol', aliases: ['meoh'], nD: 1.3288, source: CRC, fromMemory: true },
  { name: 'ethanol', aliases: ['etoh'], nD: 1.3611, source: CRC, fromMemory: true },
  { name: 'acetonitrile', aliases: ['mecn', 'acn', 'ch3cn'], nD: 1.3442, source: CRC, fromMemory: true },
  { name: 'cyclohexane', aliases: ['chx'], nD: 1.4262, source: CRC, fromMemory: true },
  { name: 'n-hexane', aliases: ['hexane'], nD: 1.3749, source: CRC, fromMemory: true },
  { name: 'acetone', aliases: ['propanone'], nD: 1.3588, source: CRC, fromMemory: true },
  { name: 'glycerol', aliases: ['glycerin'], nD: 1.4746, source: CRC, fromMemory: true },
  {
    name: 'toluene',
    aliases: ['methylbenzene'],
    nD: 1.4961,
    source: CRC,
    fromMemory: true,
    note: 'other sources give 1.4969',
  },
  { name: 'benzene', aliases: [], nD: 1.5011, source: CRC, fromMemory: true },
  { name: 'chloroform', aliases: ['chcl3', 'trichloromethane'], nD: 1.4459, source: CRC, fromMemory: true },
  {
    name: 'dichloromethane',
    aliases: ['dcm', 'ch2cl2', 'methylene chloride'],
    nD: 1.4242,
    source: CRC,
    fromMemory: true,
  },
  { name: 'dimethyl sulfoxide', aliases: ['dmso'], nD: 1.4793, source: CRC, fromMemory: true },
  {
    name: 'tetrahydrofuran',
    aliases: ['thf'],
    nD: 1.4072,
    source: CRC,
    fromMemory: true,
    note: '1.4050 at 25 °C',
  },
  {
    name: '1-propanol',
    aliases: ['n-propanol', 'propanol', 'proh'],
    nD: 1.385,
    source: CRC,
    fromMemory: true,
  },
  {
    name: 'ethylene glycol',
    aliases: ['ethanediol', 'glycol', 'eg'],
    nD: 1.4318,
    source: CRC,
    fromMemory: true,
  },
];

function normalise(name: string): string {
  return name
    .trim()
    .toLowerCase()
    .replace(/[\s_-]+/g, '');
}

/** The solvent entry for a name or alias, or undefined. */
export function findSolvent(name: string): SolventEntry | undefined {
  const key = normalise(name);
  return SOLVENTS.find((s) => normalise(s.name) === key || s.aliases.some((a) => normalise(a) === key));
}

/** Refractive index n_D (20 °C) of a named solvent. Throws InputError naming the known solvents for an unknown name. */
export function refractiveIndexOf(solvent: string): number {
  const entry = findSolvent(solvent);
  if (!entry) {
    const known = SOLVENTS.map((s) => s.name).join(', ');
    throw new InputError(
      `unknown solvent '${solvent}'. Known solvents: ${known}. Give the refractive index as a number instead.`,
    );
  }
  return entry.nD;
}

export interface QuantumYieldStandard {
  /** Short identifier for the command line. */
  id: string;
  compound: string;
  /** Solvent as prepared. */
  medium: string;
  /** Which solvent's refractive index applies (a name in SOLVENTS). */
  solvent: string;
  qy: number;
  /** Reported uncertainty, when one was reported. */
  qyErr?: number;
  source: string;
  fromMemory: boolean;
  note?: string;
}

/**
 * Common quantum-yield standards. All values are recalled from the cited literature (FROM MEMORY) and
 * have not been re-read from the papers here; the citations themselves were checked against
 * bibliographic records where noted in the project's reference list.
 */
export const QY_STANDARDS: readonly QuantumYieldStandard[] = [
  {
    id: 'quinine-h2so4',
    compound: 'quinine sulfate',
    medium: '0.5 M H2SO4',
    solvent: 'water',
    qy: 0.546,
    source: 'Melhuish, J. Phys. Chem. 65, 229 (1961); Eaton, Pure Appl. Chem. 60, 1107 (1988)',
    fromMemory: true,
    note: '25 °C, dilute; temperature dependent. Refractive index of water assumed for the dilute acid.',
  },
  {
    id: 'quinine-hclo4',
    compound: 'quinine sulfate',
    medium: '0.1 M HClO4',
    solvent: 'water',
    qy: 0.6,
    qyErr: 0.02,
    source: 'Brouwer, Pure Appl. Chem. 83, 2213 (2011)',
    fromMemory: true,
    note: 'Nearly temperature independent; preferred over the H2SO4 medium.',
  },
  {
    id: 'fluorescein-naoh',
    compound: 'fluorescein',
    medium: '0.1 M NaOH',
    solvent: 'water',
    qy: 0.925,
    qyErr: 0.015,
    source: 'Magde, Wong & Seybold, Photochem. Photobiol. 75, 327 (2002)',
    fromMemory: true,
    note: 'Older lists give 0.95.',
  },
  {
    id: 'rhodamine6g-etoh',
    compound: 'rhodamine 6G',
    medium: 'ethanol',
    solvent: 'ethanol',
    qy: 0.95,
    qyErr: 0.015,
    source: 'Magde, Wong & Seybold 2002; Kubin & Fletcher, J. Lumin. 27, 455 (1982)',
    fromMemory: true,
  },
  {
    id: 'rhodamine101-etoh',
    compound: 'rhodamine 101',
    medium: 'ethanol',
    solvent: 'ethanol',
    qy: 0.96,
    source: 'Karstens & Kobs, J. Phys. Chem. 84, 1871 (1980), and later reports',
    fromMemory: true,
    note: 'Low confidence: 1.0 reported in 1980, later values about 0.91–0.96.',
  },
  {
    id: 'dpa-cyclohexane',
    compound: '9,10-diphenylanthracene',
    medium: 'cyclohexane',
    solvent: 'cyclohexane',
    qy: 0.9,
    source: 'Hamai & Hirayama 1983; Meech & Phillips 1983',
    fromMemory: true,
    note: 'Low confidence: reported values 0.90–0.97, depending on source and dissolved oxygen.',
  },
  {
    id: 'anthracene-etoh',
    compound: 'anthracene',
    medium: 'ethanol',
    solvent: 'ethanol',
    qy: 0.27,
    source: 'Melhuish 1961; Dawson & Windsor 1968',
    fromMemory: true,
  },
  {
    id: 'cresylviolet-meoh',
    compound: 'cresyl violet',
    medium: 'methanol',
    solvent: 'methanol',
    qy: 0.54,
    source: 'Magde, Brannon, Cremers & Olmsted, J. Phys. Chem. 83, 696 (1979)',
    fromMemory: true,
  },
  {
    id: 'tryptophan-water',
    compound: 'L-tryptophan',
    medium: 'water, pH 7, 25 °C',
    solvent: 'water',
    qy: 0.13,
    source: 'Chen 1967; Kirby & Steiner 1970',
    fromMemory: true,
    note: 'Reported values 0.13–0.14.',
  },
];

/** A quantum-yield standard by id (case-insensitive). Throws InputError listing the known ids. */
export function qyStandard(id: string): QuantumYieldStandard {
  const key = normalise(id);
  const found = QY_STANDARDS.find((s) => normalise(s.id) === key);
  if (!found) {
    throw new InputError(
      `unknown quantum-yield standard '${id}'. Known standards: ${QY_STANDARDS.map((s) => s.id).join(', ')}.`,
    );
  }
  return found;
}
