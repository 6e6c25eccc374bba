#!/usr/bin/env node
// Launcher: bundles the TypeScript sources with esbuild when any is newer than the bundle,
// then runs the bundle. Writes go to a temporary name first so that parallel launches
// never see a half-written bundle.
import { existsSync, mkdirSync, readdirSync, renameSync, rmSync, statSync, utimesSync, writeFileSync } from 'node:fs';
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
  const common = {
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
  };
  const entries = entryPoints(join(cliRoot, 'src'));
  const results = await Promise.all([
    // The CLI: each command (and the YAML library) a chunk of its own, loaded when called, so
    // that `run` parses only what it uses.
    // Chunks sit beside main.mjs, one level below packages/cli like the sources, so that paths
    // found from import.meta.url (package.json, the viewer, the worker) are the same in both.
    build({ ...common, entryPoints: entries.filter((p) => !p.endsWith('.worker.ts')), splitting: true }),
    // Workers: one file each, holding only what a worker uses.
    build({ ...common, entryPoints: entries.filter((p) => p.endsWith('.worker.ts')) }),
  ]);
  const files = results.flatMap((r) => r.outputFiles);
  for (const file of files) {
    mkdirSync(dirname(file.path), { recursive: true });
    const temp = `${file.path}.${process.pid}.tmp`;
    writeFileSync(temp, file.contents);
    renameSync(temp, file.path);
  }
  // main.mjs with a time after every chunk's: its time is what the check above reads.
  const now = new Date();
  utimesSync(mainBundle, now, now);
  // Chunks of earlier builds (other hashes) go once no process started then can still load them.
  const written = new Set(files.map((f) => f.path));
  for (const name of readdirSync(dist)) {
    const p = join(dist, name);
    if (/\.mjs(\.map)?$/.test(name) && !written.has(p) && !written.has(p.replace(/\.map$/, '')) && now.getTime() - statSync(p).mtimeMs > 600_000) rmSync(p, { force: true });
  }
}
const { main } = await import(pathToFileURL(mainBundle).href);
process.exitCode = await main(process.argv.slice(2));
