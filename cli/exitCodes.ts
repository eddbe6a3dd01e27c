/** Process exit codes, documented in `lumirate --help` and the README. */
export const EXIT = {
  ok: 0,
  /** Bad input or usage: a file that cannot be read, an option out of range. */
  badInput: 2,
  /** A computation failed: a fit that could not converge to finite numbers, a singular matrix. */
  computationFailed: 3,
  /** A batch finished, but some samples failed. */
  someSamplesFailed: 4,
} as const;

export const EXIT_CODES_HELP = `Exit codes:
  0  success
  2  bad input or usage
  3  a computation failed
  4  a batch finished with some samples failed`;
