import type { Command } from 'commander';
import { formatNumber, formatValueError } from '../../shared/format.js';
import type { StricklerBergResult } from '../../shared/schema.js';
import { InputError } from '../../src/errors.js';
import type { SpectrumAxis } from '../../src/io/types.js';
import { refractiveIndexOf } from '../../src/physics/standards.js';
import { stricklerBerg } from '../../src/physics/stricklerBerg.js';
import { readSpectrumFile } from '../readInput.js';
import { action } from '../run.js';
import { emit, numberOption, rangeOption, remarks, rows } from './rates.js';

interface SbCliOptions {
  absorption?: string;
  emission?: string;
  n?: string;
  solvent?: string;
  degeneracy?: string;
  bandCm?: string;
  bandNm?: string;
  tauNs?: string;
  qy?: string;
  tauErrNs?: string;
  qyErr?: string;
  absorptionAxis?: string;
  emissionAxis?: string;
  concentrationM?: string;
  pathLengthCm?: string;
  emissionOrdinate?: string;
  json?: boolean;
}

function axisOption(text: string | undefined, flag: string): SpectrumAxis | undefined {
  if (text === undefined) return undefined;
  if (text !== 'nm' && text !== 'cm-1') throw new InputError(`${flag} '${text}' must be nm or cm-1`);
  return text;
}

const nm = (cm: number) => `${formatNumber(1e7 / cm, { digits: 4 })} nm`;

/** The Strickler–Berg result as a readable table with units. */
export function formatSbText(r: StricklerBergResult): string {
  const out = [
    'Strickler–Berg radiative rate',
    '',
    ...rows([
      [
        'band integrated (cm⁻¹)',
        `${formatNumber(r.bandCm[0], { digits: 5 })}–${formatNumber(r.bandCm[1], { digits: 5 })} (${nm(r.bandCm[1])}–${nm(r.bandCm[0])})`,
      ],
      ['band choice', r.bandChoice],
      ['emission', r.emissionAssumption],
      ['refractive index n', formatNumber(r.refractiveIndex, { digits: 5 })],
      ['degeneracy ratio g_l/g_u', formatNumber(r.degeneracyRatio)],
      ['∫ε d ln ν̃ (L mol⁻¹ cm⁻¹)', formatNumber(r.integratedEpsLnNu)],
      ['∫ε dν̃ (L mol⁻¹ cm⁻²)', formatNumber(r.integratedEpsNu)],
      [
        '⟨ν̃_f⁻³⟩^(−1/3) (cm⁻¹)',
        `${formatNumber(r.emissionMeanWavenumberCm, { digits: 5 })} (${nm(r.emissionMeanWavenumberCm)})`,
      ],
      ['k_r^SB (s⁻¹)', formatNumber(r.krSbPerS)],
      ['τ₀^SB (ns)', formatNumber(r.tau0SbNs)],
      ['oscillator strength f (apparent)', formatNumber(r.oscillatorStrength)],
      ['transition dipole μ (D, apparent)', formatNumber(r.dipoleDebye)],
      ['Einstein A, vacuum (s⁻¹)', formatNumber(r.einsteinAVacuumPerS)],
      ['Einstein A, in the medium (s⁻¹)', formatNumber(r.einsteinAMediumPerS)],
      ...(r.qySb !== undefined
        ? ([['Φ^SB = k_r^SB·τ', formatValueError(r.qySb, r.qySbErr, { digits: 3 })]] as [string, string][])
        : []),
      ...(r.krRatio !== undefined
        ? ([['k_r(measured)/k_r^SB', formatValueError(r.krRatio, r.krRatioErr, { digits: 3 })]] as [
            string,
            string,
          ][])
        : []),
    ]),
  ];
  if (r.note) out.push('', r.note);
  out.push(...remarks(r.notes ?? [], r.warnings));
  return out.join('\n') + '\n';
}

