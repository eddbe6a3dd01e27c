/**
 * The report the browser test opens. When the demo scenario exists (sample-data/manifest.csv), it is the
 * real thing: the batch runs on it and its report.html is used (or, if the batch wrote none, the one
 * `lumirate view` writes from its results.json), and a batch failure fails the test. Before the demo
 * exists, a report built from the invented fixture stands in.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import type { ReportData, SampleResult, SeriesResult } from '../../shared/schema.js';
import { writeReport } from '../../cli/report.js';
import { fixtureReport } from './fixtures.js';

export const ROOT = join(import.meta.dirname, '..', '..');
export const OUTPUT_DIR = join(ROOT, 'test-output', 'viewer');

export interface OpenedReport {
  path: string;
  samples: SampleResult[];
  source: 'demo' | 'fixture';
  /** The batch's results.json, for the demo. */
  results?: string;
  /** The batch's series.json, for the demo when it fitted series. */
  series?: SeriesResult[];
}

function runCli(args: string[]): { status: number | null; stderr: string; stdout: string } {
  const r = spawnSync(process.execPath, ['--import', 'tsx', join(ROOT, 'cli', 'main.ts'), ...args], {
    cwd: ROOT,
    encoding: 'utf8',
    timeout: 600_000,
  });
  return { status: r.status, stderr: r.stderr, stdout: r.stdout };
}

export async function demoReport(): Promise<OpenedReport> {
  mkdirSync(OUTPUT_DIR, { recursive: true });
  const manifest = join(ROOT, 'sample-data', 'manifest.csv');
  if (existsSync(manifest)) {
    const out = join(OUTPUT_DIR, 'demo');
    rmSync(out, { recursive: true, force: true });
    // The same run as `npm run demo`: the manifest with its settings (which ask for the series).
    const settings = join(ROOT, 'sample-data', 'settings.json');
    const batch = runCli([
      'batch',
      manifest,
      ...(existsSync(settings) ? ['--settings', settings] : []),
      '--out',
      out,
      '--quiet',
    ]);
    const results = join(out, 'results.json');
    // Exit 4 means "finished, some samples failed": the demo may include a deliberately bad sample.
    if ((batch.status !== 0 && batch.status !== 4) || !existsSync(results))
      throw new Error(`the batch on the demo failed (exit ${batch.status}): ${batch.stderr}`);
    let report = join(out, 'report.html');
    if (!existsSync(report)) {
      report = join(OUTPUT_DIR, 'demo-report.html');
      const view = runCli(['view', results, '--out', report, '--quiet']);
      if (view.status !== 0) throw new Error(`lumirate view failed (exit ${view.status}): ${view.stderr}`);
    }
    return {
      path: report,
      samples: JSON.parse(readFileSync(results, 'utf8')) as SampleResult[],
      source: 'demo',
      results,
      series: existsSync(join(out, 'series.json'))
        ? (JSON.parse(readFileSync(join(out, 'series.json'), 'utf8')) as { series: SeriesResult[] }).series
        : undefined,
    };
  }
  const data: ReportData = fixtureReport({ samples: 12, channels: 4096 });
  const path = join(OUTPUT_DIR, 'fixture-report.html');
  await writeReport(data, path);
  return { path, samples: data.samples, source: 'fixture' };
}

/**
 * The demo's temperature and quencher series, fitted by `lumirate series` on the batch's results and
 * shown with `lumirate view --series`. Null before the demo exists.
 */
export function demoSeriesReport(opened: OpenedReport): { path: string; series: SeriesResult[] } | null {
  if (opened.source !== 'demo' || !opened.results) return null;
  const files: string[] = [];
  for (const [model, x] of [
    ['arrhenius', 'temperature_k'],
    ['stern-volmer', 'quencher_m'],
  ]) {
    const file = join(OUTPUT_DIR, `demo-series-${model}.json`);
    const r = runCli(['series', opened.results, '--model', model, '--x', x, '--out', file]);
    if (r.status !== 0)
      throw new Error(`lumirate series --model ${model} failed (exit ${r.status}): ${r.stderr}`);
    files.push(file);
  }
  const path = join(OUTPUT_DIR, 'demo-series-report.html');
  const view = runCli(['view', opened.results, '--series', ...files, '--out', path, '--quiet']);
  if (view.status !== 0)
    throw new Error(`lumirate view --series failed (exit ${view.status}): ${view.stderr}`);
  return { path, series: files.map((f) => JSON.parse(readFileSync(f, 'utf8')) as SeriesResult) };
}
