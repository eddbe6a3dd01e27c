/**
 * Runs lumirate's CLI from its sources the way a user runs the command, for the CLI tests: a child
 * process, its exit code, stdout and stderr. tsx's own launcher is used so that any working folder
 * will do (a bare `--import tsx` resolves from the working folder).
 */
import { execFile, spawnSync } from 'node:child_process';
import { join } from 'node:path';
import { promisify } from 'node:util';

export const repoRoot = join(import.meta.dirname, '..', '..');
const tsx = join(repoRoot, 'node_modules', '.bin', 'tsx');
const main = join(repoRoot, 'cli', 'main.ts');
const execFileAsync = promisify(execFile);

export interface CliRun {
  /** Exit code; null when a signal ended the process. */
  code: number | null;
  stdout: string;
  stderr: string;
}

export interface CliRunOptions {
  /** Working folder. Default: the repository root. */
  cwd?: string;
}

export function runCliSync(args: string[], options: CliRunOptions = {}): CliRun {
  const r = spawnSync(tsx, [main, ...args], { cwd: options.cwd ?? repoRoot, encoding: 'utf8' });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

export async function runCli(args: string[], options: CliRunOptions = {}): Promise<CliRun> {
  try {
    const { stdout, stderr } = await execFileAsync(tsx, [main, ...args], { cwd: options.cwd ?? repoRoot });
    return { code: 0, stdout, stderr };
  } catch (err) {
    const e = err as { code: number | null; stdout: string; stderr: string };
    return { code: e.code, stdout: e.stdout, stderr: e.stderr };
  }
}
