import type { Command } from 'commander';
import { resolve } from 'node:path';
import { InputError } from '../../src/errors.js';
import { simulateTcspc, type IrfSpec, type SimulationOptions } from '../../src/sim/simulateTcspc.js';
import { formatHistogramTable } from '../../src/io/writeTable.js';
import { writeFileAtomic } from '../batch/atomicWrite.js';
import { readHistogramFile } from '../readInput.js';
import { action } from '../run.js';

interface SimulateCliOptions {
  tauNs: string;
  fractions?: string;
  fractionKind: string;
  peakCounts?: string;
  totalCounts?: string;
  channels: string;
  binWidthNs: string;
  periodNs?: string;
  irfFwhmNs: string;
  irfCenterNs: string;
  irfTailNs?: string;
  irfTailFraction?: string;
  irfFile?: string;
  shiftNs: string;
  background: string;
  irfCounts: string;
  irfBackground: string;
  scatter: string;
  exactCount?: boolean;
  seed: string;
  sample?: string;
  excitationNm?: string;
  out: string;
  irfOut?: string;
  json?: boolean;
}

const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

/** A number from an option; `what` says the allowed range for the message. */
function numberOption(flag: string, text: string, check: (v: number) => boolean, what: string): number {
  const t = text.trim();
  const v = Number(t);
  if (!NUMBER.test(t) || !Number.isFinite(v) || !check(v)) {
    throw new InputError(`${flag} '${text}' must be ${what}`);
  }
  return v;
}

const positive = (flag: string, text: string) => numberOption(flag, text, (v) => v > 0, 'a positive number');
const nonNegative = (flag: string, text: string) => numberOption(flag, text, (v) => v >= 0, 'a number ≥ 0');
const anyNumber = (flag: string, text: string) => numberOption(flag, text, () => true, 'a number');

/** A comma-separated list of numbers; a bad item is named by its position. */
function listOption(flag: string, text: string, check: (v: number) => boolean, what: string): number[] {
  const parts = text.split(',');
  return parts.map((p, i) => {
    const t = p.trim();
    const v = Number(t);
    if (!NUMBER.test(t) || !Number.isFinite(v) || !check(v)) {
      throw new InputError(
        parts.length > 1
          ? `${flag} '${text}': item ${i + 1}, '${p}', must be ${what}`
          : `${flag} '${text}' must be ${what}`,
      );
    }
    return v;
  });
}

/** `decay.csv` → `decay-irf.csv`: where the IRF goes when --irf-out is not given. */
export function defaultIrfPath(out: string): string {
  const m = /^(.*?)(\.[A-Za-z0-9]+)?$/.exec(out)!;
  return `${m[1]}-irf${m[2] ?? ''}`;
}

function buildOptions(o: SimulateCliOptions): SimulationOptions {
  const taus = listOption('--tau-ns', o.tauNs, (v) => v > 0, 'a positive number');
  const fractions =
    o.fractions === undefined
      ? taus.map(() => 1)
      : listOption('--fractions', o.fractions, (v) => v >= 0, 'a number ≥ 0');
  if (fractions.length !== taus.length) {
    throw new InputError(
      `--fractions has ${fractions.length} values but --tau-ns has ${taus.length}; give one fraction per lifetime`,
    );
  }
  if (o.fractionKind !== 'intensity' && o.fractionKind !== 'amplitude') {
    throw new InputError(`--fraction-kind '${o.fractionKind}' must be 'intensity' or 'amplitude'`);
  }
  if (o.peakCounts !== undefined && o.totalCounts !== undefined) {
    throw new InputError('give --peak-counts or --total-counts, not both');
  }
  const channels = numberOption(
    '--channels',
    o.channels,
    (v) => Number.isInteger(v) && v >= 2,
    'a whole number ≥ 2',
  );
  let irf: IrfSpec;
  if (o.irfFile !== undefined) {
    for (const flag of ['irfTailNs', 'irfTailFraction'] as const) {
      if (o[flag] !== undefined)
        throw new InputError(
          '--irf-file replaces the modelled IRF: leave out --irf-tail-ns and --irf-tail-fraction',
        );
    }
    const h = readHistogramFile(o.irfFile);
    irf = { kind: 'measured', counts: h.counts, binWidthNs: h.binWidthNs, startNs: h.timeNs[0] };
  } else {
    irf = {
      kind: 'gaussian',
      fwhmNs: positive('--irf-fwhm-ns', o.irfFwhmNs),
      centerNs: anyNumber('--irf-center-ns', o.irfCenterNs),
      ...(o.irfTailNs !== undefined ? { tailNs: positive('--irf-tail-ns', o.irfTailNs) } : {}),
      ...(o.irfTailFraction !== undefined
        ? {
            tailFraction: numberOption(
              '--irf-tail-fraction',
              o.irfTailFraction,
              (v) => v >= 0 && v <= 1,
              'a number from 0 to 1',
            ),
          }
        : {}),
    };
  }
  return {
    components: taus.map((tauNs, i) => ({ tauNs, fraction: fractions[i] })),
    fractionKind: o.fractionKind,
    ...(o.totalCounts !== undefined
      ? { totalCounts: positive('--total-counts', o.totalCounts) }
      : { peakCounts: positive('--peak-counts', o.peakCounts ?? '10000') }),
    channels,
    binWidthNs: positive('--bin-width-ns', o.binWidthNs),
    periodNs: o.periodNs === undefined ? null : positive('--period-ns', o.periodNs),
    irf,
    colorShiftNs: anyNumber('--shift-ns', o.shiftNs),
    backgroundPerChannel: nonNegative('--background', o.background),
    irfCounts: nonNegative('--irf-counts', o.irfCounts),
    irfBackgroundPerChannel: nonNegative('--irf-background', o.irfBackground),
    scatterFraction: numberOption('--scatter', o.scatter, (v) => v >= 0 && v <= 1, 'a number from 0 to 1'),
    fixedPhotonNumber: o.exactCount ?? false,
    seed: numberOption('--seed', o.seed, (v) => Number.isSafeInteger(v) && v >= 0, 'a whole number ≥ 0'),
  };
}

