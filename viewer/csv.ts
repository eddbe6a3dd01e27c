/**
 * CSV for the table download (RFC 4180 quoting). Text cells that a spreadsheet would read as a formula
 * (starting with = + - @ or a tab) get a leading apostrophe, so a sample name cannot run as one.
 */
export type CsvCell = string | number | null | undefined;

export function csvCell(cell: CsvCell): string {
  if (cell === null || cell === undefined) return '';
  if (typeof cell === 'number') return Number.isFinite(cell) ? String(cell) : '';
  let text = cell;
  if (/^[=+\-@\t\r]/.test(text)) text = `'${text}`;
  return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

export function toCsv(header: string[], rows: CsvCell[][]): string {
  return [header, ...rows].map((r) => r.map(csvCell).join(',')).join('\r\n') + '\r\n';
}
