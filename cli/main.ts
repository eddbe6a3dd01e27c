#!/usr/bin/env node
import { CommanderError } from 'commander';
import { EXIT } from './exitCodes.js';
import { buildProgram } from './program.js';

async function main(argv: string[]): Promise<void> {
  const program = await buildProgram(argv);
  try {
    await program.parseAsync(argv);
  } catch (err) {
    if (err instanceof CommanderError) {
      // Help and version end with code 0; every other commander complaint is a usage error.
      process.exitCode = err.exitCode === 0 ? EXIT.ok : EXIT.badInput;
      return;
    }
    throw err;
  }
}

await main(process.argv);
