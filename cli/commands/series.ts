import { existsSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { type Command, Option } from 'commander';
import { formatNumber, formatValueError } from '../../shared/format.js';
import type { SeriesResult } from '../../shared/schema.js';
import { parseResultsJson } from '../../src/batch/merge.js';
import { runSeries } from '../../src/batch/series.js';
import { InputError } from '../../src/errors.js';
import { writeFileAtomic } from '../batch/atomicWrite.js';
import { readTextFile } from '../readInput.js';
import { action } from '../run.js';

interface SeriesCliOptions {
  x: string;
  model: SeriesResult['model'];
  group?: string;
  r0Nm?: string;
  tau0Ns?: string;
  json?: boolean;
  out?: string;
}

function positive(text: string | undefined, flag: string): number | undefined {
  if (text === undefined) return undefined;
  const v = Number(text);
  if (!/^\s*[+]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?\s*$/.test(text) || !(v > 0))
    throw new InputError(`${flag} '${text}' must be a positive number`);
  return v;
}

/** A batch output directory or its results.json. */
export function resultsPathOf(arg: string): string {
  if (existsSync(arg) && statSync(arg).isDirectory()) return join(arg, 'results.json');
  return arg;
}

/** The series as a readable table: parameters with errors, then each point with its residual. */
export function formatSeriesText(sr: SeriesResult): string {
  const out: string[] = [`${sr.model} series against ${sr.xName} (y: ${sr.yName})`, ''];
  const params = sr.parameters;
  for (const [k, v] of Object.entries(params)) {
    if (/Err/.test(k)) continue;
    const errKey = k.replace(/^([a-zA-Z0-9]+?)(Kj|Ev|Per|Ns|Nm|_)/, '$1Err$2');
    out.push(`  ${k.padEnd(18)} ${formatValueError(v, errKey !== k ? params[errKey] : undefined)}`);
  }
  if (sr.chi2Reduced !== null)
    out.push(`  ${'chi2Reduced'.padEnd(18)} ${formatNumber(sr.chi2Reduced, { digits: 3 })} (${sr.dof} dof)`);
  out.push(
    '',
    `  ${'sample'.padEnd(16)} ${sr.xName.padStart(12)} ${'y'.padStart(22)} ${'fit'.padStart(12)} ${'residual'.padStart(9)}`,
  );
  for (const p of sr.points) {
    out.push(
      `  ${p.sample.padEnd(16)} ${String(p.x).padStart(12)} ${formatValueError(p.y, p.yErr).padStart(22)} ${(p.fit === null ? '–' : formatNumber(p.fit)).padStart(12)} ${(p.residual === null ? '–' : p.residual.toFixed(2)).padStart(9)}`,
    );
  }
  if (sr.notes.length) out.push('', ...sr.notes.map((n) => `  note: ${n}`));
  if (sr.warnings.length) out.push('', ...sr.warnings.map((w) => `  warning: ${w}`));
  return out.join('\n') + '\n';
}

export function register(program: Command): void {
  program
    .command('series')
    .description(
      'Fit a series law across the samples of a batch: Arrhenius k_nr(T), Stern–Volmer, FRET efficiency, or η(T).',
    )
    .argument('<results>', 'results.json of a batch, or the batch output directory')
    .requiredOption('--x <column>', 'manifest metadata column holding x (e.g. temperature_k, quencher_m)')
    .addOption(
      new Option('--model <law>', 'series law')
        .choices(['arrhenius', 'stern-volmer', 'fret', 'efficiency'])
        .makeOptionMandatory(),
    )
    .option('--group <name>', 'only the samples of this group')
    .option('--r0-nm <nm>', 'Förster radius R0, nm (fret: adds the distance per pair)')
    .option('--tau0-ns <ns>', 'reference lifetime τ0 / τ_D, ns (default: the samples with x = 0)')
    .option('--json', 'print the series as JSON (parameters also at the top level)')
    .option('-o, --out <file>', 'also write the series JSON to this file')
    .action(
      action((resultsArg: string, opts: SeriesCliOptions) => {
        const path = resultsPathOf(resultsArg);
        const text = readTextFile(path);
        const samples = parseResultsJson(text, path);
        const sr = runSeries(samples, {
          model: opts.model,
          x: opts.x,
          group: opts.group,
          r0Nm: positive(opts.r0Nm, '--r0-nm'),
          tau0Ns: positive(opts.tau0Ns, '--tau0-ns'),
        });
        const json = JSON.stringify({ ...sr, ...sr.parameters }, null, 2) + '\n';
        if (opts.out) writeFileAtomic(opts.out, JSON.stringify(sr, null, 2) + '\n');
        process.stdout.write(opts.json ? json : formatSeriesText(sr));
      }),
    );
}
