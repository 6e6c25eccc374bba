#!/usr/bin/env node
// Runs vitest with the given arguments, without colour codes when the output is not a
// terminal (a CI log, a file, a pipe): vitest's colour library turns colour on whenever
// TERM is set or CI is, even into a pipe, and off only for NO_COLOR.
import { spawnSync } from 'node:child_process';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';

const vitest = join(dirname(createRequire(import.meta.url).resolve('vitest/package.json')), 'vitest.mjs');
const env = { ...process.env };
if (!process.stdout.isTTY) {
  env.NO_COLOR = '1';
  delete env.FORCE_COLOR;
}
const r = spawnSync(process.execPath, [vitest, ...process.argv.slice(2)], { stdio: 'inherit', env });
process.exitCode = r.status ?? 1;
