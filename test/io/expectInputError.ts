import { expect } from 'vitest';
import { InputError } from '../../src/errors.js';

/**
 * Runs `fn`, expects an InputError (never another class) and checks where it points: the file, and
 * the line and column when given, both as fields and in the message as a reader sees it.
 */
export function expectInputError(
  fn: () => unknown,
  where: { file: string; line?: number; column?: number; match?: RegExp },
): InputError {
  let caught: unknown;
  try {
    fn();
  } catch (err) {
    caught = err;
  }
  expect(caught, 'expected an InputError, but nothing was thrown').toBeDefined();
  expect(caught).toBeInstanceOf(InputError);
  const err = caught as InputError;
  expect(err.file).toBe(where.file);
  expect(err.message.startsWith(where.file)).toBe(true);
  if (where.line !== undefined) {
    expect(err.line).toBe(where.line);
    expect(err.message).toContain(`line ${where.line}`);
  }
  if (where.column !== undefined) {
    expect(err.column).toBe(where.column);
    expect(err.message).toContain(`column ${where.column}`);
  }
  if (where.match) expect(err.message).toMatch(where.match);
  return err;
}
