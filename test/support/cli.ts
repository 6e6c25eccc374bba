import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';

export const REPO = resolve(import.meta.dirname, '..', '..');
export const BIN = join(REPO, 'packages', 'cli', 'bin', 'edgewise.mjs');

export function tempDir(prefix = 'edgewise-test-'): string {
  return mkdtempSync(join(tmpdir(), prefix));
}

/** Runs the real `edgewise` binary; returns exit code, stdout and stderr. */
export function edgewise(args: string[], options: { cwd?: string; input?: string } = {}) {
  const r = spawnSync(process.execPath, [BIN, ...args], { cwd: options.cwd ?? REPO, input: options.input, encoding: 'utf8', timeout: 120_000 });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

/** Fields of one CSV line, quotes honoured (RFC 4180). */
export function csvFields(line: string): string[] {
  const fields: string[] = [];
  let field = '';
  let quoted = false;
  for (let k = 0; k < line.length; k++) {
    const ch = line[k];
    if (quoted && ch === '"' && line[k + 1] === '"') { field += '"'; k++; }
    else if (ch === '"') quoted = !quoted;
    else if (ch === ',' && !quoted) { fields.push(field); field = ''; }
    else field += ch;
  }
  fields.push(field);
  return fields;
}

/** sweep.csv as objects keyed by the header; no field of the rows read this way holds a comma (no errors). */
export function readCsv(path: string): Record<string, string>[] {
  const [head, ...lines] = readFileSync(path, 'utf8').trimEnd().split('\n');
  const header = head.split(',');
  return lines.map((l) => Object.fromEntries(l.split(',').map((v, k) => [header[k], v])));
}
