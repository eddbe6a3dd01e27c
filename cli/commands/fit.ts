import type { Command } from 'commander';
import type { FitResult } from '../../shared/schema.js';
import { formatNumber, formatValueError } from '../../shared/format.js';
import { InputError } from '../../src/errors.js';
import { fitDecay } from '../../src/fit/fitDecay.js';
import type { FitOptions } from '../../src/fit/options.js';
import { metadataPeriodNs } from '../../src/io/metadata.js';
import { EXIT } from '../exitCodes.js';
import { readHistogramFile } from '../readInput.js';
import { action, ExitWith } from '../run.js';

interface FitCliOptions {
  irf?: string;
  exp: string;
  stat: string;
  periodNs?: string;
  range?: string;
  fix: string[];
  bound: string[];
  column?: string;
  binWidthNs?: string;
  bootstrap?: string;
  profile?: boolean;
  seed?: string;
  irfModel?: string;
  tailFrom?: string;
  scatter?: boolean;
  resampleIrf?: boolean;
  allowNegative?: boolean;
  maxIterations?: string;
  json?: boolean;
}

/** Short names accepted by --fix and --bound, and the parameter each stands for. */
const SHORT_NAMES: Record<string, string> = {
  tau1: 'tau1Ns',
  tau2: 'tau2Ns',
  tau3: 'tau3Ns',
  tau4: 'tau4Ns',
  shift: 'shiftNs',
  background: 'background',
  bg: 'background',
  scatter: 'scatter',
  fwhm: 'irfFwhmNs',
  center: 'irfCenterNs',
};

function optionError(reason: string): never {
  throw new InputError(reason);
}

function number(text: string, what: string): number {
  const v = Number(text.trim());
  if (text.trim() === '' || !Number.isFinite(v)) optionError(`${what}: '${text}' is not a number`);
  return v;
}

function paramName(name: string, flag: string): string {
  const key = name.trim();
  const full = SHORT_NAMES[key] ?? (Object.values(SHORT_NAMES).includes(key) ? key : undefined);
  if (!full)
    optionError(`${flag} ${name}: unknown parameter; use one of ${Object.keys(SHORT_NAMES).join(', ')}`);
  return full;
}

/** `A:B` in ns, or `A:Bch` in channels (end exclusive). */
export function parseRange(text: string): Pick<FitOptions, 'rangeNs' | 'rangeChannels'> {
  const m = /^\s*([^:]+):([^:]+?)\s*(ch)?\s*$/.exec(text);
  if (!m) optionError(`--range '${text}': write START:END in ns, or START:ENDch in channels`);
  const a = number(m[1], '--range start');
  const b = number(m[2], '--range end');
  if (!(b > a)) optionError(`--range '${text}': the end must lie after the start`);
  if (m[3]) {
    if (!Number.isInteger(a) || !Number.isInteger(b) || a < 0)
      optionError(`--range '${text}': channels are whole numbers ≥ 0`);
    return { rangeChannels: [a, b] };
  }
  return { rangeNs: [a, b] };
}

/** Turns the command line into FitOptions; every complaint is an InputError naming the option. */
export function fitOptionsFromCli(
  o: FitCliOptions,
  decayMeta: Record<string, string>,
  source: string,
): FitOptions {
  const options: FitOptions = {};
  if (o.exp === 'auto') options.components = 'auto';
  else {
    const n = number(o.exp, '--exp');
    if (!Number.isInteger(n) || n < 1 || n > 4) optionError(`--exp ${o.exp}: give 1, 2, 3, 4 or auto`);
    options.components = n;
  }
  if (o.stat !== 'poisson' && o.stat !== 'neyman' && o.stat !== 'pearson')
    optionError(`--stat ${o.stat}: give poisson, neyman or pearson`);
  options.statistic = o.stat;
  if (o.periodNs !== undefined) {
    const t = number(o.periodNs, '--period-ns');
    if (t < 0) optionError(`--period-ns ${o.periodNs}: a period is positive (0 for a single pulse)`);
    options.periodNs = t > 0 ? t : null;
  } else {
    options.periodNs = metadataPeriodNs(decayMeta, { source }) ?? null;
  }
  if (o.range) Object.assign(options, parseRange(o.range));
  const fix: Record<string, number> = {};
  for (const item of o.fix) {
    const [name, value, ...rest] = item.split('=');
    if (value === undefined || rest.length) optionError(`--fix '${item}': write NAME=VALUE, e.g. tau2=3.5`);
    fix[paramName(name, '--fix')] = number(value, `--fix ${name}`);
  }
  if (Object.keys(fix).length) options.fix = fix;
  const bounds: Record<string, { min?: number; max?: number }> = {};
  for (const item of o.bound) {
    const m = /^([^=]+)=([^:]*):([^:]*)$/.exec(item);
    if (!m) optionError(`--bound '${item}': write NAME=MIN:MAX (either side may be empty), e.g. tau1=0.01:1`);
    const b: { min?: number; max?: number } = {};
    if (m[2].trim() !== '') b.min = number(m[2], `--bound ${m[1]} minimum`);
    if (m[3].trim() !== '') b.max = number(m[3], `--bound ${m[1]} maximum`);
    bounds[paramName(m[1], '--bound')] = b;
  }
  if (Object.keys(bounds).length) options.bounds = bounds;
  if (o.bootstrap !== undefined) options.bootstrap = number(o.bootstrap, '--bootstrap');
  if (o.seed !== undefined) options.seed = number(o.seed, '--seed');
  if (o.maxIterations !== undefined) options.maxIterations = number(o.maxIterations, '--max-iterations');
  if (o.profile) options.profile = true;
  if (o.scatter) options.scatter = true;
  if (o.resampleIrf) options.resampleIrf = true;
  if (o.allowNegative) options.allowNegativeAmplitudes = true;
  if (o.tailFrom !== undefined) {
    if (o.irf) optionError('--tail-from fits the tail without an IRF; leave out --irf');
    options.irfMode = 'none';
    options.tailStartNs = number(o.tailFrom, '--tail-from');
  } else if (o.irfModel !== undefined) {
    if (o.irfModel !== 'gaussian')
      optionError(`--irf-model ${o.irfModel}: the only modelled IRF is gaussian`);
    if (o.irf) optionError('--irf-model gaussian models the IRF; leave out --irf');
    options.irfMode = 'gaussian';
  } else if (!o.irf) {
    optionError(
      'give the measured IRF with --irf FILE, or --irf-model gaussian, or --tail-from NS for a tail fit',
    );
  } else options.irfMode = 'measured';
  return options;
}

