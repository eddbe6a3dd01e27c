import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join, relative } from 'node:path';
import { describe, expect, it } from 'vitest';

// The layering rule of the house: shared ← src ← {cli, viewer}. The core reads no files, owns no
// process and knows no DOM; I/O arrives as text or bytes from the CLI.
const root = join(import.meta.dirname, '..');

function sources(dir: string): string[] {
  const out: string[] = [];
  for (const name of readdirSync(join(root, dir))) {
    const rel = join(dir, name);
    if (statSync(join(root, rel)).isDirectory()) out.push(...sources(rel));
    else if (/\.(ts|mts|js|mjs)$/.test(name)) out.push(rel);
  }
  return out;
}

function importsOf(file: string): string[] {
  const text = readFileSync(join(root, file), 'utf8');
  const specs: string[] = [];
  const re =
    /(?:^|\n)\s*(?:import|export)[^'"\n;]*?from\s*['"]([^'"]+)['"]|import\(\s*['"]([^'"]+)['"]\s*\)/g;
  for (const m of text.matchAll(re)) specs.push(m[1] ?? m[2]);
  return specs;
}

/** Which top-level folder a relative import lands in. */
function target(file: string, spec: string): string {
  if (!spec.startsWith('.')) return spec;
  return relative(root, join(root, file, '..', spec)).split(/[\\/]/)[0];
}

describe('layering', () => {
  it('src imports nothing from cli or viewer and no file, process or child-process module', () => {
    const banned = /^(node:)?(fs|fs\/promises|process|child_process|readline|tty)$/;
    const offenders: string[] = [];
    for (const file of sources('src')) {
      for (const spec of importsOf(file)) {
        const t = target(file, spec);
        if (t === 'cli' || t === 'viewer' || banned.test(spec)) offenders.push(`${file} → ${spec}`);
      }
      const text = readFileSync(join(root, file), 'utf8');
      if (/\bprocess\.(env|exit|argv|stdout|stderr|cwd)\b/.test(text)) offenders.push(`${file} uses process`);
      // A local binding named `window` (a fit window, say) is not the browser's global.
      const localWindow = /\b(const|let|var)\s+window\b|[(,]\s*window\s*[:,)]/.test(text);
      if (/\bdocument\.\w/.test(text) || (!localWindow && /\bwindow\.\w/.test(text)))
        offenders.push(`${file} uses the DOM`);
    }
    expect(offenders).toEqual([]);
  });

  it('shared imports nothing from src, cli or viewer', () => {
    const offenders = sources('shared').flatMap((file) =>
      importsOf(file)
        .filter((spec) => ['src', 'cli', 'viewer'].includes(target(file, spec)))
        .map((spec) => `${file} → ${spec}`),
    );
    expect(offenders).toEqual([]);
  });

  it('cli and viewer never import each other', () => {
    const offenders = [
      ...sources('cli').flatMap((f) =>
        importsOf(f)
          .filter((s) => target(f, s) === 'viewer')
          .map((s) => `${f} → ${s}`),
      ),
      ...sources('viewer').flatMap((f) =>
        importsOf(f)
          .filter((s) => target(f, s) === 'cli')
          .map((s) => `${f} → ${s}`),
      ),
    ];
    expect(offenders).toEqual([]);
  });

  it('the import scanner sees relative and bare imports (a scanner that finds nothing proves nothing)', () => {
    expect(importsOf('cli/main.ts')).toContain('./program.js');
    expect(importsOf('cli/main.ts')).toContain('commander');
    expect(target('cli/program.ts', '../src/errors.js')).toBe('src');
  });
});