function list(values: number[]): string {
  return values.map((v) => String(Number(v.toPrecision(12)))).join(',');
}

async function run(o: SimulateCliOptions): Promise<void> {
  const options = buildOptions(o);
  const irfOut = o.irfOut ?? defaultIrfPath(o.out);
  if (resolve(irfOut) === resolve(o.out)) throw new InputError('--out and --irf-out name the same file');
  const m = simulateWithFlagNames(options);
  const t = m.truth;
  const common: Record<string, string> = {
    ...(o.sample !== undefined ? { sample: o.sample } : {}),
    bin_width_ns: String(t.binWidthNs),
    ...(t.periodNs !== null ? { period_ns: String(t.periodNs) } : {}),
    ...(o.excitationNm !== undefined
      ? { excitation_nm: String(positive('--excitation-nm', o.excitationNm)) }
      : {}),
  };
  const simulated: Record<string, string> = {
    simulated: 'true',
    simulated_seed: String(t.seed),
    simulated_tau_ns: list(t.components.map((c) => c.tauNs)),
    simulated_amplitude_fractions: list(t.components.map((c) => c.amplitudeFraction)),
    simulated_intensity_fractions: list(t.components.map((c) => c.intensityFraction)),
    simulated_shift_ns: String(t.colorShiftNs),
    simulated_background_per_channel: String(t.backgroundPerChannel),
    simulated_scatter_fraction: String(t.scatterFraction),
    simulated_irf: t.irf.kind === 'gaussian' ? describeGaussian(t.irf) : `measured from ${o.irfFile}`,
  };
  const decayText = formatHistogramTable(
    { timeNs: m.decay.timeNs, series: [{ name: 'counts', counts: m.decay.counts }] },
    { ...common, ...simulated },
  );
  const irfText = formatHistogramTable(
    { timeNs: m.irf.timeNs, series: [{ name: 'counts', counts: m.irf.counts }] },
    {
      ...common,
      role: 'irf',
      simulated: 'true',
      simulated_seed: String(t.seed),
      simulated_irf: simulated.simulated_irf,
    },
  );
  writeFileAtomic(o.out, decayText);
  writeFileAtomic(irfOut, irfText);
  const total = (a: Float64Array) => a.reduce((s, x) => s + x, 0);
  if (o.json) {
    const { irf, ...rest } = t;
    process.stdout.write(
      JSON.stringify(
        {
          decayFile: o.out,
          irfFile: irfOut,
          decayTotalCounts: total(m.decay.counts),
          decayPeakCounts: Math.max(...m.decay.counts),
          irfTotalCounts: total(m.irf.counts),
          truth: { ...rest, irf: irf.kind === 'gaussian' ? irf : { kind: 'measured', source: o.irfFile } },
        },
        null,
        2,
      ) + '\n',
    );
  } else {
    process.stdout.write(
      `wrote ${o.out} (${total(m.decay.counts)} counts, peak ${Math.max(...m.decay.counts)}) and ${irfOut} (${total(m.irf.counts)} counts)\n`,
    );
  }
}

