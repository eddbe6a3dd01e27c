import type { Command } from 'commander';
import { formatNumber, formatValueError } from '../../shared/format.js';
import { InputError } from '../../src/errors.js';
import {
  gradientQuantumYield,
  relativeQuantumYield,
  type GradientQyResult,
  type RelativeQyResult,
} from '../../src/physics/quantumYield.js';
import {
  QY_STANDARDS,
  qyStandard,
  refractiveIndexOf,
  SOLVENTS,
  type QuantumYieldStandard,
} from '../../src/physics/standards.js';
import { action } from '../run.js';
import { emit, numberListOption, numberOption, remarks, rows } from './rates.js';

interface QyCliOptions {
  sampleF?: string;
  sampleA?: string;
  sampleFErr?: string;
  sampleAErr?: string;
  sampleN?: string;
  sampleSolvent?: string;
  refF?: string;
  refA?: string;
  refFErr?: string;
  refAErr?: string;
  refN?: string;
  refSolvent?: string;
  refQy?: string;
  refQyErr?: string;
  standard?: string;
  linear?: boolean;
  intercept?: boolean;
  listStandards?: boolean;
  json?: boolean;
}

function indexOf(
  who: 'sample' | 'ref',
  n: string | undefined,
  solvent: string | undefined,
  fallback?: string,
): number {
  if (n !== undefined && solvent !== undefined)
    throw new InputError(`give --${who}-n or --${who}-solvent, not both`);
  if (n !== undefined) return numberOption(n, `--${who}-n`);
  if (solvent !== undefined) return refractiveIndexOf(solvent);
  if (fallback !== undefined) return refractiveIndexOf(fallback);
  throw new InputError(
    `give the ${who === 'ref' ? 'standard' : 'sample'}'s refractive index with --${who}-n or --${who}-solvent`,
  );
}

function required(list: number[] | undefined, flag: string): number[] {
  if (!list) throw new InputError(`${flag} is required`);
  return list;
}

export function formatQyText(r: RelativeQyResult, standard?: QuantumYieldStandard): string {
  const out = [
    `Relative quantum yield, ${r.method === 'gradient' ? 'gradient (dilution series)' : 'single point'} method` +
      (standard
        ? `, standard ${standard.compound} in ${standard.medium} (Φ_R = ${standard.qy}; ${standard.source}${standard.fromMemory ? ', value from memory' : ''})`
        : ''),
    '',
    ...rows([
      ['Φ', formatValueError(r.qy, r.qyErr)],
      [r.method === 'gradient' ? 'slope, sample' : 'F/f, sample', formatNumber(r.sampleEmissionPerAbsorbed)],
      [
        r.method === 'gradient' ? 'slope, standard' : 'F/f, standard',
        formatNumber(r.referenceEmissionPerAbsorbed),
      ],
      ['n²/n_R²', formatNumber(r.refractiveCorrection, { digits: 5 })],
      ['absorbed fraction f', r.form === 'linear' ? 'A (linear approximation)' : '1 − 10^(−A) (absorptance)'],
      ...(r.method === 'gradient'
        ? ([
            ['R², sample', (r as GradientQyResult).sampleFit.r2.toFixed(5)],
            ['R², standard', (r as GradientQyResult).referenceFit.r2.toFixed(5)],
          ] as [string, string][])
        : []),
    ]),
  ];
  out.push(...remarks(r.notes, r.warnings));
  return out.join('\n') + '\n';
}

function listStandards(json: boolean | undefined): void {
  if (json) {
    process.stdout.write(`${JSON.stringify({ standards: QY_STANDARDS, solvents: SOLVENTS }, null, 2)}\n`);
    return;
  }
  const out = [
    'Quantum-yield standards (values from memory of the cited literature: check the original before publishing)',
    '',
  ];
  for (const s of QY_STANDARDS) {
    out.push(
      `  ${s.id.padEnd(20)} ${`${s.compound}, ${s.medium}`.padEnd(38)} Φ = ${s.qyErr ? `${s.qy} ± ${s.qyErr}` : s.qy}  (${s.source})`,
    );
    if (s.note) out.push(`  ${''.padEnd(20)} ${s.note}`);
  }
  out.push(
    '',
    'Solvent refractive indices n_D, 20 °C (CRC Handbook of Chemistry and Physics; values from memory)',
    '',
  );
  for (const s of SOLVENTS) {
    out.push(
      `  ${s.name.padEnd(20)} ${s.nD.toFixed(4)}${s.aliases.length ? `   also: ${s.aliases.join(', ')}` : ''}${s.note ? `   (${s.note})` : ''}`,
    );
  }
  process.stdout.write(out.join('\n') + '\n');
}

