// Bundles the report page into dist/viewer/app.js (one IIFE, minified) and dist/viewer/app.css.
// Run by `npm run build`, and by the report writer when the bundle is missing or older than its
// sources. Files are written to a temporary name and renamed, so a reader never sees half a bundle.
import { build, transform } from 'esbuild';
import { mkdirSync, readFileSync, renameSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const here = dirname(fileURLToPath(import.meta.url));
const outDir = join(here, '..', 'dist', 'viewer');

function writeAtomic(path, text) {
  const tmp = `${path}.${process.pid}.tmp`;
  writeFileSync(tmp, text);
  renameSync(tmp, path);
}

const js = await build({
  entryPoints: [join(here, 'app.ts')],
  bundle: true,
  format: 'iife',
  platform: 'browser',
  target: ['chrome109', 'firefox115', 'safari16'],
  minify: true,
  legalComments: 'none',
  write: false,
  logLevel: 'error',
});
const css = await transform(readFileSync(join(here, 'style.css'), 'utf8'), { loader: 'css', minify: true });

mkdirSync(outDir, { recursive: true });
writeAtomic(join(outDir, 'app.js'), js.outputFiles[0].text);
writeAtomic(join(outDir, 'app.css'), css.code);
