import { existsSync, mkdirSync, readFileSync } from 'node:fs';
import { rm } from 'node:fs/promises';
import { availableParallelism } from 'node:os';
import { setFlagsFromString } from 'node:v8';
import { dirname, join, resolve } from 'node:path';
import { prepareReportSample, reportSampleFromJson } from '../../shared/reportHtml.js';
import type { SampleResult, SeriesResult } from '../../shared/schema.js';
import { sha256Hex, stableStringify } from '../../src/batch/hash.js';
import { parseManifest, type ManifestRow } from '../../src/batch/manifest.js';
import {
  failedSample,
  sampleFileRefs,
  settingsRecord,
  type RunContext,
} from '../../src/batch/sampleRecord.js';
import { prepareResultsCsvRow, prepareSummaryRow } from '../../src/batch/outputs.js';
import { runSeries } from '../../src/batch/series.js';
import {
  EMPTY_SETTINGS,
  parseSettings,
  resolveSampleSettings,
  type BatchSettings,
  type SampleSettings,
  type SeriesRequest,
} from '../../src/batch/settings.js';
import { shardOf, type Shard } from '../../src/batch/shard.js';
import type { InputLocation } from '../../src/errors.js';
import { readTextFile } from '../readInput.js';
import { packageVersion } from '../version.js';
import { Journal, readJournal } from './journal.js';
import { siblingModule, WorkerPool } from './pool.js';
import { ProgressBar } from './progress.js';
import { readResultsEntries } from './readResults.js';
import { readUnfinishedResults, ResultsJsonStream } from './resultsJsonStream.js';
import { batchReportData } from './report.js';
import { ReportStream } from './reportStream.js';
import { loadReportAssets } from '../report.js';
import {
  briefOf,
  type FileToRead,
  type MemberTask,
  type WorkReply,
  type WorkTask,
  type WorkerSetup,
} from './protocol.js';
import { removeStaleTemporaries, writeBatchOutputs, type OutputEntry } from './writeOutputs.js';

export interface BatchRunOptions {
  manifestPath: string;
  outDir: string;
  settingsPath?: string;
  /** Worker threads. Default: the number of cores. */
  jobs?: number;
  shard?: Shard;
  /** Skip samples whose inputs and settings are unchanged since the last run into outDir. */
  resume?: boolean;
  /** No progress bar. */
  quiet?: boolean;
  /** Keep the plotting curves in results.json. Default: true. */
  curves?: boolean;
  /** Write report.html, the offline viewer page. Default: true. */
  report?: boolean;
  /** Called once the workers run, with a function that stops the batch (used for Ctrl-C). */
  onStart?: (stop: () => void) => void;
}

export interface BatchSummary {
  total: number;
  ok: number;
  failed: number;
  /** Reused from an earlier run by --resume. */
  reused: number;
  /** Not run because the batch was stopped. */
  notRun: number;
  interrupted: boolean;
  failures: { sample: string; error: string }[];
  seriesErrors: string[];
}

export const JOURNAL_NAME = '.journal.ndjson';

/** Where a file role of a sample was named: its manifest cell when filled, else the settings key. */
function whereNamed(
  row: ManifestRow,
  column: 'decay' | 'irf' | 'absorption' | 'emission',
  settings: BatchSettings,
  manifest: string,
): InputLocation {
  const cell = row.cells[column];
  if (cell && cell.value.trim() !== '') return { file: manifest, line: cell.line, column: cell.column };
  return settings.locations[column] ?? { file: manifest, line: row.line };
}

interface Prepared {
  row: ManifestRow;
  settings: SampleSettings;
  files: FileToRead[];
}

/** Hashes of a sample's current input files, or null when one cannot be read (it will then rerun and fail). */
function currentHashes(p: Prepared): { role: string; path: string; sha256: string }[] | null {
  try {
    return p.files.map((f) => ({
      role: f.role,
      path: f.written,
      sha256: sha256Hex(readFileSync(f.absolutePath)),
    }));
  } catch {
    return null;
  }
}

/** A previous result can stand when it succeeded with the same version, settings and input bytes. */
function reusable(prev: SampleResult, p: Prepared, version: string): boolean {
  if (prev.status !== 'ok' || prev.provenance?.lumirateVersion !== version) return false;
  if (stableStringify(prev.provenance.settings) !== stableStringify(settingsRecord(p.settings))) return false;
  if (prev.manifestRow !== p.settings.manifestRow) return false;
  const now = currentHashes(p);
  return now !== null && stableStringify(now) === stableStringify(prev.provenance.inputs);
}

