/**
 * `npm run bench`: runs every benchmark script in this folder, one after another (they would only
 * disturb each other's timings in parallel). Each prints its own figures; none asserts a time.
 */
import { spawnSync } from 'node:child_process';
import { readdirSync } from 'node:fs';
import { join } from 'node:path';

const here = import.meta.dirname;
const only = process.argv.slice(2);
const scripts = readdirSync(here)
  .filter((f) => f.endsWith('.ts') && f !== 'run.ts')
  .filter((f) => only.length === 0 || only.some((o) => f.startsWith(o)))
  .sort();

let failed = 0;
for (const script of scripts) {
  process.stdout.write(`\n=== ${script} ===\n`);
  const r = spawnSync(process.execPath, ['--import', 'tsx', join(here, script)], { stdio: 'inherit' });
  if (r.status !== 0) failed++;
}
process.exitCode = failed ? 1 : 0;