/** `lumirate qy`: fluorescence quantum yield relative to a standard. */
export function register(program: Command): void {
  program
    .command('qy')
    .description(
      'Fluorescence quantum yield by the comparative method against a standard: one point per solution, or the gradient of a dilution series when several values are given.',
    )
    .option('--sample-f <F[,F…]>', 'integrated corrected emission of the sample (several: a dilution series)')
    .option(
      '--sample-a <A[,A…]>',
      'absorbance of the sample at the excitation wavelength (as many as --sample-f)',
    )
    .option('--sample-f-err <σ>', 'single point: uncertainty of the sample emission')
    .option('--sample-a-err <σ>', 'single point: uncertainty of the sample absorbance')
    .option('--sample-n <index>', 'refractive index of the sample solvent')
    .option('--sample-solvent <name>', 'sample solvent name, for its refractive index')
    .option(
      '--standard <id>',
      'a standard from the built-in table (see --list-standards): sets Φ_R and its solvent',
    )
    .option('--ref-qy <fraction>', 'quantum yield of the standard, when not taken from the table')
    .option('--ref-qy-err <σ>', 'uncertainty of the standard’s quantum yield')
    .option('--ref-f <F[,F…]>', 'integrated corrected emission of the standard')
    .option('--ref-a <A[,A…]>', 'absorbance of the standard at the excitation wavelength')
    .option('--ref-f-err <σ>', 'single point: uncertainty of the standard emission')
    .option('--ref-a-err <σ>', 'single point: uncertainty of the standard absorbance')
    .option('--ref-n <index>', 'refractive index of the standard’s solvent')
    .option('--ref-solvent <name>', 'standard’s solvent name, for its refractive index')
    .option(
      '--linear',
      'use the absorbance A instead of the absorptance 1 − 10^(−A) (adequate only for A ≲ 0.05)',
    )
    .option('--intercept', 'gradient method: fit the lines with an intercept (default: through the origin)')
    .option(
      '--list-standards',
      'print the built-in standards and solvent refractive indices with their sources',
    )
    .option('--json', 'print the result as one JSON object')
    .action(
      action((opts: QyCliOptions) => {
        if (opts.listStandards) {
          listStandards(opts.json);
          return;
        }
        let standard: QuantumYieldStandard | undefined;
        let refQy: number;
        let refQyErr: number | undefined;
        if (opts.standard !== undefined) {
          if (opts.refQy !== undefined) throw new InputError('give --standard or --ref-qy, not both');
          standard = qyStandard(opts.standard);
          refQy = standard.qy;
          refQyErr =
            opts.refQyErr !== undefined ? numberOption(opts.refQyErr, '--ref-qy-err') : standard.qyErr;
        } else {
          if (opts.refQy === undefined)
            throw new InputError('give the standard with --standard ID or its yield with --ref-qy');
          refQy = numberOption(opts.refQy, '--ref-qy');
          refQyErr = numberOption(opts.refQyErr, '--ref-qy-err');
        }
        const sampleN = indexOf('sample', opts.sampleN, opts.sampleSolvent);
        const refN = indexOf('ref', opts.refN, opts.refSolvent, standard?.solvent);
        const sF = required(numberListOption(opts.sampleF, '--sample-f'), '--sample-f');
        const sA = required(numberListOption(opts.sampleA, '--sample-a'), '--sample-a');
        const rF = required(numberListOption(opts.refF, '--ref-f'), '--ref-f');
        const rA = required(numberListOption(opts.refA, '--ref-a'), '--ref-a');
        if (sF.length !== sA.length)
          throw new InputError(`--sample-f has ${sF.length} values but --sample-a has ${sA.length}`);
        if (rF.length !== rA.length)
          throw new InputError(`--ref-f has ${rF.length} values but --ref-a has ${rA.length}`);
        const form = opts.linear ? 'linear' : 'absorptance';
        let result: RelativeQyResult;
        if (sF.length === 1 && rF.length === 1) {
          if (opts.intercept)
            throw new InputError('--intercept applies to the gradient method (several values per solution)');
          result = relativeQuantumYield({
            sample: {
              integratedEmission: sF[0],
              absorbance: sA[0],
              refractiveIndex: sampleN,
              integratedEmissionErr: numberOption(opts.sampleFErr, '--sample-f-err'),
              absorbanceErr: numberOption(opts.sampleAErr, '--sample-a-err'),
            },
            reference: {
              qy: refQy,
              qyErr: refQyErr,
              integratedEmission: rF[0],
              absorbance: rA[0],
              refractiveIndex: refN,
              integratedEmissionErr: numberOption(opts.refFErr, '--ref-f-err'),
              absorbanceErr: numberOption(opts.refAErr, '--ref-a-err'),
            },
            form,
          });
        } else {
          if (sF.length === 1 || rF.length === 1) {
            throw new InputError(
              'the gradient method needs a dilution series (several values) for both the sample and the standard',
            );
          }
          for (const flag of ['sampleFErr', 'sampleAErr', 'refFErr', 'refAErr'] as const) {
            if (opts[flag] !== undefined) {
              throw new InputError(
                'per-point uncertainties apply to the single-point method; the gradient method takes its errors from the scatter',
              );
            }
          }
          const pts = (a: number[], f: number[]) =>
            a.map((absorbance, i) => ({ absorbance, integratedEmission: f[i] }));
          result = gradientQuantumYield({
            sample: { points: pts(sA, sF), refractiveIndex: sampleN },
            reference: { points: pts(rA, rF), refractiveIndex: refN, qy: refQy, qyErr: refQyErr },
            form,
            intercept: opts.intercept,
          });
        }
        const json = standard ? { ...result, standard } : result;
        emit(opts.json, json, formatQyText(result, standard), result.warnings);
      }),
    );
}