/**
 * Previous results in outDir: results.json of a finished run, then what a killed one left (its
 * results.json's temporary copy, read before such copies are cleared, and its journal; later wins).
 * Kept as JSON text or bytes plus the result without its curves, to hold memory down.
 */
function previousResults(
  outDir: string,
  unfinished: { bytes: Buffer; value: unknown }[],
): Map<string, OutputEntry> {
  const out = new Map<string, OutputEntry>();
  const resultsPath = join(outDir, 'results.json');
  if (existsSync(resultsPath)) {
    try {
      for (const e of readResultsEntries(resultsPath, { report: false })) out.set(e.brief.sample, e);
    } catch {
      // An unreadable results.json just means nothing to reuse from it.
    }
  }
  for (const { bytes, value } of [...unfinished, ...readJournal(join(outDir, JOURNAL_NAME))]) {
    const r = value as SampleResult;
    if (r && typeof r.sample === 'string')
      out.set(r.sample, { brief: briefOf(r), json: () => bytes.toString('utf8'), bytes: () => bytes });
  }
  return out;
}

/** Runs a batch to completion (or until stopped) and writes its outputs. Throws InputError for an unusable manifest or settings file. */
export async function runBatch(options: BatchRunOptions): Promise<BatchSummary> {
  const version = packageVersion();
  const setup: WorkerSetup = {
    lumirateVersion: version,
    curves: options.curves !== false,
    report: options.report !== false && options.curves !== false,
  };
  const jobs = Math.max(1, options.jobs ?? availableParallelism());
  // No on-stack replacement, in this thread and the workers started after this: the engine then
  // optimises a function between two calls rather than in the middle of a loop. The fitter's and the
  // writers' first calls run long loops, and code compiled in the middle of one, before the code
  // after the loop had ever run, was entered again and again and thrown out each time at that code
  // (hundreds of times in some runs of 1000 decays, each time finishing a loop of 4096 channels
  // unoptimised). Flags are per process; this one only changes when code is optimised.
  setFlagsFromString('--no-use-osr');
  // And a function must run twice as long as by default (Node 20's engine: 66 kB of bytecode per
  // tick) before it is optimised. Each worker compiles its own code while the fits run, on the same
  // two cores: this leaves ~50 of ~220 compilations of 1000 decays undone (code that runs once per
  // sample and little at that) and lets the hot loops gather fuller type feedback first (a few
  // fewer recompilations), for ~4 % less CPU time in interleaved runs.
  setFlagsFromString('--interrupt-budget=135168');
  // The worker threads load their modules while the manifest is read, the rows resolved and the
  // files checked (a thread the manifest turns out not to need is ended unused).
  const pool = new WorkerPool<WorkTask, WorkReply>(siblingModule(import.meta.url, 'worker'), jobs, setup);
  pool.prestart();
  try {
    const manifestPath = options.manifestPath;
    const manifest = parseManifest(readTextFile(manifestPath), { source: manifestPath });
    const settings = options.settingsPath
      ? parseSettings(readTextFile(options.settingsPath), { source: options.settingsPath })
      : EMPTY_SETTINGS;
    return await runWithPool(options, manifest, settings, version, pool);
  } finally {
    await pool.close();
  }
}

