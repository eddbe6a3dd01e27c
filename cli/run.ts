import { InputError, ComputationError } from '../src/errors.js';
import { EXIT } from './exitCodes.js';

/** Thrown by a command to end with a given exit code after it has printed what it wanted. */
export class ExitWith extends Error {
  constructor(readonly code: number) {
    super(`exit ${code}`);
  }
}

/** Maps an error to its exit code and one `error: …` line on stderr. */
export function reportError(err: unknown): number {
  if (err instanceof ExitWith) return err.code;
  if (err instanceof InputError) {
    process.stderr.write(`error: ${err.message}\n`);
    return EXIT.badInput;
  }
  if (err instanceof ComputationError) {
    process.stderr.write(`error: ${err.message}\n`);
    return EXIT.computationFailed;
  }
  const message = err instanceof Error ? err.message : String(err);
  process.stderr.write(`error: ${message}\n`);
  // Anything unexpected is a computation failure, with the stack for a bug report when asked.
  if (process.env.LUMIRATE_DEBUG && err instanceof Error && err.stack) process.stderr.write(`${err.stack}\n`);
  return EXIT.computationFailed;
}

/** Wraps a commander action so that errors become exit codes instead of stack traces. */
export function action<A extends unknown[]>(
  fn: (...args: A) => Promise<void> | void,
): (...args: A) => Promise<void> {
  return async (...args: A) => {
    try {
      await fn(...args);
    } catch (err) {
      process.exitCode = reportError(err);
    }
  };
}