/** Simulation option names → the flags that set them, so that a complaint names what the user typed. */
const FLAG_OF: [RegExp, string][] = [
  [/^periodNs\b/, '--period-ns'],
  [/^channels\b/, '--channels'],
  [/^binWidthNs\b/, '--bin-width-ns'],
  [/^irf\.fwhmNs\b/, '--irf-fwhm-ns'],
  [/^irf\.centerNs\b/, '--irf-center-ns'],
  [/^irf\.tailNs\b/, '--irf-tail-ns'],
  [/^irf\.tailFraction\b/, '--irf-tail-fraction'],
  [/^the measured IRF\b/, 'the IRF file'],
];

function simulateWithFlagNames(options: SimulationOptions): ReturnType<typeof simulateTcspc> {
  try {
    return simulateTcspc(options);
  } catch (err) {
    if (!(err instanceof InputError)) throw err;
    let reason = err.reason;
    for (const [re, flag] of FLAG_OF) reason = reason.replace(re, flag);
    reason = reason.replace(/\bperiodNs\b/g, '--period-ns');
    throw new InputError(reason, { file: err.file, line: err.line, column: err.column });
  }
}

function describeGaussian(irf: Extract<IrfSpec, { kind: 'gaussian' }>): string {
  let s = `gaussian fwhm_ns=${irf.fwhmNs} center_ns=${irf.centerNs}`;
  if (irf.tailNs !== undefined) s += ` tail_ns=${irf.tailNs} tail_fraction=${irf.tailFraction ?? 0.1}`;
  return s;
}

/** Registers `lumirate simulate`. */
export function register(program: Command): void {
  program
    .command('simulate')
    .description(
      'Simulate a TCSPC decay and its IRF measurement photon by photon (seeded, reproducible) and write both as tables.',
    )
    .requiredOption('--tau-ns <list>', 'lifetimes, ns, comma-separated (e.g. 1.2,4.5)')
    .option('--fractions <list>', 'one fraction per lifetime, normalised to sum 1 (default: equal)')
    .option(
      '--fraction-kind <kind>',
      "what the fractions are: 'intensity' (share of photons) or 'amplitude'",
      'intensity',
    )
    .option('--peak-counts <n>', 'mean decay counts in the fullest channel (default: 10000)')
    .option('--total-counts <n>', 'mean decay counts in the whole histogram (instead of --peak-counts)')
    .option('--channels <n>', 'number of channels', '4096')
    .option('--bin-width-ns <ns>', 'channel width, ns', '0.0122')
    .option('--period-ns <ns>', 'laser repetition period, ns; earlier pulses fold in (default: single pulse)')
    .option('--irf-fwhm-ns <ns>', 'FWHM of the Gaussian IRF, ns', '0.15')
    .option('--irf-center-ns <ns>', 'centre of the Gaussian IRF, ns', '2')
    .option('--irf-tail-ns <ns>', 'time constant of an exponential IRF tail, ns (default: no tail)')
    .option(
      '--irf-tail-fraction <f>',
      'share of IRF photons in the tail, 0–1 (default 0.1 with --irf-tail-ns)',
    )
    .option(
      '--irf-file <file[#column]>',
      'draw the IRF from a measured IRF table instead of the Gaussian; its counts are used as they are, so subtract its background first',
    )
    .option('--shift-ns <ns>', 'delay of the decay relative to the IRF (colour shift), ns', '0')
    .option('--background <counts>', 'mean background counts per channel in the decay', '0')
    .option('--irf-counts <n>', 'mean photons in the IRF measurement', '100000')
    .option('--irf-background <counts>', 'mean background counts per channel in the IRF measurement', '0')
    .option('--scatter <f>', 'share of decay photons that are scattered excitation light, 0–1', '0')
    .option('--exact-count', 'emit exactly the mean number of photons instead of a Poisson number')
    .option('--seed <n>', 'random seed (whole number); the same seed gives the same files', '1')
    .option('--sample <name>', 'sample name written into the files')
    .option('--excitation-nm <nm>', 'excitation wavelength written into the files, nm')
    .requiredOption('--out <file>', 'decay table to write')
    .option('--irf-out <file>', 'IRF table to write (default: the decay file name with -irf added)')
    .option('--json', 'print the truth used as JSON')
    .action(action((o: SimulateCliOptions) => run(o)));
}
