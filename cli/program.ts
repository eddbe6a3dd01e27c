import { Command } from 'commander';
import { packageVersion } from './version.js';
import { EXIT_CODES_HELP } from './exitCodes.js';
import { register as registerInspect } from './commands/inspect.js';
import { register as registerSimulate } from './commands/simulate.js';
import { register as registerFit } from './commands/fit.js';
import { register as registerRates } from './commands/rates.js';
import { register as registerSb } from './commands/sb.js';
import { register as registerQy } from './commands/qy.js';
import { register as registerBatch } from './commands/batch.js';
import { register as registerSeries } from './commands/series.js';
import { register as registerMerge } from './commands/merge.js';
import { register as registerView } from './commands/view.js';

/** The whole command tree; `main.ts` runs it, tests drive it directly. */
export function buildProgram(): Command {
  const program = new Command();
  program
    .name('lumirate')
    .description('Fluorescence decay analysis for time-correlated single photon counting.')
    .version(packageVersion(), '-V, --version')
    .showHelpAfterError()
    .addHelpText('after', `\n${EXIT_CODES_HELP}`)
    .exitOverride();
  for (const register of [
    registerInspect,
    registerSimulate,
    registerFit,
    registerRates,
    registerSb,
    registerQy,
    registerBatch,
    registerSeries,
    registerMerge,
    registerView,
  ]) {
    register(program);
  }
  return program;
}
