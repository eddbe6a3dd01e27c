import { appendFileSync, copyFileSync, existsSync, readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { temporaryName, writeFileAtomic } from '../../cli/batch/atomicWrite.js';
import { Journal } from '../../cli/batch/journal.js';
import {
  readUnfinishedResults,
  ResultsJsonStream,
  resultsJsonChunks,
} from '../../cli/batch/resultsJsonStream.js';
import type { OutputEntry } from '../../cli/batch/writeOutputs.js';
import type { SampleResult } from '../../shared/schema.js';
import { byManifestOrder } from '../../src/batch/merge.js';
import { tempDirs } from './tempDirs.js';

const tempDir = tempDirs('lumirate-results-stream-');

const sample = (name: string, row: number) =>
  ({ sample: name, manifestRow: row, status: 'ok', x: `é${row}` }) as unknown as SampleResult;

/** Entries as a batch records them: each line in the journal, its bytes handed over on arrival. */
function arrivals(dir: string, results: SampleResult[]) {
  const journal = new Journal(join(dir, '.journal'), { append: false, syncEveryMs: Infinity });
  return results.map((r) => {
    const line = new TextEncoder().encode(JSON.stringify(r) + '\n');
    const at = journal.appendLine(line);
    const entry: OutputEntry = {
      brief: r,
      json: () => journal.read(at),
      bytes: () => journal.readBytesTransient(at),
    };
    return { entry, line };
  });
}

/** What results.json holds when written from all entries at the end. */
function writtenWhole(dir: string, entries: OutputEntry[]): string {
  const path = join(dir, 'whole.json');
  writeFileAtomic(path, resultsJsonChunks(entries.slice().sort((a, b) => byManifestOrder(a.brief, b.brief))));
  return readFileSync(path, 'utf8');
}

describe('ResultsJsonStream', () => {
  const results = [sample('a', 1), sample('b', 2), sample('c', 3), sample('d', 4), sample('e', 5)];

  it('writes samples arriving out of order in manifest order, as the whole-file writer does', async () => {
    const dir = tempDir();
    const path = join(dir, 'results.json');
    const stream = new ResultsJsonStream(path, results);
    const got = arrivals(dir, [results[1], results[0], results[3], results[4], results[2]]);
    for (const { entry, line } of got) {
      stream.add(entry, line);
      // The caller's buffer is written into again at once (a worker's next reply).
      line.fill(32);
    }
    const entries = got.map((g) => g.entry);
    await stream.finish(entries.slice().sort((a, b) => byManifestOrder(a.brief, b.brief)));
    const text = readFileSync(path, 'utf8');
    expect(text).toBe(writtenWhole(dir, entries));
    expect((JSON.parse(text) as SampleResult[]).map((r) => r.sample)).toEqual(['a', 'b', 'c', 'd', 'e']);
  });

  it('holds many early lines in reused buffers without one line overwriting another', async () => {
    const dir = tempDir();
    const path = join(dir, 'results.json');
    // Lines of different lengths, arriving in blocks of five in reverse order: each block waits for
    // its first sample, and the buffers of one block's held lines serve the next block's.
    const many = Array.from({ length: 40 }, (_, i) => ({
      ...sample(`s${i}`, i + 1),
      pad: 'x'.repeat((i * 37) % 23),
    })) as SampleResult[];
    const shuffled = many.map((_, i) => many[i - (i % 5) + 4 - (i % 5)]);
    const stream = new ResultsJsonStream(path, many);
    const got = arrivals(dir, shuffled);
    got.forEach(({ entry, line }, k) => {
      expect(stream.add(entry, line)).toBe(k % 5 === 4 ? 'written' : 'held');
      line.fill(32);
      // Every entry so far still reads its own result, from a held copy or from the file.
      for (const g of got.slice(0, k + 1)) expect(JSON.parse(g.entry.json())).toEqual(g.entry.brief);
    });
    const entries = got.map((g) => g.entry);
    await stream.finish(entries.slice().sort((a, b) => byManifestOrder(a.brief, b.brief)));
    expect(readFileSync(path, 'utf8')).toBe(writtenWhole(dir, entries));
  });

  it('writes nothing under the final name until it finishes', () => {
    const dir = tempDir();
    const path = join(dir, 'results.json');
    const stream = new ResultsJsonStream(path, results);
    const got = arrivals(dir, results);
    for (const { entry, line } of got) stream.add(entry, line);
    expect(existsSync(path)).toBe(false);
    stream.abort();
    expect(readdirSync(dir)).toEqual(['.journal']);
  });

  it('reads early results back from the journal when holding them would pass its memory bound', async () => {
    const dir = tempDir();
    const path = join(dir, 'results.json');
    const stream = new ResultsJsonStream(path, results, 0);
    const got = arrivals(dir, [results[4], results[3], results[2], results[1], results[0]]);
    for (const { entry, line } of got) stream.add(entry, line);
    const entries = got.map((g) => g.entry);
    await stream.finish(entries.slice().sort((a, b) => byManifestOrder(a.brief, b.brief)));
    expect(readFileSync(path, 'utf8')).toBe(writtenWhole(dir, entries));
  });

  it('leaves out the samples of a stopped batch that never arrived', async () => {
    const dir = tempDir();
    const path = join(dir, 'results.json');
    const stream = new ResultsJsonStream(path, results);
    const got = arrivals(dir, [results[0], results[2], results[4]]);
    for (const { entry, line } of got) stream.add(entry, line);
    const entries = got.map((g) => g.entry);
    await stream.finish(entries);
    expect((JSON.parse(readFileSync(path, 'utf8')) as SampleResult[]).map((r) => r.sample)).toEqual([
      'a',
      'c',
      'e',
    ]);
    expect(readFileSync(path, 'utf8')).toBe(writtenWhole(dir, entries));
  });

  it('falls back to writing the whole file when a sample arrives that was not announced', async () => {
    const dir = tempDir();
    const path = join(dir, 'results.json');
    const stream = new ResultsJsonStream(path, results.slice(0, 2));
    const got = arrivals(dir, [results[0], sample('zz', 0), results[1]]);
    for (const { entry, line } of got) stream.add(entry, line);
    const entries = got.map((g) => g.entry);
    await stream.finish(entries.slice().sort((a, b) => byManifestOrder(a.brief, b.brief)));
    expect((JSON.parse(readFileSync(path, 'utf8')) as SampleResult[]).map((r) => r.sample)).toEqual([
      'zz',
      'a',
      'b',
    ]);
    expect(readdirSync(dir).sort()).toEqual(['.journal', 'results.json']);
  });

  it('says what became of each line, and points the entry at the copy it wrote or holds', async () => {
    const dir = tempDir();
    const path = join(dir, 'results.json');
    const stream = new ResultsJsonStream(path, results, 0);
    const got = arrivals(dir, [results[1], results[0], results[2]]);
    // Sample b comes first and cannot be held (no room): the caller keeps it. Then a is written at
    // once, b after it from the caller's copy, and c at once.
    expect(got.map(({ entry, line }) => stream.add(entry, line))).toEqual(['left', 'written', 'written']);
    for (const { entry } of got) expect(JSON.parse(entry.json())).toEqual(entry.brief);
    const roomy = new ResultsJsonStream(join(dir, 'other.json'), results);
    const more = arrivals(dir, [results[1], results[0]]);
    expect(more.map(({ entry, line }) => roomy.add(entry, line))).toEqual(['held', 'written']);
    expect(JSON.parse(more[0].entry.json())).toEqual(results[1]);
    roomy.abort();
    stream.abort();
  });

  // A batch killed while it ran leaves results.json's temporary copy: --resume reads every complete
  // sample back from it, not a torn last line, and never the copy of a batch still running (its own).
  it('gives back the complete results of a killed batch’s temporary copy', () => {
    const dir = tempDir();
    const path = join(dir, 'results.json');
    const stream = new ResultsJsonStream(path, results);
    for (const { entry, line } of arrivals(dir, [results[0], results[1], results[3]]))
      stream.add(entry, line);
    const own = join(dir, temporaryName('results.json'));
    expect(existsSync(own)).toBe(true);
    expect([...readUnfinishedResults(dir)]).toEqual([]);
    const killed = join(dir, 'results.json.tmp-1');
    copyFileSync(own, killed);
    appendFileSync(killed, ',\n{"sample":"c","manife');
    const back = [...readUnfinishedResults(dir)].map((r) => r.value);
    expect(back).toEqual([results[0], results[1]]);
    stream.abort();
  });

  it('writes an empty batch as an empty array', async () => {
    const dir = tempDir();
    const path = join(dir, 'results.json');
    await new ResultsJsonStream(path, []).finish([]);
    expect(JSON.parse(readFileSync(path, 'utf8'))).toEqual([]);
    expect(readFileSync(path, 'utf8')).toBe(writtenWhole(dir, []));
  });
});
