/**
 * Writing the offline HTML report: reads the page bundle and uPlot's files, assembles the page with
 * `assembleReportHtml` and writes it atomically (a temporary file in the same folder, then a rename), so
 * an interrupted run never leaves half a report.
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
import { assembleReportHtml, type ReportAssets } from '../shared/reportHtml.js';
import {
  SCHEMA_VERSION,
  isCompatibleSchema,
  isSampleResult,
  type ReportData,
  type SampleResult,
  type SeriesResult,
} from '../shared/schema.js';
import { InputError } from '../src/errors.js';
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

/** Writes text to `path` through a temporary file in the same folder and a rename. */
export function writeFileAtomic(path: string, text: string): void {
  const tmp = join(dirname(path), `.${basename(path)}.${process.pid}.${Date.now()}.tmp`);
  try {
    writeFileSync(tmp, text);
    renameSync(tmp, path);
  } catch (err) {
    if (existsSync(tmp)) unlinkSync(tmp);
    throw err;
  }
}

/** Writes the self-contained report for `data` to `outPath`. */
export function writeReport(data: ReportData, outPath: string): void {
  writeFileAtomic(outPath, assembleReportHtml(loadReportAssets(), data));
}

// ---------------------------------------------------------------------------------------------------
// Reading results files for `lumirate view`.

/** 1-based line and column of a character offset. */
function lineColumn(text: string, offset: number): { line: number; column: number } {
  let line = 1;
  let lineStart = 0;
  for (let i = 0; i < offset && i < text.length; i++) {
    if (text.charCodeAt(i) === 10) {
      line++;
      lineStart = i + 1;
    }
  }
  return { line, column: offset - lineStart + 1 };
}

/**
 * Where and why a text that JSON.parse rejected is not JSON (Node's message carries no position).
 * A small recursive-descent checker that follows RFC 8259 and stops at the first fault.
 */
export function locateJsonError(text: string): { offset: number; reason: string } {
  let i = 0;
  class Fault extends Error {
    constructor(
      readonly at: number,
      reason: string,
    ) {
      super(reason);
    }
  }
  const describe = (at: number) => (at >= text.length ? 'the end of the file' : `'${text[at]}'`);
  const ws = () => {
    while (i < text.length && ' \t\n\r'.includes(text[i])) i++;
  };
  const expect = (ch: string, what: string) => {
    if (text[i] !== ch) throw new Fault(i, `expected ${what} but found ${describe(i)}`);
    i++;
  };
  const value = (): void => {
    ws();
    const c = text[i];
    if (c === '{') {
      i++;
      ws();
      if (text[i] === '}') {
        i++;
        return;
      }
      for (;;) {
        ws();
        if (text[i] !== '"') throw new Fault(i, `expected a quoted key but found ${describe(i)}`);
        string();
        ws();
        expect(':', "':'");
        value();
        ws();
        if (text[i] === ',') {
          i++;
          continue;
        }
        expect('}', "',' or '}'");
        return;
      }
    }
    if (c === '[') {
      i++;
      ws();
      if (text[i] === ']') {
        i++;
        return;
      }
      for (;;) {
        value();
        ws();
        if (text[i] === ',') {
          i++;
          continue;
        }
        expect(']', "',' or ']'");
        return;
      }
    }
    if (c === '"') return string();
    for (const word of ['true', 'false', 'null']) {
      if (text.startsWith(word, i)) {
        i += word.length;
        return;
      }
    }
    const m = /^-?(0|[1-9]\d*)(\.\d+)?([eE][+-]?\d+)?/.exec(text.slice(i, i + 400));
    if (m && m[0].length > 0) {
      i += m[0].length;
      return;
    }
    throw new Fault(i, `expected a value but found ${describe(i)}`);
  };
  const string = () => {
    const start = i;
    i++;
    while (i < text.length) {
      const ch = text[i];
      if (ch === '"') {
        i++;
        return;
      }
      if (ch === '\\') {
        const e = text[i + 1];
        if (e === 'u') {
          if (!/^[0-9a-fA-F]{4}$/.test(text.slice(i + 2, i + 6)))
            throw new Fault(i, 'bad \\u escape in a string');
          i += 6;
        } else if (e !== undefined && '"\\/bfnrt'.includes(e)) i += 2;
        else throw new Fault(i, 'bad escape in a string');
        continue;
      }
      if (ch.charCodeAt(0) < 0x20)
        throw new Fault(i, 'a control character (such as a line break) inside a string');
      i++;
    }
    throw new Fault(start, 'a string that never ends');
  };
  try {
    value();
    ws();
    if (i < text.length) throw new Fault(i, `unexpected ${describe(i)} after the end of the JSON value`);
  } catch (err) {
    if (err instanceof Fault) return { offset: err.at, reason: err.message };
    throw err;
  }
  return { offset: 0, reason: 'not valid JSON' };
}

/** Parses JSON text, or throws an InputError naming the file, line and column of the fault. */
export function parseJsonFile(text: string, file: string): unknown {
  const body = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
  try {
    return JSON.parse(body);
  } catch {
    const { offset, reason } = locateJsonError(body);
    throw new InputError(`not valid JSON: ${reason}`, { file, ...lineColumn(body, offset) });
  }
}

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

/** Series results from a file holding one SeriesResult or an array of them. */
export function seriesFromJson(value: unknown, file: string): SeriesResult[] {
  const items = Array.isArray(value) ? value : [value];
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

/** Reads a file as UTF-8 text, or throws an InputError that names it. */
export function readTextFile(path: string): string {
  try {
    return readFileSync(path, 'utf8');
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    const why =
      code === 'ENOENT'
        ? 'no such file'
        : code === 'EISDIR'
          ? 'is a folder, not a file'
          : (err as Error).message;
    throw new InputError(why, { file: path });
  }
}

/** Same file, after resolving both paths. */
export function samePath(a: string, b: string): boolean {
  return resolve(a) === resolve(b);
}
