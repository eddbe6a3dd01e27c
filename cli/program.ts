import { Command } from 'commander';
import { packageVersion } from './version.js';
import { EXIT_CODES_HELP } from './exitCodes.js';

/** The commands, in the order help lists them; each module under commands/ exports `register`. */
const COMMANDS = [
  'inspect',
  'simulate',
  'fit',
  'rates',
  'sb',
  'qy',
  'batch',
  'series',
  'merge',
  'view',
] as const;

type Register = (program: Command) => void;

function loadCommand(name: (typeof COMMANDS)[number]): Promise<{ register: Register }> {
  return import(`./commands/${name}.js`) as Promise<{ register: Register }>;
}

/**
 * The command tree; `main.ts` runs it, tests drive it directly. With `argv`, when it names a command
 * only that command's module is loaded (a batch's start-up then skips the rest of the tool); help,
 * the version and anything unrecognised get the whole tree.
 */
export async function buildProgram(argv?: string[]): Promise<Command> {
  const program = new Command();
  program
    .name('lumirate')
    .description('Fluorescence decay analysis for time-correlated single photon counting.')
    .version(packageVersion(), '-V, --version')
    .showHelpAfterError()
    .addHelpText('after', `\n${EXIT_CODES_HELP}`)
    .exitOverride();
  const named = COMMANDS.find((c) => c === argv?.[2]);
  const modules = await Promise.all((named ? [named] : COMMANDS).map(loadCommand));
  for (const m of modules) m.register(program);
  return program;
}
