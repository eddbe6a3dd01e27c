import { InputError } from '../errors.js';
import type { TextTable } from './textTable.js';

/** Counts above this are no photon-counting histogram (a 64-bit counter at 1 GHz needs 12 days for 1e15). */
export const MAX_COUNTS = 1e15;

/**
 * Checks parsed counts: finite, ≥ 0 and ≤ 1e15, else an InputError at the cell. Returns warnings:
 * whole numbers are expected, since Poisson statistics hold for raw photon counts only.
 */
export function checkCounts(counts: Float64Array, table: TextTable, column: number): string[] {
  let nonInteger = 0;
  let firstNonInteger = -1;
  let total = 0;
  for (let i = 0; i < counts.length; i++) {
    const v = counts[i];
    if (v < 0 || v > MAX_COUNTS) {
      // The rows (with each cell's text) are asked for only when a message needs them.
      const cell = table.rows[i].cells[column].trim();
      const where = { file: table.source, line: table.rows[i].line, column: column + 1 };
      if (v < 0) throw new InputError(`count ${cell} is negative; counts must be ≥ 0`, where);
      throw new InputError(
        `count ${cell} exceeds ${MAX_COUNTS.toExponential(0)}, which no photon-counting histogram reaches; is this the right column?`,
        where,
      );
    }
    if (!Number.isInteger(v)) {
      nonInteger++;
      if (firstNonInteger < 0) firstNonInteger = i;
    }
    total += v;
  }
  const warnings: string[] = [];
  if (nonInteger > 0) {
    const rows = table.rows;
    warnings.push(
      `${nonInteger} ${nonInteger === 1 ? 'count is not a whole number' : 'counts are not whole numbers'} (first on line ${rows[firstNonInteger].line}: ${rows[firstNonInteger].cells[column].trim()}); Poisson statistics assume raw photon counts, not scaled or background-subtracted data`,
    );
  }
  if (total === 0) warnings.push('every count is zero');
  return warnings;
}

/** True when a and b differ by more than `rel` relative to the larger. */
export function relativeDiffers(a: number, b: number, rel: number): boolean {
  return Math.abs(a - b) > rel * Math.max(Math.abs(a), Math.abs(b));
}

/** A number for a message: up to 6 significant digits, no trailing zeros. */
export function formatNumber(x: number): string {
  if (!Number.isFinite(x)) return String(x);
  return String(Number(x.toPrecision(6)));
}
