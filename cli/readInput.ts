import { existsSync, readFileSync } from 'node:fs';
import { InputError } from '../src/errors.js';
import { decodeText } from '../src/io/decodeText.js';
import {
  histogramCountsColumns,
  parseHistogramText,
  type HistogramParseOptions,
} from '../src/io/parseHistogram.js';
import { parseArrivalsText, type ArrivalsParseOptions } from '../src/io/parseArrivals.js';
import { parseSpectrumText, type SpectrumParseOptions } from '../src/io/parseSpectrum.js';
import { splitSourceRef } from '../src/io/sourceRef.js';
import type { Histogram, Spectrum } from '../src/io/types.js';

/** Reads a file as text, turning file-system failures into InputErrors that name the path. */
export function readTextFile(path: string): string {
  let bytes: Buffer;
  try {
    bytes = readFileSync(path);
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    if (code === 'ENOENT') throw new InputError('no such file', { file: path });
    if (code === 'EISDIR') throw new InputError('is a directory, not a file', { file: path });
    if (code === 'EACCES' || code === 'EPERM')
      throw new InputError('cannot be read (permission denied)', { file: path });
    throw new InputError(`cannot be read (${code ?? (err as Error).message})`, { file: path });
  }
  return decodeText(bytes, path);
}

/**
 * Reads a histogram from `path` or `path#column` (the last `#` splits). A column in the reference
 * and a different one in the options is an error rather than a silent choice.
 */
export function readHistogramFile(
  pathOrRef: string,
  opts: Omit<HistogramParseOptions, 'source'> = {},
): Histogram {
  const { path, column } = splitRef(pathOrRef);
  if (column !== undefined && opts.column !== undefined && String(opts.column) !== column) {
    throw new InputError(
      `names column '${column}' but column '${opts.column}' was also asked for; give one`,
      {
        file: pathOrRef,
      },
    );
  }
  return parseHistogramText(readTextFile(path), { ...opts, column: column ?? opts.column, source: path });
}

/**
 * Every decay in a file, one histogram per counts column: for a reference with a column (or a
 * column option) just that one.
 */
export function readAllHistograms(
  pathOrRef: string,
  opts: Omit<HistogramParseOptions, 'source'> = {},
): Histogram[] {
  const { path, column } = splitRef(pathOrRef);
  if (column !== undefined || opts.column !== undefined) return [readHistogramFile(pathOrRef, opts)];
  const text = readTextFile(path);
  return histogramCountsColumns(text, { ...opts, source: path }).map((c) =>
    parseHistogramText(text, { ...opts, column: c, source: path }),
  );
}

/** Reads a photon arrival list and histograms it. */
export function readArrivalsFile(pathOrRef: string, opts: Omit<ArrivalsParseOptions, 'source'>): Histogram {
  const { path, column } = splitRef(pathOrRef);
  return parseArrivalsText(readTextFile(path), { ...opts, column: column ?? opts.column, source: path });
}

/** Reads an absorption or emission spectrum. */
export function readSpectrumFile(path: string, opts: Omit<SpectrumParseOptions, 'source'>): Spectrum {
  const ref = splitRef(path);
  return parseSpectrumText(readTextFile(ref.path), {
    ...opts,
    column: ref.column ?? opts.column,
    source: ref.path,
  });
}

/** `splitSourceRef`, with a clear message when the `#` belonged to a file name that exists. */
function splitRef(ref: string): { path: string; column?: string } {
  const parts = splitSourceRef(ref);
  if (parts.column !== undefined && !existsSync(parts.path) && existsSync(ref)) {
    throw new InputError(
      `the last '#' splits a path from a column name, so this reads as file '${parts.path}', column '${parts.column}'; the file name itself contains '#': add the column after it (${ref}#counts) or rename the file`,
      { file: ref },
    );
  }
  return parts;
}