/** `lumirate sb`: the Strickler–Berg radiative rate from absorption and emission spectra. */
export function register(program: Command): void {
  program
    .command('sb')
    .description(
      'Strickler–Berg radiative rate, oscillator strength, transition dipole and Einstein A from an absorption and an emission spectrum; compared with a measured Φ and τ when given.',
    )
    .option(
      '--absorption <file>',
      'absorption spectrum: ε in L mol⁻¹ cm⁻¹, or absorbance with concentration and path length',
    )
    .option(
      '--emission <file>',
      'emission spectrum, corrected, photon counts per nm or per cm⁻¹ (or energy, see --emission-ordinate)',
    )
    .option('--n <index>', 'refractive index of the solvent')
    .option('--solvent <name>', 'solvent name, for its refractive index (e.g. ethanol, MeCN, cyclohexane)')
    .option('--degeneracy <ratio>', 'g_l/g_u, lower- over upper-state degeneracy (default 1)')
    .option(
      '--band-cm <low:high>',
      'absorption band to integrate, cm⁻¹ (default: chosen automatically and reported)',
    )
    .option('--band-nm <short:long>', 'absorption band to integrate, nm')
    .option('--tau-ns <ns>', 'measured lifetime, ns, to compare with the prediction')
    .option('--qy <fraction>', 'measured quantum yield, to compare with the prediction')
    .option('--tau-err-ns <ns>', 'standard uncertainty of the measured lifetime, ns')
    .option('--qy-err <fraction>', 'standard uncertainty of the measured quantum yield')
    .option(
      '--absorption-axis <axis>',
      'axis of the absorption file when its header does not say: nm or cm-1',
    )
    .option('--emission-axis <axis>', 'axis of the emission file when its header does not say: nm or cm-1')
    .option('--concentration-m <M>', 'concentration for an absorbance spectrum, mol/L')
    .option('--path-length-cm <cm>', 'path length for an absorbance spectrum, cm')
    .option(
      '--emission-ordinate <kind>',
      'what the emission values are: photons or energy per axis unit (default: from the file, else photons)',
    )
    .option('--json', 'print the result as one JSON object')
    .action(
      action((opts: SbCliOptions) => {
        if (!opts.absorption || !opts.emission)
          throw new InputError('give both spectra: --absorption FILE --emission FILE');
        if ((opts.n === undefined) === (opts.solvent === undefined)) {
          throw new InputError(
            'give the refractive index with exactly one of --n 1.361 or --solvent ethanol',
          );
        }
        if (opts.bandCm !== undefined && opts.bandNm !== undefined)
          throw new InputError('give the band in cm⁻¹ or in nm, not both');
        const refractiveIndex =
          opts.n !== undefined ? numberOption(opts.n, '--n') : refractiveIndexOf(opts.solvent as string);
        let bandCm = rangeOption(opts.bandCm, '--band-cm');
        const bandNm = rangeOption(opts.bandNm, '--band-nm');
        if (bandNm) {
          if (!(bandNm[0] > 0))
            throw new InputError(`--band-nm '${opts.bandNm}' must be positive wavelengths`);
          bandCm = [1e7 / bandNm[1], 1e7 / bandNm[0]];
        }
        const ordinate = opts.emissionOrdinate;
        if (ordinate !== undefined && ordinate !== 'photons' && ordinate !== 'energy') {
          throw new InputError(`--emission-ordinate '${ordinate}' must be photons or energy`);
        }
        const concentrationM = numberOption(opts.concentrationM, '--concentration-m');
        const pathLengthCm = numberOption(opts.pathLengthCm, '--path-length-cm');
        for (const [flag, v] of [
          ['--concentration-m', concentrationM],
          ['--path-length-cm', pathLengthCm],
        ] as const) {
          if (v !== undefined && !(v > 0)) throw new InputError(`${flag} must be > 0`);
        }
        const absorption = readSpectrumFile(opts.absorption, {
          kind: 'absorption',
          axis: axisOption(opts.absorptionAxis, '--absorption-axis'),
          concentrationM,
          pathLengthCm,
        });
        let emission = readSpectrumFile(opts.emission, {
          kind: 'emission',
          axis: axisOption(opts.emissionAxis, '--emission-axis'),
        });
        if (ordinate)
          emission = {
            ...emission,
            emissionOrdinate: ordinate === 'energy' ? 'energyPerAxisUnit' : 'photonsPerAxisUnit',
          };
        const result = stricklerBerg({
          absorption,
          emission,
          refractiveIndex,
          degeneracyRatio: numberOption(opts.degeneracy, '--degeneracy'),
          bandCm,
          qy: numberOption(opts.qy, '--qy'),
          tauNs: numberOption(opts.tauNs, '--tau-ns'),
          qyErr: numberOption(opts.qyErr, '--qy-err'),
          tauErrNs: numberOption(opts.tauErrNs, '--tau-err-ns'),
        });
        // What the importer noticed belongs with the result.
        result.warnings.unshift(
          ...absorption.warnings.map((w) => `${absorption.source}: ${w}`),
          ...emission.warnings.map((w) => `${emission.source}: ${w}`),
        );
        emit(opts.json, result, formatSbText(result), result.warnings);
      }),
    );
}
