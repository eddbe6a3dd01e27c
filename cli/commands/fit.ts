import type { Command } from 'commander';

/** Registers this command on the program. (Not yet built: registers nothing.) */
export function register(_program: Command): void {}
