import { closeSync, openSync, readSync, statSync } from 'node:fs';
import { extname } from 'node:path';
import { parseAllDocuments } from 'yaml';
import { fileSystemError, InputError } from './errors.ts';

/** Largest recipe file accepted; a recipe is a few kilobytes. */
export const MAX_RECIPE_BYTES = 1 << 20;

/**
 * Deepest nesting accepted. The deepest a recipe goes is RECIPE_DEPTH, 5
 * (dopants.X.solubilityCm3[k][1]); the margin leaves the schema to name what is wrong with a little more.
 */
export const MAX_RECIPE_DEPTH = 32;
const RECIPE_DEPTH = 5;

/** YAML aliases a recipe may expand (the yaml library's count, which weighs each by its size). */
const MAX_YAML_ALIASES = 100;

/** Reads a recipe file (JSON, or YAML for .yaml/.yml) into plain data: objects, lists, text, numbers, booleans, null. */
export function readRecipeFile(path: string): unknown {
  const text = readText(path);
  const yaml = ['.yaml', '.yml'].includes(extname(path).toLowerCase());
  const value = yaml ? parseYamlRecipe(path, text) : parseJsonRecipe(path, text);
  return plainCopy(path, value);
}

function readText(path: string): string {
  let stat;
  try {
    stat = statSync(path);
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code === 'ENOENT') throw new InputError(`${path}: no such recipe file`);
    throw cannotRead(path, e);
  }
  if (stat.isDirectory()) throw new InputError(`${path}: is a folder, not a recipe file`);
  if (stat.size > MAX_RECIPE_BYTES) throw new InputError(`${path}: ${stat.size} bytes is larger than a recipe can be (at most ${MAX_RECIPE_BYTES})`);
  const bytes = readAtMost(path, MAX_RECIPE_BYTES + 1);
  // A pipe or a device has no size to check beforehand: what it gives is counted instead.
  if (bytes.length > MAX_RECIPE_BYTES) throw new InputError(`${path}: gives more than ${MAX_RECIPE_BYTES} bytes, larger than a recipe can be`);
  let text: string;
  try {
    text = new TextDecoder('utf-8', { fatal: true }).decode(bytes);
  } catch {
    const at = firstBadUtf8(bytes);
    throw new InputError(`${path}: is not UTF-8 text (byte ${at + 1} is 0x${bytes[at].toString(16).padStart(2, '0')}); save it as UTF-8`);
  }
  if (text.trim() === '') throw new InputError(`${path}: is empty`);
  return text;
}

/** Up to `limit` bytes of a file, read in pieces so that an endless source stops there. */
function readAtMost(path: string, limit: number): Buffer {
  let fd: number;
  try {
    fd = openSync(path, 'r');
  } catch (e) {
    throw cannotRead(path, e);
  }
  try {
    const buffer = Buffer.alloc(limit);
    let used = 0;
    while (used < limit) {
      const n = readSync(fd, buffer, used, limit - used, null);
      if (n === 0) break;
      used += n;
    }
    return buffer.subarray(0, used);
  } catch (e) {
    throw cannotRead(path, e);
  } finally {
    closeSync(fd);
  }
}

/** One line for a recipe file the system will not give: in words where errors.ts knows the cause, else its code. */
function cannotRead(path: string, e: unknown): Error {
  const err = e as NodeJS.ErrnoException;
  return fileSystemError(e, 'read', path) ?? new InputError(`${path}: cannot be read (${err.code ?? err.message.split('\n')[0]})`);
}

/** Index of the first byte that does not begin or continue a valid UTF-8 sequence. */
function firstBadUtf8(bytes: Uint8Array): number {
  const decoder = new TextDecoder('utf-8', { fatal: true });
  let lo = 0;
  let hi = bytes.length;
  // The longest valid prefix, by bisection (a prefix that cuts a sequence in two is invalid too,
  // so the search lands on the start of the bad sequence).
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    try {
      decoder.decode(bytes.subarray(0, mid));
      lo = mid;
    } catch {
      hi = mid;
    }
  }
  try {
    decoder.decode(bytes.subarray(0, lo));
    return lo;
  } catch {
    return 0;
  }
}

/** "line L, column C" (both from 1) of a character offset. */
function lineColumn(text: string, offset: number): string {
  let line = 1;
  let start = 0;
  for (let k = 0; k < offset && k < text.length; k++) {
    if (text.charCodeAt(k) === 10) {
      line++;
      start = k + 1;
    }
  }
  return `line ${line}, column ${offset - start + 1}`;
}

function parseJsonRecipe(path: string, text: string): unknown {
  try {
    return JSON.parse(text);
  } catch (e) {
    throw new InputError(`${path}: is not valid JSON: ${jsonReason((e as Error).message, text)}`);
  }
}

