/**
 * How a batch's worker reads a sample's input files: the bytes into one buffer kept for every file,
 * then the text and its SHA-256, and the unchanged files it read lately without reading them again.
 */
import { closeSync, fstatSync, openSync, readFileSync, readSync, statSync, type Stats } from 'node:fs';
import { sha256Hex } from '../../src/batch/hash.js';
import type { InputFile } from '../../src/batch/runSample.js';
import { InputError } from '../../src/errors.js';
import { decodeText } from '../../src/io/decodeText.js';
import type { FileToRead } from './protocol.js';

/**
 * The buffer every input file is read into, grown as needed. A fresh buffer per file (~100 kB for a
 * 4096-channel histogram) was handed back to the system when collected and faulted in again for the
 * next file, a cost of its own on a virtual machine. Its bytes are used only until the file's text
 * and hash are made.
 */
let readBuffer = Buffer.allocUnsafe(1 << 17);

/**
 * Inputs read more than once lately, by path, with the file's identity at the time (device, inode,
 * size, and the modification and change times, which any write moves). Most batches name one IRF
 * file in every row: an unchanged file is taken from here instead of being read, hashed and decoded
 * again for each sample (~65 µs of ~2 ms per 4096-channel sample). Each result still records the
 * SHA-256 of the very bytes it was computed from.
 *
 * A file is kept from its second read on: keeping every file's text for the next few samples made
 * each decay's text (tens of kilobytes, read once) outlive a collection of the young generation and
 * be copied into the old one, which cost more than the reads saved. Of a file read once, only its
 * identity is noted.
 */
const keptInputs = new Map<string, { identity: string; input: InputFile }>();
const INPUTS_KEPT = 8;
const seenIdentities = new Map<string, string>();
const IDENTITIES_SEEN = 64;

/** What tells a file's versions apart (see `keptInputs`). */
function identityOf(stat: Stats): string {
  return `${stat.dev}:${stat.ino}:${stat.size}:${stat.mtimeMs}:${stat.ctimeMs}`;
}

/** Sets `key` in a map that keeps its `limit` most recently set keys. */
function setRecent<V>(map: Map<string, V>, key: string, value: V, limit: number): void {
  map.delete(key);
  map.set(key, value);
  if (map.size > limit) map.delete(map.keys().next().value as string);
}

/**
 * The whole file, in `readBuffer` (valid until the next read), with its identity (null for a pipe or
 * device); or the input kept from an earlier read of it, when the file is unchanged.
 */
function readBytes(path: string): { bytes: Uint8Array; identity: string | null } | InputFile {
  // A kept file is checked by its name alone: one system call rather than opening and closing it.
  const kept = keptInputs.get(path);
  if (kept) {
    const now = statSync(path, { throwIfNoEntry: false });
    if (now?.isFile() && identityOf(now) === kept.identity) return kept.input;
  }
  const fd = openSync(path, 'r');
  try {
    const stat = fstatSync(fd);
    // A pipe or device has no size to go by: read until its end, in a buffer of its own.
    if (!stat.isFile()) return { bytes: readFileSync(fd), identity: null };
    const identity = identityOf(stat);
    const size = stat.size;
    if (readBuffer.length < size) readBuffer = Buffer.allocUnsafe(size + (size >> 3));
    // Up to the size read (as readFileSync does): a regular file needs no read that finds its end.
    let n = 0;
    while (n < size) {
      const got = readSync(fd, readBuffer, n, size - n, null);
      if (got === 0) break;
      n += got;
    }
    return { bytes: readBuffer.subarray(0, n), identity };
  } finally {
    closeSync(fd);
  }
}

/** A sample's input file as text with its SHA-256; an InputError names the file and why it cannot be read. */
export function readInput(f: FileToRead): InputFile {
  let read: ReturnType<typeof readBytes>;
  try {
    read = readBytes(f.absolutePath);
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    const why =
      code === 'ENOENT'
        ? 'not found'
        : code === 'EISDIR'
          ? 'is a directory'
          : code === 'EACCES'
            ? 'cannot be read (permission denied)'
            : `cannot be read (${code ?? String(err)})`;
    throw new InputError(`${f.role} file '${f.written}' ${why}`, f.where);
  }
  if (!('bytes' in read)) return read;
  const input = { text: decodeText(read.bytes, f.written), sha256: sha256Hex(read.bytes) };
  const path = f.absolutePath;
  if (read.identity !== null) {
    if (seenIdentities.get(path) === read.identity)
      setRecent(keptInputs, path, { identity: read.identity, input }, INPUTS_KEPT);
    else setRecent(seenIdentities, path, read.identity, IDENTITIES_SEEN);
  }
  return input;
}
