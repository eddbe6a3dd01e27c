import { createHash } from 'node:crypto';
import { mkdirSync, renameSync, rmSync, utimesSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { readInput } from '../../cli/batch/inputFiles.js';
import type { FileToRead } from '../../cli/batch/protocol.js';
import { tempDirs } from './tempDirs.js';

const tempDir = tempDirs('lumirate-inputs-');

function toRead(path: string, written = 'data.csv'): FileToRead {
  return { role: 'irf', absolutePath: path, written, where: { file: 'm.csv', line: 2, column: 3 } };
}

/** SHA-256 by Node's own crypto module, as an outside reference for each file's bytes. */
function sha256Of(text: string): string {
  return createHash('sha256').update(Buffer.from(text, 'utf8')).digest('hex');
}

describe('readInput', () => {
  it('gives the text and the SHA-256 of the bytes', () => {
    const dir = tempDir();
    const path = join(dir, 'abc.csv');
    writeFileSync(path, 'abc');
    const input = readInput(toRead(path));
    expect(input.text).toBe('abc');
    // FIPS 180-2, appendix B.1: SHA-256("abc").
    expect(input.sha256).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
  });

  it('keeps a file read again unchanged, and reads a changed one again', () => {
    const dir = tempDir();
    const path = join(dir, 'irf.csv');
    writeFileSync(path, 'time_ns,counts\n0,1\n');
    const first = readInput(toRead(path));
    // A file read once is not kept; from its second read on it is.
    const second = readInput(toRead(path));
    expect(second).not.toBe(first);
    expect(second).toEqual(first);
    expect(readInput(toRead(path))).toBe(second);

    // Same size, other bytes, a later modification time.
    writeFileSync(path, 'time_ns,counts\n0,2\n');
    utimesSync(path, new Date(2030, 0, 1), new Date(2030, 0, 1));
    const changed = readInput(toRead(path));
    expect(changed.text).toBe('time_ns,counts\n0,2\n');
    expect(changed.sha256).toBe(sha256Of('time_ns,counts\n0,2\n'));

    // Another size, written at once.
    writeFileSync(path, 'time_ns,counts\n0,30\n');
    expect(readInput(toRead(path)).text).toBe('time_ns,counts\n0,30\n');

    // Replaced by another file (a new inode under the same name).
    writeFileSync(join(dir, 'new.csv'), 'time_ns,counts\n0,40\n');
    renameSync(join(dir, 'new.csv'), path);
    expect(readInput(toRead(path)).sha256).toBe(sha256Of('time_ns,counts\n0,40\n'));
    expect(readInput(toRead(path)).text).toBe('time_ns,counts\n0,40\n');

    // Gone while kept.
    rmSync(path);
    expect(() => readInput(toRead(path, 'irf.csv'))).toThrow("irf file 'irf.csv' not found");
  });

  it('keeps each file its own text while many are read through one buffer', () => {
    const dir = tempDir();
    const texts = Array.from({ length: 20 }, (_, k) => `time_ns,counts\n0,${k}\n`.repeat(k + 1));
    const paths = texts.map((t, k) => {
      const p = join(dir, `d${k}.csv`);
      writeFileSync(p, t);
      return p;
    });
    for (let round = 0; round < 3; round++)
      for (const [k, p] of paths.entries()) {
        const input = readInput(toRead(p));
        expect(input.text).toBe(texts[k]);
        expect(input.sha256).toBe(sha256Of(texts[k]));
      }
  });

  it('names the file and the manifest cell of one that cannot be read', () => {
    const dir = tempDir();
    expect(() => readInput(toRead(join(dir, 'nowhere.csv'), 'nowhere.csv'))).toThrow(
      "m.csv line 2, column 3: irf file 'nowhere.csv' not found",
    );
    mkdirSync(join(dir, 'folder'));
    expect(() => readInput(toRead(join(dir, 'folder'), 'folder'))).toThrow(
      "m.csv line 2, column 3: irf file 'folder' is a directory",
    );
  });
});