async function runWithPool(
  options: BatchRunOptions,
  manifest: ReturnType<typeof parseManifest>,
  settings: BatchSettings,
  version: string,
  pool: WorkerPool<WorkTask, WorkReply>,
): Promise<BatchSummary> {
  const manifestPath = options.manifestPath;
  const manifestDir = dirname(resolve(manifestPath));
  const startedUtc = new Date().toISOString();
  const ctx: RunContext = { lumirateVersion: version, timeUtc: startedUtc };

  const outDir = options.outDir;
  mkdirSync(outDir, { recursive: true });
  const unfinished = options.resume ? [...readUnfinishedResults(outDir)] : [];
  removeStaleTemporaries(outDir);

  // Resolve every row; a row that cannot be resolved fails on its own with the cell that is wrong.
  const entries: OutputEntry[] = [];
  const prepared: Prepared[] = [];
  for (const row of manifest.rows) {
    let s: SampleSettings;
    try {
      s = resolveSampleSettings(row, settings, manifestPath);
    } catch (err) {
      const group = row.cells.group?.value.trim() || null;
      if (options.shard && shardOf(row.sample, group, options.shard.count) !== options.shard.index) continue;
      const r = failedSample(
        { sample: row.sample, manifestRow: row.row, metadata: row.metadata, group },
        err,
        ctx,
      );
      entries.push({ brief: r, json: () => JSON.stringify(r) });
      continue;
    }
    if (options.shard && shardOf(s.sample, s.group, options.shard.count) !== options.shard.index) continue;
    const files: FileToRead[] = sampleFileRefs(s).map(({ role, ref }) => ({
      role,
      absolutePath: resolve(manifestDir, ref.path),
      written: ref.column === undefined ? ref.path : `${ref.path}#${ref.column}`,
      where: whereNamed(row, role, settings, manifestPath),
    }));
    // Without curves the fitter skips filling them, which is also faster.
    if (options.curves === false) s.fit = { ...s.fit, curves: false };
    prepared.push({ row, settings: s, files });
  }

  // Reuse what an earlier run finished, when nothing it depends on changed.
  let reused = 0;
  let toRun = prepared;
  if (options.resume) {
    const prev = previousResults(outDir, unfinished);
    const keep = new Set<string>();
    const groups = new Map<string, Prepared[]>();
    for (const p of prepared) {
      if (p.settings.group) groups.set(p.settings.group, [...(groups.get(p.settings.group) ?? []), p]);
      else if (prev.has(p.settings.sample) && reusable(prev.get(p.settings.sample)!.brief, p, version))
        keep.add(p.settings.sample);
    }
    // A group is reused only whole: its lifetimes were fitted from all members together.
    for (const members of groups.values()) {
      if (
        members.every(
          (p) => prev.has(p.settings.sample) && reusable(prev.get(p.settings.sample)!.brief, p, version),
        )
      ) {
        for (const p of members) keep.add(p.settings.sample);
      }
    }
    for (const sample of keep) entries.push(prev.get(sample)!);
    reused = keep.size;
    toRun = prepared.filter((p) => !keep.has(p.settings.sample));
  }

  // Tasks in manifest order; a group becomes one task at the position of its first member.
  const tasks: WorkTask[] = [];
  const groupTask = new Map<string, WorkTask>();
  for (const p of toRun) {
    const member: MemberTask = { settings: p.settings, files: p.files };
    const g = p.settings.group;
    if (g) {
      const t = groupTask.get(g);
      if (t) t.members.push(member);
      else {
        const task: WorkTask = { id: tasks.length, kind: 'group', members: [member] };
        groupTask.set(g, task);
        tasks.push(task);
      }
    } else tasks.push({ id: tasks.length, kind: 'sample', members: [member] });
  }
  const nToRun = toRun.length;

  const journal = new Journal(join(outDir, JOURNAL_NAME), { append: options.resume === true });
  // results.json is written as the samples arrive, in manifest order, so that little is left to do
  // once the last one is in.
  const resultsJson = new ResultsJsonStream(join(outDir, 'results.json'), [
    ...entries.map((e) => e.brief),
    ...toRun.map((p) => ({ sample: p.settings.sample, manifestRow: p.settings.manifestRow })),
  ]);
  for (const e of entries) resultsJson.add(e);
  // report.html is written as the samples arrive too, all but its head (see ReportStream).
  const wantReport = options.report !== false;
  const title = `lumirate batch: ${manifestPath.split(/[\\/]/).pop()}${options.shard ? ` (share ${options.shard.index}/${options.shard.count})` : ''}`;
  const reportStream = wantReport
    ? new ReportStream(
        join(outDir, 'report.html'),
        [...entries.map((e) => e.brief), ...toRun.map((p) => p.settings)],
        loadReportAssets(),
        options.shard ? 0 : settings.series.length,
      )
    : null;
  const progress = ProgressBar.for(nToRun, options.quiet === true);
  let done = 0;
  let failedNow = 0;
  let interrupted = false;
  options.onStart?.(() => {
    interrupted = true;
    pool.stop();
  });
  try {
    /** Records a finished sample; returns the worker's shared buffers it no longer needs. */
    const record = (
      json: string | Uint8Array,
      brief: SampleResult,
      reportCurves?: Uint8Array,
      summaryText = prepareReportSample(brief),
    ) => {
      const used: SharedArrayBuffer[] = [];
      const line = typeof json === 'string' ? Buffer.from(json + '\n', 'utf8') : json;
      // Where its text can be read back is set below: results.json's temporary copy, or the journal.
      const entry: OutputEntry = { brief, json: () => '' };
      entries.push(entry);
      // Its rows of results.csv and summary.md and its part of the report now, while the threads
      // fit, rather than all of them once they are done.
      prepareResultsCsvRow(brief);
      prepareSummaryRow(brief);
      // The worker's curves block is a line: the page takes it without its newline.
      reportStream?.add(brief.sample, summaryText, reportCurves?.subarray(0, -1));
      if (reportCurves) sharedBufferOf(reportCurves, used);
      // Results that go into results.json's temporary copy at once (most) or wait in memory for the
      // ones before them need no journal: a killed batch's copy is read back by --resume. Only those
      // the stream cannot keep are journalled.
      const placed = resultsJson.add(entry, line);
      if (placed === 'left') {
        const at = journal.appendLine(line);
        entry.json = () => journal.read(at);
        entry.bytes = () => journal.readBytesTransient(at);
      }
      if (typeof json !== 'string') sharedBufferOf(json, used);
      done++;
      if (brief.status === 'failed') failedNow++;
      return used;
    };
    await pool.run(
      tasks,
      (reply) => {
        // Everything is written by now (synchronously): the worker writes its next replies in them.
        const back = reply.results.flatMap((r) =>
          record(r.json, reportSampleFromJson(r.briefJson), r.reportCurves, r.briefJson),
        );
        progress.update(done, failedNow);
        return back;
      },
      // A sample that takes its worker down (out of memory …) fails alone; the batch goes on.
      (task, why) => {
        for (const m of task.members) {
          const r = failedSample(m.settings, new Error(`${why} while fitting this sample`), ctx, m.settings);
          record(JSON.stringify(r), r);
        }
        progress.update(done, failedNow);
      },
    );
  } catch (err) {
    resultsJson.abort();
    reportStream?.abort();
    throw err;
  } finally {
    progress.finish();
  }
  // The threads end while the outputs are written (runBatch waits for them before it returns).
  const closing = pool.close();

  // Series need the whole batch: a shard leaves them to the merge.
  const seriesErrors: string[] = [];
  const series: SeriesResult[] = [];
  const briefs = entries.map((e) => e.brief);
  if (!options.shard && !interrupted) {
    for (const req of settings.series) {
      try {
        series.push(runSeries(briefs, seriesOptions(req)));
      } catch (err) {
        seriesErrors.push(
          `series ${req.model} against ${req.x}: ${err instanceof Error ? err.message : String(err)}`,
        );
      }
    }
  }
  try {
    await writeBatchOutputs(outDir, entries, series, {
      title,
      writeReport: reportStream
        ? (ordered, s) => reportStream.finish(ordered, batchReportData(ordered, s, title))
        : undefined,
      resultsJson,
    });
  } catch (err) {
    resultsJson.abort();
    reportStream?.abort();
    throw err;
  }
  // The journal is only needed to finish an interrupted batch; a complete one lives in results.json.
  // It goes alongside the threads' end.
  journal.close();
  await Promise.all([closing, !interrupted && rm(journal.path, { force: true })]);

  const failures = briefs
    .filter((b) => b.status === 'failed')
    .map((b) => ({ sample: b.sample, error: b.error ?? 'failed' }));
  return {
    total: entries.length + (nToRun - done),
    ok: briefs.length - failures.length,
    failed: failures.length,
    reused,
    notRun: nToRun - done,
    interrupted,
    failures,
    seriesErrors,
  };
}

/** Adds the shared buffer under `bytes` (a worker's reply) to `into`. */
function sharedBufferOf(bytes: Uint8Array, into: SharedArrayBuffer[]): void {
  if (bytes.buffer instanceof SharedArrayBuffer) into.push(bytes.buffer);
}

export function seriesOptions(req: SeriesRequest): Parameters<typeof runSeries>[1] {
  return { model: req.model, x: req.x, group: req.group, r0Nm: req.r0Nm, tau0Ns: req.tau0Ns };
}
