/**
 * Writing the offline HTML report: reads the page bundle and uPlot's files, writes the page's pieces
 * (`reportHtmlPieces`) one by one and atomically (the batch's `writeFileAtomicDeferred`: a temporary file in the
 * same folder, then a rename), so an interrupted run never leaves half a report.
 *
 * The page bundle is `dist/viewer/app.js` + `app.css`, made by `npm run build`. When the viewer's
 * sources are present (a source checkout, tests under tsx) and the bundle is missing or older than
 * them, the bundle is rebuilt first by running `viewer/build.mjs`; an installed copy without sources
 * uses the bundle it ships.
 */
import { spawnSync } from 'node:child_process';
import {
  existsSync,
  readdirSync,
  readFileSync,
  renameSync,
  statSync,
  unlinkSync,
  writeFileSync,
} from 'node:fs';
import { createRequire } from 'node:module';
import { basename, dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { curvesForScript, reportHtmlPieces, type ReportAssets } from '../shared/reportHtml.js';
import {
  SCHEMA_VERSION,
  isCompatibleSchema,
  isSampleResult,
  type ReportData,
  type SampleResult,
  type SeriesResult,
} from '../shared/schema.js';
import { InputError } from '../src/errors.js';
import { writeFileAtomicDeferred } from './batch/atomicWrite.js';
import { packageVersion } from './version.js';

/** The folder holding lumirate's package.json, from sources or from dist/. */
function projectRoot(): string {
  let dir = dirname(fileURLToPath(import.meta.url));
  for (let i = 0; i < 5; i++) {
    const candidate = join(dir, 'package.json');
    if (
      existsSync(candidate) &&
      (JSON.parse(readFileSync(candidate, 'utf8')) as { name?: string }).name === 'lumirate'
    )
      return dir;
    dir = dirname(dir);
  }
  throw new Error('cannot find the lumirate package folder to load the report page from');
}

/** Newest modification time of the files the page bundle is built from. */
function newestSourceMs(dirs: string[]): number {
  let newest = 0;
  for (const dir of dirs) {
    if (!existsSync(dir)) continue;
    for (const name of readdirSync(dir)) {
      if (!/\.(ts|css|mjs)$/.test(name)) continue;
      newest = Math.max(newest, statSync(join(dir, name)).mtimeMs);
    }
  }
  return newest;
}

/** Builds the page bundle when the sources are newer than it; returns the bundle's folder. */
function ensurePageBundle(root: string): string {
  const outDir = join(root, 'dist', 'viewer');
  const bundle = join(outDir, 'app.js');
  const css = join(outDir, 'app.css');
  const buildScript = join(root, 'viewer', 'build.mjs');
  const haveBundle = existsSync(bundle) && existsSync(css);
  if (existsSync(buildScript)) {
    const sourcesMs = newestSourceMs([join(root, 'viewer'), join(root, 'shared')]);
    const bundleMs = haveBundle ? Math.min(statSync(bundle).mtimeMs, statSync(css).mtimeMs) : 0;
    if (!haveBundle || bundleMs < sourcesMs) {
      const r = spawnSync(process.execPath, [buildScript], { cwd: root, encoding: 'utf8' });
      if (r.status !== 0)
        throw new Error(`building the report page failed: ${(r.stderr || r.stdout || '').trim()}`);
    }
  } else if (!haveBundle) {
    throw new Error('the report page bundle (dist/viewer/app.js) is missing; run "npm run build"');
  }
  return outDir;
}

let cachedAssets: ReportAssets | undefined;

/** The page bundle, its styles and uPlot's script and styles, read once per process. */
export function loadReportAssets(): ReportAssets {
  if (cachedAssets) return cachedAssets;
  const root = projectRoot();
  const pageDir = ensurePageBundle(root);
  const require = createRequire(join(root, 'package.json'));
  const uplotDir = dirname(require.resolve('uplot/dist/uPlot.iife.min.js'));
  cachedAssets = {
    appJs: readFileSync(join(pageDir, 'app.js'), 'utf8'),
    appCss: readFileSync(join(pageDir, 'app.css'), 'utf8'),
    uplotJs: readFileSync(join(uplotDir, 'uPlot.iife.min.js'), 'utf8'),
    uplotCss: readFileSync(join(uplotDir, 'uPlot.min.css'), 'utf8'),
  };
  return cachedAssets;
}

/** Writes the self-contained report for `data` to `outPath`. */
export function writeReport(data: ReportData, outPath: string): Promise<void> {
  return writeReportStreamed(
    data,
    (i) => {
      const curves = data.samples[i].fit?.curves;
      return curves ? curvesForScript(curves) : null;
    },
    outPath,
  );
}

/**
 * Writes the report piece by piece, so that a batch of thousands never holds the page as one string:
 * `data.samples` give the summary, `curvesJson(i)` each sample's curves block (see `reportHtmlPieces`).
 */
export function writeReportStreamed(
  data: ReportData,
  curvesJson: (i: number) => string | Uint8Array | null,
  outPath: string,
): Promise<void> {
  return writeFileAtomicDeferred(outPath, reportHtmlPieces(loadReportAssets(), data, curvesJson));
}

// ---------------------------------------------------------------------------------------------------
// Reading results files for `lumirate view` (the JSON itself is parsed by parseJsonText).

function checkSamples(items: unknown[], file: string): SampleResult[] {
  items.forEach((item, k) => {
    if (isSampleResult(item)) return;
    const o = (typeof item === 'object' && item !== null ? item : {}) as Record<string, unknown>;
    const name = typeof o.sample === 'string' ? ` ("${o.sample}")` : '';
    const why =
      'schemaVersion' in o && !isCompatibleSchema(o.schemaVersion)
        ? `has result schema ${JSON.stringify(o.schemaVersion)}, this lumirate reads ${SCHEMA_VERSION.split('.')[0]}.x`
        : 'is not a lumirate sample result (it needs schemaVersion, sample, status, metadata and warnings)';
    throw new InputError(`sample ${k + 1}${name} ${why}`, { file });
  });
  return items as SampleResult[];
}

function isSeriesResult(x: unknown): x is SeriesResult {
  if (typeof x !== 'object' || x === null) return false;
  const o = x as Record<string, unknown>;
  return (
    isCompatibleSchema(o.schemaVersion) &&
    typeof o.model === 'string' &&
    Array.isArray(o.points) &&
    typeof o.parameters === 'object'
  );
}

/**
 * Report data from a results file: a batch's array of sample results, a whole report (`ReportData`),
 * or a single sample result. `title` and `series` fill in what an array does not carry.
 */
export function reportDataFromJson(
  value: unknown,
  file: string,
  extra: { title?: string; series?: SeriesResult[] } = {},
): ReportData {
  const base = {
    schemaVersion: SCHEMA_VERSION,
    createdUtc: new Date().toISOString().replace(/\.\d{3}Z$/, 'Z'),
    lumirateVersion: packageVersion(),
  };
  const defaultTitle = `lumirate report: ${basename(file)}`;
  if (Array.isArray(value)) {
    return {
      ...base,
      title: extra.title ?? defaultTitle,
      samples: checkSamples(value, file),
      series: extra.series ?? [],
    };
  }
  if (typeof value === 'object' && value !== null && Array.isArray((value as ReportData).samples)) {
    const r = value as ReportData;
    if (!isCompatibleSchema(r.schemaVersion))
      throw new InputError(
        `has result schema ${JSON.stringify(r.schemaVersion)}, which this lumirate cannot read`,
        {
          file,
        },
      );
    return {
      ...base,
      ...r,
      title: extra.title ?? (typeof r.title === 'string' ? r.title : defaultTitle),
      samples: checkSamples(r.samples, file),
      series: [...(Array.isArray(r.series) ? r.series.filter(isSeriesResult) : []), ...(extra.series ?? [])],
    };
  }
  if (isSampleResult(value))
    return { ...base, title: extra.title ?? defaultTitle, samples: [value], series: extra.series ?? [] };
  throw new InputError(
    'expected an array of sample results (results.json from a batch) or a report object with "samples"',
    { file },
  );
}

/**
 * Series results from a file holding one SeriesResult, an array of them, or a batch's series.json
 * (`{ schemaVersion, series: [...] }`).
 */
export function seriesFromJson(value: unknown, file: string): SeriesResult[] {
  const wrapped =
    typeof value === 'object' &&
    value !== null &&
    !Array.isArray(value) &&
    Array.isArray((value as { series?: unknown }).series)
      ? (value as { series: unknown[] }).series
      : value;
  const items = Array.isArray(wrapped) ? wrapped : [wrapped];
  items.forEach((item, k) => {
    if (!isSeriesResult(item))
      throw new InputError(
        `item ${k + 1} is not a lumirate series result (it needs schemaVersion, model, parameters, points)`,
        {
          file,
        },
      );
  });
  return items as SeriesResult[];
}

/** Same file, after resolving both paths. */
export function samePath(a: string, b: string): boolean {
  return resolve(a) === resolve(b);
}
