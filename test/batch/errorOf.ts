import { InputError } from '../../src/errors.js';

/** The InputError a call throws; fails the test when it throws nothing or something else. */
export function errorOf(fn: () => unknown): InputError {
  try {
    fn();
  } catch (err) {
    if (err instanceof InputError) return err;
    throw err;
  }
  throw new Error('expected an InputError');
}
