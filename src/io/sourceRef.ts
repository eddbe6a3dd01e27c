/**
 * Splits a source reference `file.csv#column` into the path and the column. The LAST `#` splits, so
 * a path that itself contains `#` needs a column after it (`dir#1/file.csv#counts`); a reference
 * without `#` is a plain path, and a trailing `#` names no column.
 */
export function splitSourceRef(ref: string): { path: string; column?: string } {
  const at = ref.lastIndexOf('#');
  if (at < 0) return { path: ref };
  const column = ref.slice(at + 1).trim();
  const path = ref.slice(0, at);
  return column === '' ? { path } : { path, column };
}
