import { InputError } from '../errors.js';

/**
 * Bytes of a file → text, for the importers. UTF-8 only: a UTF-16 or UTF-32 byte-order mark is
 * refused with advice rather than read as garbage, and a NUL byte marks binary data. Bytes that are
 * not UTF-8 become U+FFFD, which the table reader counts as binary when there are many of them.
 */
export function decodeText(bytes: Uint8Array, source: string): string {
  const b0 = bytes[0];
  const b1 = bytes[1];
  if ((b0 === 0xff && b1 === 0xfe) || (b0 === 0xfe && b1 === 0xff)) {
    throw new InputError('is UTF-16 text; save it as UTF-8 (plain text or CSV) and try again', {
      file: source,
    });
  }
  const nul = bytes.indexOf(0);
  if (nul >= 0)
    throw new InputError(`is not a text table (binary data at byte ${nul}: a NUL byte)`, { file: source });
  return new TextDecoder('utf-8', { fatal: false, ignoreBOM: false }).decode(bytes);
}
