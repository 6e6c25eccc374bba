#!/usr/bin/env node
// Launcher: bundles the TypeScript sources with esbuild when any is newer than the bundle,
// then runs the bundle. Writes go to a temporary name first so that parallel launches
// never see a half-written bundle.
import { existsSync, readdirSync, renameSync, statSync, writeFileSync, mkdirSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

const here = dirname(fileURLToPath(import.meta.url));
const cliRoot = join(here, '..');
const sourceRoots = [join(cliRoot, 'src'), join(cliRoot, '..', 'solver2d', 'src')];
const dist = join(cliRoot, 'dist');
const mainBundle = join(dist, 'main.mjs');

function newestSource(dir) {
  let newest = 0;
  for (const entry of readdirSync(dir, { withFileTypes: true })) {
    const p = join(dir, entry.name);
    newest = Math.max(newest, entry.isDirectory() ? newestSource(p) : statSync(p).mtimeMs);
  }
  return newest;
}

function entryPoints(dir, out = []) {
  for (const entry of readdirSync(dir, { withFileTypes: true })) {
    const p = join(dir, entry.name);
    if (entry.isDirectory()) entryPoints(p, out);
    else if (entry.name === 'main.ts' || entry.name.endsWith('.worker.ts')) out.push(p);
  }
  return out;
}

const stale = !existsSync(mainBundle) || statSync(mainBundle).mtimeMs < Math.max(...sourceRoots.map(newestSource), statSync(fileURLToPath(import.meta.url)).mtimeMs);
if (stale) {
  const { build } = await import('esbuild');
  const result = await build({
    entryPoints: entryPoints(join(cliRoot, 'src')),
    outdir: dist,
    outbase: join(cliRoot, 'src'),
    outExtension: { '.js': '.mjs' },
    bundle: true,
    platform: 'node',
    format: 'esm',
    target: 'node20',
    sourcemap: 'linked',
    minify: true,
    keepNames: true,
    write: false,
    logLevel: 'error',
    // CommonJS dependencies bundled into ESM need a require of their own.
    banner: { js: "import { createRequire as __edgewiseRequire } from 'node:module'; const require = __edgewiseRequire(import.meta.url);" },
  });
  for (const file of result.outputFiles) {
    mkdirSync(dirname(file.path), { recursive: true });
    const temp = `${file.path}.${process.pid}.tmp`;
    writeFileSync(temp, file.contents);
    renameSync(temp, file.path);
  }
}
const { main } = await import(pathToFileURL(mainBundle).href);
process.exitCode = await main(process.argv.slice(2));