const STAT_TEXT = {
  poisson: 'Poisson maximum likelihood',
  neyman: 'least squares, Neyman weights 1/max(n,1)',
  pearson: 'least squares, Pearson weights 1/model',
};

/** The readable report: header, component table, averages, nuisance parameters, fit quality, warnings. */
export function formatFitTable(r: FitResult, decayName: string, irfName: string | null): string {
  const lines: string[] = [];
  const irfText =
    r.irfMode === 'measured'
      ? `measured IRF ${irfName ?? ''}`.trim()
      : r.irfMode === 'gaussian'
        ? 'modelled Gaussian IRF'
        : 'tail fit, no IRF';
  const nc = r.nComponents;
  lines.push(`${decayName}: ${nc} component${nc > 1 ? 's' : ''}, ${STAT_TEXT[r.statistic]}, ${irfText}`);
  lines.push(
    `fit range ${formatNumber(r.rangeNs[0])}–${formatNumber(r.rangeNs[1])} ns (channels ${r.curves.fitStartIndex}–${r.curves.fitEndIndex}), ` +
      `bin ${formatNumber(r.binWidthNs)} ns, peak ${Number.isInteger(r.peakCounts) ? r.peakCounts : formatNumber(r.peakCounts)} counts` +
      (r.periodNs ? `, period ${formatNumber(r.periodNs)} ns` : ''),
  );
  lines.push('');
  const rows: string[][] = [
    ['', 'τ (ns)', 'amplitude (counts/ch)', 'intensity fraction', 'amplitude fraction'],
  ];
  r.components.forEach((c, k) => {
    const tauText = c.fixed ? `${formatNumber(c.tauNs)} (fixed)` : formatValueError(c.tauNs, c.tauErrNs);
    const extra: string[] = [];
    if (c.tauProfileNs)
      extra.push(`profile ${formatNumber(c.tauProfileNs[0])}–${formatNumber(c.tauProfileNs[1])}`);
    if (c.tauBootstrapCi95Ns)
      extra.push(
        `bootstrap 95 % ${formatNumber(c.tauBootstrapCi95Ns[0])}–${formatNumber(c.tauBootstrapCi95Ns[1])}`,
      );
    rows.push([
      `τ${k + 1}`,
      tauText + (extra.length ? ` [${extra.join('; ')}]` : ''),
      formatValueError(c.amplitude, c.amplitudeErr),
      formatValueError(c.intensityFraction, c.intensityFractionErr),
      formatNumber(c.amplitudeFraction),
    ]);
  });
  const widths = rows[0].map((_, j) => Math.max(...rows.map((row) => row[j].length)));
  for (const row of rows)
    lines.push(
      row
        .map((cell, j) => cell.padEnd(widths[j]))
        .join('  ')
        .trimEnd(),
    );
  lines.push('');
  const kv: [string, string][] = [];
  if (nc > 1) {
    kv.push(['⟨τ⟩ amplitude-weighted (ns)', formatValueError(r.tauAmpAvgNs, r.tauAmpAvgErrNs)]);
    kv.push(['⟨τ⟩ intensity-weighted (ns)', formatValueError(r.tauIntAvgNs, r.tauIntAvgErrNs)]);
  }
  if (r.irfMode === 'measured')
    kv.push([
      'IRF shift (ns)',
      'shiftNs' in r.fixed ? `${formatNumber(r.shiftNs)} (fixed)` : formatValueError(r.shiftNs, r.shiftErrNs),
    ]);
  if (r.irfMode === 'gaussian') {
    kv.push(['IRF FWHM (ns)', formatValueError(r.irfFwhmNs ?? NaN, r.irfFwhmErrNs)]);
    kv.push(['IRF centre (ns)', formatValueError(r.irfCenterNs ?? NaN, r.irfCenterErrNs)]);
  }
  kv.push(['background (counts/ch)', formatValueError(r.background, r.backgroundErr)]);
  if (r.scatter !== 0 || r.scatterErr !== 0)
    kv.push(['scatter (fraction)', formatValueError(r.scatter, r.scatterErr)]);
  kv.push(['χ²/dof (Pearson)', `${formatNumber(r.chi2Reduced)}  (dof ${r.dof})`]);
  kv.push(['deviance/dof', formatNumber(r.deviancePerDof)]);
  kv.push(['Durbin–Watson', formatNumber(r.durbinWatson, { digits: 3 })]);
  kv.push([
    'runs test',
    `z = ${formatNumber(r.runsZ, { digits: 3 })}, p = ${formatNumber(r.runsPValue, { digits: 2 })}`,
  ]);
  kv.push(['optimiser', `${r.stop} after ${r.iterations} iterations`]);
  if (r.componentSelection) kv.push(['components', r.componentSelection.reason]);
  const kw = Math.max(...kv.map(([k]) => k.length));
  for (const [k, v] of kv) lines.push(`${k.padEnd(kw)}  ${v}`);
  if (r.warnings.length) {
    lines.push('');
    for (const w of r.warnings) lines.push(`warning: ${w}`);
  }
  return lines.join('\n') + '\n';
}

