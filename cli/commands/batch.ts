import { existsSync } from 'node:fs';
import { type Command, Option } from 'commander';
import { SETTINGS_TEMPLATE } from '../../src/batch/settings.js';
import { parseShard } from '../../src/batch/shard.js';
import { InputError } from '../../src/errors.js';
import { writeFileAtomic } from '../batch/atomicWrite.js';
import { runBatch, type BatchSummary } from '../batch/runBatch.js';
import { EXIT } from '../exitCodes.js';
import { action, ExitWith } from '../run.js';

/** Exit code of a batch stopped by Ctrl-C (128 + SIGINT, as shells report it). */
export const EXIT_INTERRUPTED = 130;

interface BatchCliOptions {
  out: string;
  settings?: string;
  jobs?: string;
  shard?: string;
  resume?: boolean;
  quiet?: boolean;
  curves: boolean;
  report: boolean;
  init?: string | boolean;
  force?: boolean;
}

function parseJobs(text: string | undefined): number | undefined {
  if (text === undefined) return undefined;
  if (!/^\d+$/.test(text) || Number(text) < 1)
    throw new InputError(`--jobs '${text}' must be a whole number ≥ 1`);
  return Number(text);
}

/** The end-of-batch summary on stderr: counts, then each failure with its one-line error. */
export function formatBatchSummary(s: BatchSummary, outDir: string): string {
  const lines: string[] = [];
  const reused = s.reused ? `, ${s.reused} reused from the previous run` : '';
  lines.push(`batch: ${s.ok} ok, ${s.failed} failed${reused} (of ${s.total}); results in ${outDir}`);
  if (s.interrupted)
    lines.push(`batch: stopped before ${s.notRun} samples ran; run again with --resume to finish them`);
  for (const f of s.failures) lines.push(`  failed ${f.sample}: ${f.error}`);
  for (const e of s.seriesErrors) lines.push(`  ${e}`);
  return lines.join('\n') + '\n';
}

export function register(program: Command): void {
  program
    .command('batch')
    .description(
      'Fit every sample of a manifest the same way, in parallel, and write tables, a summary and a report.',
    )
    .argument('[manifest]', 'CSV manifest, one row per sample (columns in the README)')
    .option('-o, --out <dir>', 'output directory', 'lumirate-batch')
    .option('-s, --settings <file>', 'settings file with defaults for every row (JSON, // comments allowed)')
    .option('-j, --jobs <n>', 'worker threads (default: the number of cores)')
    .option(
      '--shard <k/n>',
      'run only share K of N (by a hash of the sample id; groups stay together); join shares with `lumirate merge`',
    )
    .option(
      '--resume',
      'reuse results whose input files and settings are unchanged; finish an interrupted batch',
    )
    .option('-q, --quiet', 'no progress bar')
    .option('--no-curves', 'leave the plotting curves out of results.json (smaller files, faster fits)')
    .option('--no-report', 'do not write report.html')
    .addOption(
      new Option(
        '--init [file]',
        'write a commented settings template (default: lumirate-settings.json) and stop',
      ),
    )
    .option('--force', 'with --init: overwrite an existing file')
    .action(
      action(async (manifest: string | undefined, opts: BatchCliOptions) => {
        if (opts.init !== undefined) {
          const file = typeof opts.init === 'string' ? opts.init : 'lumirate-settings.json';
          if (existsSync(file) && !opts.force)
            throw new InputError(`${file} exists; use --force to overwrite it`);
          writeFileAtomic(file, SETTINGS_TEMPLATE);
          process.stderr.write(`wrote the settings template ${file}\n`);
          return;
        }
        if (!manifest) throw new InputError('give a manifest file (or --init to write a settings template)');
        const jobs = parseJobs(opts.jobs);
        const shard = opts.shard === undefined ? undefined : parseShard(opts.shard);
        let onSigint: (() => void) | null = null;
        const summary = await runBatch({
          manifestPath: manifest,
          outDir: opts.out,
          settingsPath: opts.settings,
          jobs,
          shard,
          resume: opts.resume === true,
          quiet: opts.quiet === true,
          curves: opts.curves,
          report: opts.report,
          onStart: (stop) => {
            onSigint = () => {
              process.stderr.write('\nbatch: stopping; keeping the samples that finished\n');
              stop();
            };
            process.once('SIGINT', onSigint);
          },
        });
        if (onSigint) process.removeListener('SIGINT', onSigint);
        process.stderr.write(formatBatchSummary(summary, opts.out));
        if (summary.interrupted) throw new ExitWith(EXIT_INTERRUPTED);
        if (summary.failed > 0) throw new ExitWith(EXIT.someSamplesFailed);
      }),
    );
}