/** V8's JSON messages, with the position as a line and column and without the quoted source. */
function jsonReason(message: string, text: string): string {
  const at = /^(.*?)(?: in JSON)? at position (\d+)/s.exec(message);
  if (at) {
    const what = at[1] === 'Unexpected non-whitespace character after JSON' ? 'more text after the recipe ends' : lowerFirst(at[1]);
    return `${what} at ${lineColumn(text, Number(at[2]))}`;
  }
  const token = /^Unexpected token '(.+?)', /s.exec(message);
  if (token) return `unexpected ${JSON.stringify(token[1])}`;
  if (message.startsWith('Unexpected end of JSON input')) return 'it ends before the recipe does (a bracket, brace or quote left open)';
  return lowerFirst(message.split('\n')[0]);
}

function lowerFirst(s: string): string {
  return s.charAt(0).toLowerCase() + s.slice(1);
}

function parseYamlRecipe(path: string, text: string): unknown {
  const fail = (what: string) => new InputError(`${path}: is not valid YAML: ${what}`);
  const docs = parseAllDocuments(text, { logLevel: 'silent' });
  if (!Array.isArray(docs) || docs.length === 0) throw new InputError(`${path}: is empty (nothing but comments)`);
  if (docs.length > 1) throw fail(`holds ${docs.length} documents (each "---" line starts one); a recipe is one`);
  const doc = docs[0];
  const problem = doc.errors[0] ?? doc.warnings[0];
  if (problem) {
    if (problem.code === 'RESOURCE_EXHAUSTION' || /call stack/i.test(problem.message)) {
      throw fail(`nested too deeply to read (a recipe needs at most ${RECIPE_DEPTH} levels)`);
    }
    throw fail(lowerFirst(problem.message.split('\n')[0].replace(/:\s*$/, '')));
  }
  try {
    return doc.toJS({ maxAliasCount: MAX_YAML_ALIASES });
  } catch (e) {
    if (e instanceof ReferenceError && /alias/i.test(e.message)) {
      throw fail(`its aliases (*name) would expand beyond what a recipe can hold (at most ${MAX_YAML_ALIASES} expansions)`);
    }
    if (e instanceof RangeError) throw fail(`nested too deeply to read (a recipe needs at most ${RECIPE_DEPTH} levels)`);
    throw fail(lowerFirst((e as Error).message.split('\n')[0]));
  }
}

/** `steps[0].minutes`; a long path is cut after a few steps, as `steps[0][0][0]…`. */
function fieldPath(path: readonly (string | number)[]): string {
  let out = '';
  for (const p of path.slice(0, 6)) out += typeof p === 'number' ? `[${p}]` : out ? `.${p}` : p;
  return out ? `${out}${path.length > 6 ? '…' : ''}` : 'the top level';
}

/**
 * A fresh copy of parsed data with no value shared between two places (YAML aliases share
 * them, and a sweep edits its copy of the recipe in place), refusing what JSON cannot hold
 * (YAML binary, sets, dates), values that contain themselves, and nesting deeper than
 * MAX_RECIPE_DEPTH. Recursion is bounded by that depth.
 */
function plainCopy(file: string, root: unknown): unknown {
  const ancestors: object[] = [];
  const path: (string | number)[] = [];
  const copy = (value: unknown): unknown => {
    if (value === null || typeof value === 'string' || typeof value === 'number' || typeof value === 'boolean') return value;
    if (typeof value !== 'object') throw new InputError(`${file}: ${fieldPath(path)} holds a ${typeof value}, which a recipe cannot`);
    if (ancestors.includes(value)) throw new InputError(`${file}: ${fieldPath(path)} contains itself (a YAML alias inside its own anchor)`);
    if (ancestors.length >= MAX_RECIPE_DEPTH) throw new InputError(`${file}: ${fieldPath(path)} is nested more than ${MAX_RECIPE_DEPTH} levels deep; a recipe needs at most ${RECIPE_DEPTH}`);
    const array = Array.isArray(value);
    if (!array && Object.getPrototypeOf(value) !== Object.prototype) {
      throw new InputError(`${file}: ${fieldPath(path)} holds a ${value.constructor?.name ?? 'special'} value (a YAML tag such as !!binary or !!set), which a recipe cannot`);
    }
    ancestors.push(value);
    try {
      if (array) {
        return value.map((v, k) => {
          path.push(k);
          try {
            return copy(v);
          } finally {
            path.pop();
          }
        });
      }
      const out: Record<string, unknown> = {};
      for (const key of Object.keys(value)) {
        path.push(key);
        try {
          // defineProperty, not assignment: a key "__proto__" stays a key (the recipe check names it).
          Object.defineProperty(out, key, { value: copy((value as Record<string, unknown>)[key]), enumerable: true, writable: true, configurable: true });
        } finally {
          path.pop();
        }
      }
      return out;
    } finally {
      ancestors.pop();
    }
  };
  return copy(root);
}
