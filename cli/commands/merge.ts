import { join } from 'node:path';
import type { Command } from 'commander';
import type { SampleResult, SeriesResult } from '../../shared/schema.js';
import { mergeResults } from '../../src/batch/merge.js';
import { runSeries } from '../../src/batch/series.js';
import { parseSettings } from '../../src/batch/settings.js';
import { seriesOptions } from '../batch/runBatch.js';
import { reportWriter } from '../batch/report.js';
import { readResultsEntries } from '../batch/readResults.js';
import { removeStaleTemporaries, writeBatchOutputs, type OutputEntry } from '../batch/writeOutputs.js';
import { mkdirSync } from 'node:fs';
import { EXIT } from '../exitCodes.js';
import { readTextFile } from '../readInput.js';
import { action, ExitWith } from '../run.js';

export function register(program: Command): void {
  program
    .command('merge')
    .description('Join the outputs of `lumirate batch --shard K/N` runs into one set of outputs.')
    .argument('<dirs...>', 'batch output directories (each holding results.json)')
    .requiredOption('-o, --out <dir>', 'directory for the merged outputs')
    .option(
      '-s, --settings <file>',
      'the settings file of the batch, to run its series on the merged samples',
    )
    .option('--no-report', 'do not write report.html')
    .action(
      action(async (dirs: string[], opts: { out: string; settings?: string; report: boolean }) => {
        // Each sample's JSON is kept as the bytes it is in its file; only its brief is held parsed.
        const entryOf = new Map<SampleResult, OutputEntry>();
        const parts = dirs.map((dir) => {
          const path = join(dir, 'results.json');
          const entries = readResultsEntries(path, { report: opts.report });
          for (const e of entries) entryOf.set(e.brief, e);
          return { source: path, results: entries.map((e) => e.brief) };
        });
        const merged: SampleResult[] = mergeResults(parts);
        const series: SeriesResult[] = [];
        const problems: string[] = [];
        if (opts.settings) {
          const settings = parseSettings(readTextFile(opts.settings), { source: opts.settings });
          for (const req of settings.series) {
            try {
              series.push(runSeries(merged, seriesOptions(req)));
            } catch (err) {
              problems.push(
                `series ${req.model} against ${req.x}: ${err instanceof Error ? err.message : String(err)}`,
              );
            }
          }
        }
        mkdirSync(opts.out, { recursive: true });
        removeStaleTemporaries(opts.out);
        await writeBatchOutputs(
          opts.out,
          merged.map((r) => entryOf.get(r)!),
          series,
          {
            title: 'lumirate batch (merged)',
            writeReport: opts.report ? reportWriter(opts.out, 'lumirate batch (merged)') : undefined,
          },
        );
        const failed = merged.filter((r) => r.status === 'failed');
        process.stderr.write(
          `merge: ${merged.length - failed.length} ok, ${failed.length} failed, from ${dirs.length} directories; results in ${opts.out}\n`,
        );
        for (const p of problems) process.stderr.write(`  ${p}\n`);
        if (failed.length) throw new ExitWith(EXIT.someSamplesFailed);
      }),
    );
}