export function register(program: Command): void {
  program
    .command('fit')
    .description('fit a fluorescence decay by IRF reconvolution (1–4 exponentials) and judge the fit')
    .argument(
      '<decay>',
      'decay histogram (text table); FILE#COLUMN picks one decay from a file that holds several',
    )
    .option('--irf <file>', 'measured instrument response, same channel width as the decay')
    .option('--exp <n|auto>', 'number of exponential components, 1–4, or auto', '1')
    .option(
      '--stat <name>',
      'poisson (maximum likelihood), neyman or pearson (weighted least squares)',
      'poisson',
    )
    .option(
      '--period-ns <ns>',
      'repetition period, adds the tails of earlier pulses (default: from the file; 0: single pulse)',
    )
    .option(
      '--range <a:b>',
      'fit range in ns, or in channels as A:Bch (end excluded); default: from the rising edge',
    )
    .option(
      '--fix <name=value>',
      'hold a parameter: tau1…tau4, shift, background, scatter, fwhm, center (repeatable)',
      collect,
      [],
    )
    .option('--bound <name=min:max>', 'bound a parameter, e.g. tau1=0.01:1 (repeatable)', collect, [])
    .option('--column <name|index>', 'counts column of the decay file, by header name or 1-based index')
    .option(
      '--bin-width-ns <ns>',
      'channel width when the files have no time column and no bin-width metadata',
    )
    .option('--bootstrap <n>', 'parametric bootstrap with n replicates')
    .option('--profile', 'profile-likelihood intervals for each lifetime')
    .option('--seed <n>', 'seed for the bootstrap (default 1)')
    .option(
      '--irf-model <kind>',
      'model the IRF when none was measured: gaussian (width and position fitted)',
    )
    .option('--tail-from <ns>', 'fit only the tail from this time, without an IRF')
    .option('--scatter', 'add a scatter term (a fraction of the IRF itself)')
    .option(
      '--resample-irf',
      "rebin an IRF recorded with another channel width onto the decay's channels (else refused)",
    )
    .option('--allow-negative', 'allow negative amplitudes (rise components)')
    .option('--max-iterations <n>', 'optimiser iteration limit (default 200)')
    .option('--json', 'print the result as one JSON object (schema in shared/schema.ts)')
    .action(
      action((decayPath: string, o: FitCliOptions) => {
        const binWidthNs = o.binWidthNs !== undefined ? number(o.binWidthNs, '--bin-width-ns') : undefined;
        const decay = readHistogramFile(decayPath, { column: o.column, binWidthNs });
        const options = fitOptionsFromCli(o, decay.metadata, decay.source);
        const irf = o.irf ? readHistogramFile(o.irf, { binWidthNs }) : null;
        const result = fitDecay(decay, irf, options);
        if (o.json) process.stdout.write(JSON.stringify(result) + '\n');
        else process.stdout.write(formatFitTable(result, decayPath, o.irf ?? null));
        if (!result.converged) {
          process.stderr.write(
            `error: the fit did not converge (${result.stop} after ${result.iterations} iterations); the numbers above are not trustworthy\n`,
          );
          throw new ExitWith(EXIT.computationFailed);
        }
      }),
    );
}

function collect(value: string, previous: string[]): string[] {
  return [...previous, value];
}
