/**
 * Typed errors thrown by lumirate's entry points. Numeric kernels never throw: they return NaN outside
 * their domain. Every message is a whole human sentence that says what is wrong and, where it can,
 * what to do about it.
 */

/** Where in an input a problem sits. Lines and columns are 1-based, as an editor shows them. */
export interface InputLocation {
  file?: string;
  line?: number;
  column?: number;
}

export class LumirateError extends Error {
  override name = 'LumirateError';
}

/** Bad input: a file, a cell, an option or a combination of them that cannot be used. */
export class InputError extends LumirateError {
  override name = 'InputError';
  readonly file?: string;
  readonly line?: number;
  readonly column?: number;
  /** The bare reason, without the location prefix. */
  readonly reason: string;

  constructor(reason: string, where: InputLocation = {}) {
    super(InputError.compose(reason, where));
    this.reason = reason;
    this.file = where.file;
    this.line = where.line;
    this.column = where.column;
  }

  /** "decay.csv line 14, column 2: 'abc' is not a number" */
  static compose(reason: string, where: InputLocation): string {
    const parts: string[] = [];
    if (where.file) parts.push(where.file);
    const pos: string[] = [];
    if (where.line !== undefined) pos.push(`line ${where.line}`);
    if (where.column !== undefined) pos.push(`column ${where.column}`);
    if (pos.length) parts.push((where.file ? ' ' : '') + pos.join(', '));
    return parts.length ? `${parts.join('')}: ${reason}` : reason;
  }
}

/** A computation that could not produce a trustworthy number (a fit that failed, a singular matrix …). */
export class ComputationError extends LumirateError {
  override name = 'ComputationError';
}
