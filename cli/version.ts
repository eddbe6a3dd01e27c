import { existsSync, readFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

let cached: string | undefined;

/** lumirate's version from package.json, found by walking up from this file (sources or dist/). */
export function packageVersion(): string {
  if (cached) return cached;
  let dir = dirname(fileURLToPath(import.meta.url));
  for (let i = 0; i < 5; i++) {
    const candidate = join(dir, 'package.json');
    if (existsSync(candidate)) {
      const pkg = JSON.parse(readFileSync(candidate, 'utf8')) as { name?: string; version: string };
      if (pkg.name === 'lumirate') return (cached = pkg.version);
    }
    dir = dirname(dir);
  }
  return (cached = '0.0.0');
}
