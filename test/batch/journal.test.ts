import { appendFileSync, existsSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { writeFileAtomic } from '../../cli/batch/atomicWrite.js';
import { Journal, readJournal } from '../../cli/batch/journal.js';
import { curvesForScript } from '../../shared/reportHtml.js';
import { fakeCurves } from './fakeResults.js';
import { removeStaleTemporaries, reportCurvesOf } from '../../cli/batch/writeOutputs.js';
import { tempDirs } from './tempDirs.js';

const tempDir = tempDirs('lumirate-journal-');

describe('journal', () => {
  it('reads back what was appended, by position and as a whole', () => {
    const path = join(tempDir(), 'j.ndjson');
    const j = new Journal(path, { append: false });
    const a = j.append(JSON.stringify({ sample: 'a', x: 'é' }));
    const b = j.append(JSON.stringify({ sample: 'b' }));
    expect(JSON.parse(j.read(b))).toEqual({ sample: 'b' });
    expect(JSON.parse(j.read(a))).toEqual({ sample: 'a', x: 'é' });
    j.close();
    expect([...readJournal(path)].map((l) => l.value)).toEqual([{ sample: 'a', x: 'é' }, { sample: 'b' }]);
  });

  it('takes lines already encoded, reads them back byte for byte, and refuses one without its newline', () => {
    const path = join(tempDir(), 'j.ndjson');
    const j = new Journal(path, { append: false, syncEveryMs: Infinity });
    const a = j.append('{"sample":"a"}');
    const b = j.appendLine(new TextEncoder().encode('{"sample":"b","x":"µ"}\n'));
    expect(b).toEqual({ offset: a.length + 1, length: 23 });
    expect(j.read(b)).toBe('{"sample":"b","x":"µ"}');
    expect(() => j.appendLine(new TextEncoder().encode('{"sample":"c"}'))).toThrow(/newline/);
    j.close();
    expect([...readJournal(path)].map((l) => (l.value as { sample: string }).sample)).toEqual(['a', 'b']);
  });

  it('flushes to disk in the background while appends go on, and closes while a flush is running', async () => {
    const path = join(tempDir(), 'j.ndjson');
    const j = new Journal(path, { append: false, syncEveryMs: 0 });
    const at = Array.from({ length: 50 }, (_, k) => j.append(JSON.stringify({ sample: `s${k}` })));
    expect(new TextDecoder().decode(j.readBytesTransient(at[7]))).toBe('{"sample":"s7"}');
    // The scratch buffer is reused: a second read replaces the first.
    expect(new TextDecoder().decode(j.readBytesTransient(at[42]))).toBe('{"sample":"s42"}');
    j.close();
    await new Promise((resolve) => setTimeout(resolve, 50));
    expect([...readJournal(path)].length).toBe(50);
    // Appending to it again starts after the last line.
    const again = new Journal(path, { append: true });
    const next = again.append('{"sample":"s50"}');
    expect(again.read(next)).toBe('{"sample":"s50"}');
    again.close();
    expect([...readJournal(path)].length).toBe(51);
  });

  it('ignores a torn last line, as a kill during a write leaves it', () => {
    const path = join(tempDir(), 'j.ndjson');
    writeFileSync(path, '{"sample":"a"}\n{"sample":"b"}\n{"sample":"c","fit":{"tau');
    expect([...readJournal(path)].map((l) => (l.value as { sample: string }).sample)).toEqual(['a', 'b']);
  });

  it('skips a torn line that later appends followed', () => {
    const path = join(tempDir(), 'j.ndjson');
    writeFileSync(path, '{"sample":"a"}\n{"sam');
    appendFileSync(path, '{"sample":"b"}\n');
    // The torn fragment and the next record share a line that does not parse: both are dropped, so b reruns.
    expect([...readJournal(path)].map((l) => (l.value as { sample: string }).sample)).toEqual(['a']);
  });
});

describe('writeFileAtomic', () => {
  it('writes the whole content and leaves no temporary file', () => {
    const dir = tempDir();
    const path = join(dir, 'out.json');
    writeFileAtomic(path, ['[', '1,2', ']']);
    expect(readFileSync(path, 'utf8')).toBe('[1,2]');
    expect(readdirSync(dir)).toEqual(['out.json']);
  });

  it('writes many pieces of text and bytes, small and larger than its buffer, in order', () => {
    const dir = tempDir();
    const path = join(dir, 'pieces.txt');
    // Text with two- to four-byte characters, pieces on both sides of the 1 MB gathering buffer
    // (a string over a third of it is encoded on its own), and bytes large and small.
    const pieces: (string | Uint8Array)[] = [];
    for (let k = 0; k < 3000; k++) pieces.push(`é${k}→𝜏,`, new Uint8Array([65 + (k % 26)]));
    pieces.push(
      'ω'.repeat(400_000),
      new Uint8Array(700_000).fill(66),
      'end',
      new Uint8Array(300_000).fill(67),
    );
    const expected = Buffer.concat(pieces.map((p) => (typeof p === 'string' ? Buffer.from(p) : p)));
    writeFileAtomic(path, pieces);
    expect(readFileSync(path).equals(expected)).toBe(true);
  });

  it('keeps the old file intact when writing the new one fails', () => {
    const dir = tempDir();
    const path = join(dir, 'out.json');
    writeFileSync(path, 'old');
    function* failing(): Generator<string> {
      yield 'new, partial';
      throw new Error('disk full');
    }
    expect(() => writeFileAtomic(path, failing())).toThrow('disk full');
    expect(readFileSync(path, 'utf8')).toBe('old');
    expect(readdirSync(dir)).toEqual(['out.json']);
  });

  it('a later run removes temporaries left by a killed one', () => {
    const dir = tempDir();
    writeFileSync(join(dir, 'results.json.tmp-999999'), '[{"half');
    writeFileSync(join(dir, 'results.json'), '[]');
    removeStaleTemporaries(dir);
    expect(readdirSync(dir)).toEqual(['results.json']);
    expect(existsSync(join(dir, 'results.json'))).toBe(true);
  });
});

describe('reportCurvesOf', () => {
  const curves = fakeCurves;
  it('packs the curves from the JSON text as the whole-page writer does, parsing only when asked', () => {
    let reads = 0;
    const full = { sample: 'a', fit: { curves } };
    const entry = {
      brief: { sample: 'a', fit: {} } as never,
      json: () => {
        reads++;
        return JSON.stringify(full);
      },
    };
    expect(reads).toBe(0);
    expect(reportCurvesOf(entry)).toBe(curvesForScript(curves as never));
    expect(reads).toBe(1);
  });
  it('uses the block a worker made, and gives none for a sample without a fit', () => {
    const block = new TextEncoder().encode('{"x":1}');
    const json = () => {
      throw new Error('must not be read');
    };
    expect(
      reportCurvesOf({ brief: { sample: 'a', fit: {} } as never, json, reportCurves: () => block }),
    ).toBe(block);
    expect(reportCurvesOf({ brief: { sample: 'b' } as never, json })).toBeNull();
  });
});
