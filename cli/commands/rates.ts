import type { Command } from 'commander';
import { formatNumber, formatValueError } from '../../shared/format.js';
import {
  isFitResult,
  isSampleResult,
  type FitResult,
  type RatesResult,
  type SampleResult,
} from '../../shared/schema.js';
import { InputError } from '../../src/errors.js';
import { computeRates, ratesFromFit } from '../../src/physics/rates.js';
import { readTextFile } from '../readInput.js';
import { parseJsonText } from '../../src/batch/jsonPositions.js';
import { action } from '../run.js';

const NUMBER = /^\s*[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?\s*$/;

/** A number given on the command line; the flag is named in the error. Range checks belong to the physics. */
export function numberOption(text: string, flag: string): number;
export function numberOption(text: string | undefined, flag: string): number | undefined;
export function numberOption(text: string | undefined, flag: string): number | undefined {
  if (text === undefined) return undefined;
  if (!NUMBER.test(text)) {
    throw new InputError(
      `${flag} '${text}' is not a number${/\d,\d/.test(text) ? ' (use a decimal point, not a comma)' : ''}`,
    );
  }
  return Number(text);
}

/** A comma-separated list of numbers, `0.02,0.04,0.06`. */
export function numberListOption(text: string | undefined, flag: string): number[] | undefined {
  if (text === undefined) return undefined;
  const parts = text.split(',');
  return parts.map((p, i) => {
    if (!NUMBER.test(p))
      throw new InputError(
        `${flag}: item ${i + 1} '${p.trim()}' is not a number (separate values with commas)`,
      );
    return Number(p);
  });
}

/** `LOW:HIGH` (also `LOW,HIGH`). */
export function rangeOption(text: string | undefined, flag: string): [number, number] | undefined {
  if (text === undefined) return undefined;
  const m = /^\s*([^:,]+)\s*[:,]\s*([^:,]+)\s*$/.exec(text);
  if (!m || !NUMBER.test(m[1]) || !NUMBER.test(m[2]) || !(Number(m[2]) > Number(m[1]))) {
    throw new InputError(`${flag} '${text}' must be LOW:HIGH with HIGH > LOW, for example 16000:21500`);
  }
  return [Number(m[1]), Number(m[2])];
}

/** The fit in a FitResult file, a sample result, or a batch results.json (an array of sample results). */
export function fitFromJson(data: unknown, file: string, sample?: string): { fit: FitResult; label: string } {
  if (isFitResult(data)) {
    if (sample !== undefined)
      throw new InputError('--sample applies to a batch results file, not to a single fit', { file });
    return { fit: data, label: file };
  }
  const fromSample = (s: SampleResult): { fit: FitResult; label: string } => {
    if (s.status !== 'ok' || !s.fit) {
      throw new InputError(`sample '${s.sample}' has no fit (${s.error ?? `status ${s.status}`})`, { file });
    }
    return { fit: s.fit, label: `${file} (sample ${s.sample})` };
  };
  if (isSampleResult(data)) return fromSample(data);
  const list = Array.isArray(data)
    ? data
    : typeof data === 'object' && data !== null && Array.isArray((data as { samples?: unknown }).samples)
      ? (data as { samples: unknown[] }).samples
      : null;
  if (!list) throw new InputError('holds neither a fit result nor batch sample results', { file });
  const samples = list.filter(isSampleResult);
  if (sample !== undefined) {
    const found = samples.find((s) => s.sample === sample);
    if (!found) {
      throw new InputError(
        `has no sample '${sample}'; samples: ${samples.map((s) => s.sample).join(', ') || 'none'}`,
        { file },
      );
    }
    return fromSample(found);
  }
  const withFit = samples.filter((s) => s.status === 'ok' && s.fit);
  if (withFit.length === 1) return fromSample(withFit[0]);
  throw new InputError(
    `holds ${withFit.length} fitted samples; pick one with --sample (${withFit.map((s) => s.sample).join(', ') || 'none'})`,
    { file },
  );
}

/** Aligned `label  value` lines. */
export function rows(pairs: [string, string][], indent = '  '): string[] {
  const w = Math.max(...pairs.map(([k]) => k.length));
  return pairs.map(([k, v]) => `${indent}${k.padEnd(w)}  ${v}`);
}

/** Notes and warnings under a table. */
export function remarks(notes: string[], warnings: string[]): string[] {
  const out: string[] = [];
  if (notes.length) out.push('', ...notes.map((n) => `note: ${n}`));
  if (warnings.length) out.push('', ...warnings.map((w) => `warning: ${w}`));
  return out;
}

const BASIS_WORDS: Record<RatesResult['tauBasis'], string> = {
  single: 'single lifetime',
  amplitudeWeighted: 'amplitude-weighted average lifetime',
  perComponent: 'amplitude-weighted average lifetime, common k_r per component',
};

/** The rates as a readable table with units. */
export function formatRatesText(r: RatesResult, label?: string): string {
  const corr =
    r.krErrPerS > 0 && r.knrErrPerS > 0
      ? formatNumber(r.krKnrCovPerS2 / (r.krErrPerS * r.knrErrPerS), { digits: 3 })
      : '–';
  const out = [
    `Rates from Φ = ${formatValueError(r.qy, r.qyErr)} and τ = ${formatValueError(r.tauNs, r.tauErrNs)} ns (${BASIS_WORDS[r.tauBasis]})` +
      (label ? `, ${label}` : ''),
    '',
    ...rows([
      ['k_r   radiative rate (s⁻¹)', formatValueError(r.krPerS, r.krErrPerS)],
      ['k_nr  non-radiative rate (s⁻¹)', formatValueError(r.knrPerS, r.knrErrPerS)],
      ['τ₀    natural radiative lifetime (ns)', formatValueError(r.tau0Ns, r.tau0ErrNs)],
      ['correlation of k_r and k_nr', corr],
    ]),
  ];
  if (r.perComponent) {
    out.push('', '  per component (common k_r):');
    out.push(
      ...rows(
        r.perComponent.map((c, i) => [
          `τ${i + 1} = ${formatNumber(c.tauNs)} ns: k_nr (s⁻¹)`,
          formatValueError(c.knrPerS, c.knrErrPerS),
        ]),
        '    ',
      ),
    );
  }
  out.push(...remarks(r.notes, r.warnings));
  return out.join('\n') + '\n';
}

interface RatesCliOptions {
  tauNs?: string;
  tauErrNs?: string;
  qy?: string;
  qyErr?: string;
  from?: string;
  sample?: string;
  commonKr?: boolean;
  json?: boolean;
}

/** Prints a result as one JSON object (warnings also on stderr) or as text. */
export function emit(json: boolean | undefined, result: unknown, text: string, warnings: string[]): void {
  if (json) {
    process.stdout.write(`${JSON.stringify(result, null, 2)}\n`);
    for (const w of warnings) process.stderr.write(`warning: ${w}\n`);
  } else {
    process.stdout.write(text);
  }
}

/** `lumirate rates`: radiative and non-radiative rates from a lifetime (or a fit) and a quantum yield. */
export function register(program: Command): void {
  program
    .command('rates')
    .description(
      'Radiative and non-radiative rate constants k_r = Φ/τ, k_nr = (1−Φ)/τ and the natural radiative lifetime, with propagated uncertainties.',
    )
    .option('--tau-ns <ns>', 'fluorescence lifetime, ns')
    .option('--tau-err-ns <ns>', 'standard uncertainty of the lifetime, ns (default 0)')
    .option('--qy <fraction>', 'fluorescence quantum yield Φ, a fraction in (0, 1]')
    .option('--qy-err <fraction>', 'standard uncertainty of Φ (default 0)')
    .option('--from <file>', 'take τ from a fit result JSON (lumirate fit --json) or a batch results.json')
    .option('--sample <name>', 'with --from on a batch results file: which sample')
    .option('--common-kr', 'multi-exponential fit: assume one radiative rate and give k_nr per component')
    .option('--json', 'print the result as one JSON object')
    .action(
      action((opts: RatesCliOptions) => {
        if (opts.qy === undefined)
          throw new InputError('--qy is required (the fluorescence quantum yield, e.g. --qy 0.45)');
        const qy = numberOption(opts.qy, '--qy');
        const qyErr = numberOption(opts.qyErr, '--qy-err');
        let result: RatesResult;
        let label: string | undefined;
        if (opts.from !== undefined) {
          for (const [flag, v] of [
            ['--tau-ns', opts.tauNs],
            ['--tau-err-ns', opts.tauErrNs],
          ] as const) {
            if (v !== undefined)
              throw new InputError(
                `${flag} cannot be combined with --from (the lifetime comes from the fit)`,
              );
          }
          const picked = fitFromJson(
            parseJsonText(readTextFile(opts.from), opts.from),
            opts.from,
            opts.sample,
          );
          label = picked.label;
          result = ratesFromFit(picked.fit, { qy, qyErr }, { commonKr: opts.commonKr });
        } else {
          if (opts.tauNs === undefined)
            throw new InputError('give the lifetime with --tau-ns, or a fit with --from');
          if (opts.commonKr)
            throw new InputError('--common-kr needs a multi-exponential fit given with --from');
          if (opts.sample !== undefined) throw new InputError('--sample applies only with --from');
          result = computeRates({
            qy,
            qyErr,
            tauNs: numberOption(opts.tauNs, '--tau-ns'),
            tauErrNs: numberOption(opts.tauErrNs, '--tau-err-ns'),
          });
        }
        emit(opts.json, result, formatRatesText(result, label), result.warnings);
      }),
    );
}
