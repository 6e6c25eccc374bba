#!/usr/bin/env node
// Runs a TypeScript script after bundling it with esbuild, so that what is timed is the
// same optimised JavaScript the CLI runs (a load-time transpiler adds its own overhead).
import { build } from 'esbuild';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';

const [entry, ...args] = process.argv.slice(2);
if (!entry) {
  process.stderr.write('usage: node scripts/run-ts.mjs FILE.ts [args…]\n');
  process.exit(2);
}
const dir = mkdtempSync(join(tmpdir(), 'edgewise-run-'));
const outfile = join(dir, 'script.mjs');
await build({
  entryPoints: [resolve(entry)], outfile, bundle: true, platform: 'node', format: 'esm', target: 'node20',
  logLevel: 'error', packages: 'bundle',
  banner: { js: "import { createRequire as __r } from 'node:module'; const require = __r(import.meta.url);" },
});
process.argv = [process.argv[0], resolve(entry), ...args];
try {
  await import(pathToFileURL(outfile).href);
} finally {
  rmSync(dir, { recursive: true, force: true });
}
