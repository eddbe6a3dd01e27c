import {
  existsSync,
  mkdirSync,
  mkdtempSync,
  readdirSync,
  readFileSync,
  rmSync,
  writeFileSync,
} from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Command } from 'commander';
import { afterAll, afterEach, beforeAll, describe, expect, it, vi } from 'vitest';
import { register } from '../../cli/commands/view.js';
import { parseJsonText } from '../../src/batch/jsonPositions.js';
import { REPORT_DATA_ID } from '../../shared/reportHtml.js';
import type { ReportData } from '../../shared/schema.js';
import { InputError } from '../../src/errors.js';
import { fixtureReport } from './fixtures.js';

let dir: string;
let stderr: string[];

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'lumirate-view-'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));
afterEach(() => {
  vi.restoreAllMocks();
  process.exitCode = undefined;
});

async function view(...args: string[]): Promise<number> {
  stderr = [];
  vi.spyOn(process.stderr, 'write').mockImplementation((chunk) => {
    stderr.push(String(chunk));
    return true;
  });
  vi.spyOn(process.stdout, 'write').mockImplementation(() => true);
  const program = new Command().exitOverride();
  register(program);
  process.exitCode = undefined;
  await program.parseAsync(['node', 'lumirate', 'view', ...args]);
  const code = Number(process.exitCode ?? 0);
  process.exitCode = undefined;
  return code;
}

function embedded(htmlPath: string): ReportData {
  const html = readFileSync(htmlPath, 'utf8');
  const open = `<script type="application/json" id="${REPORT_DATA_ID}">`;
  const start = html.indexOf(open) + open.length;
  return JSON.parse(html.slice(start, html.indexOf('</script>', start))) as ReportData;
}

const data = fixtureReport({ samples: 3, channels: 128 });

describe('lumirate view', () => {
  it('turns a batch results array into a report with every sample, failed ones included', async () => {
    const results = join(dir, 'results.json');
    writeFileSync(results, JSON.stringify(data.samples, null, 2));
    expect(await view(results, '--quiet')).toBe(0);
    const got = embedded(join(dir, 'report.html'));
    expect(got.samples.map((s) => s.sample)).toEqual(data.samples.map((s) => s.sample));
    expect(got.samples.filter((s) => s.status === 'failed').length).toBe(2);
    expect(got.title).toBe('lumirate report: results.json');
  });

  it('reads a whole report object and adds series from --series files', async () => {
    const input = join(dir, 'report-data.json');
    writeFileSync(input, JSON.stringify(data));
    const seriesFile = join(dir, 'series.json');
    writeFileSync(seriesFile, JSON.stringify(data.series[0]));
    const out = join(dir, 'out.html');
    expect(await view(input, '--out', out, '--series', seriesFile, '--title', 'Titration 7', '--quiet')).toBe(
      0,
    );
    const got = embedded(out);
    expect(got.title).toBe('Titration 7');
    expect(got.series.map((s) => s.model)).toEqual(['arrhenius', 'stern-volmer', 'arrhenius']);
  });

  it("reads a batch's series.json, which wraps its series in an object", async () => {
    const results = join(dir, 'results.json');
    const seriesFile = join(dir, 'batch-series.json');
    writeFileSync(seriesFile, JSON.stringify({ schemaVersion: '1.0.0', series: data.series }));
    const out = join(dir, 'with-series.html');
    expect(await view(results, '--out', out, '--series', seriesFile, '--quiet')).toBe(0);
    expect(embedded(out).series.map((s) => s.model)).toEqual(['arrhenius', 'stern-volmer']);
  });

  it('names the file, line and column of broken JSON, exits 2 and writes nothing', async () => {
    const bad = join(dir, 'bad', 'results.json');
    mkdirSync(join(dir, 'bad'));
    writeFileSync(bad, '[\n  {"sample": "a",\n   "status": "ok",}\n]\n');
    expect(await view(bad)).toBe(2);
    expect(stderr.join('')).toBe(
      `error: ${bad} line 3, column 19: not valid JSON: a comma before } is not allowed in JSON\n`,
    );
    expect(readdirSync(join(dir, 'bad'))).toEqual(['results.json']);
  });

  it('says which entry is not a sample result', async () => {
    const odd = join(dir, 'odd.json');
    writeFileSync(odd, JSON.stringify([data.samples[0], { sample: 'x', schemaVersion: '9.0.0' }]));
    expect(await view(odd, '--out', join(dir, 'odd.html'))).toBe(2);
    expect(stderr.join('')).toMatch(/odd\.json: sample 2 \("x"\) has result schema "9\.0\.0"/);
    expect(existsSync(join(dir, 'odd.html'))).toBe(false);
  });

  it('refuses to overwrite its input and reports a missing file', async () => {
    const results = join(dir, 'results.json');
    expect(await view(results, '--out', results)).toBe(2);
    expect(stderr.join('')).toMatch(/would overwrite one of its inputs/);
    expect(await view(join(dir, 'nope.json'))).toBe(2);
    expect(stderr.join('')).toMatch(/nope\.json: no such file/);
  });
});

describe('parseJsonText', () => {
  // Positions counted by hand from the text below; lines and columns are 1-based, as an editor shows them.
  it('names the file, line and column of the first fault', () => {
    const err = (() => {
      try {
        parseJsonText('{\n"a": 1,\n"b" 2}', 'f.json');
      } catch (e) {
        return e;
      }
    })() as InputError;
    expect(err).toBeInstanceOf(InputError);
    expect([err.file, err.line, err.column]).toEqual(['f.json', 3, 5]);
  });

  it('reads a file that starts with a byte-order mark', () => {
    expect(parseJsonText('\ufeff[1]', 'g.json')).toEqual([1]);
  });
});
