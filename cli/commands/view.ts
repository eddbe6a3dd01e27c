import type { Command } from 'commander';
import { dirname, join } from 'node:path';
import { existsSync, statSync } from 'node:fs';
import { InputError } from '../../src/errors.js';
import { action } from '../run.js';
import { readTextFile } from '../readInput.js';
import { parseJsonText } from '../../src/batch/jsonPositions.js';
import { reportDataFromJson, samePath, seriesFromJson, writeReport } from '../report.js';

interface ViewOptions {
  out?: string;
  series?: string[];
  title?: string;
  quiet?: boolean;
}

/** `lumirate view RESULTS.json --out report.html`: the offline HTML report of a results file. */
export function register(program: Command): void {
  program
    .command('view')
    .description(
      'Write a self-contained HTML report (sample table, decays with fits and residuals, rates, series) that opens offline in a browser.',
    )
    .argument(
      '<results>',
      'results.json from a batch (an array of sample results), or a saved report data file',
    )
    .option('-o, --out <file>', 'report file to write (default: report.html beside the results file)')
    .option('--series <files...>', 'series result JSON files to show as series views')
    .option('--title <text>', 'title shown at the top of the report')
    .option('-q, --quiet', 'print nothing on success')
    .action(
      action(async (results: string, opts: ViewOptions) => {
        const text = readTextFile(results);
        const series = (opts.series ?? []).flatMap((f) =>
          seriesFromJson(parseJsonText(readTextFile(f), f), f),
        );
        const data = reportDataFromJson(parseJsonText(text, results), results, { title: opts.title, series });
        const out = opts.out ?? join(dirname(results), 'report.html');
        if (samePath(out, results) || (opts.series ?? []).some((f) => samePath(out, f)))
          throw new InputError('the report would overwrite one of its inputs; choose another --out', {
            file: out,
          });
        if (existsSync(out) && statSync(out).isDirectory())
          throw new InputError('is a folder; give a file name for the report', { file: out });
        if (!existsSync(dirname(out) || '.'))
          throw new InputError(`the folder "${dirname(out)}" does not exist`, { file: out });
        await writeReport(data, out);
        if (!opts.quiet) {
          const failed = data.samples.filter((s) => s.status === 'failed').length;
          process.stdout.write(
            `wrote ${out}: ${data.samples.length} samples (${failed} failed), ${data.series.length} series\n`,
          );
        }
      }),
    );
}
