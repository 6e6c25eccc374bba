import { closeSync, constants, fstatSync, openSync, readSync, statSync, type Stats } from 'node:fs';
import { extname } from 'node:path';
import type { Document } from 'yaml';
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

type Yaml = typeof import('yaml');

/**
 * Reads a recipe file (JSON, or YAML for .yaml/.yml) into plain data: objects, lists, text,
 * numbers, booleans, null. The YAML library is loaded only for a YAML file: a JSON recipe's
 * run does not parse it (it is a fifth of the CLI's code).
 */
export async function readRecipeFile(path: string): Promise<unknown> {
  const text = readText(path);
  const yaml = ['.yaml', '.yml'].includes(extname(path).toLowerCase());
  const value = yaml ? parseYamlRecipe(path, text, await loadYaml()) : parseJsonRecipe(path, text);
  return plainCopy(path, value);
}

/** The YAML library; bundled, its CommonJS build arrives as the default export. */
async function loadYaml(): Promise<Yaml> {
  const loaded = await import('yaml');
  return typeof loaded.parseAllDocuments === 'function' ? loaded : (loaded as unknown as { default: Yaml }).default;
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
  // A pipe, socket or device may never end (or, a FIFO with no writer, never even open):
  // refused before it is opened, so that reading cannot hang.
  if (!stat.isFile()) throw new InputError(`${path}: is ${specialKind(stat)}, not a regular file; save the recipe to a file and give that`);
  if (stat.size > MAX_RECIPE_BYTES) throw new InputError(`${path}: ${stat.size} bytes is larger than a recipe can be (at most ${MAX_RECIPE_BYTES})`);
  const bytes = readAtMost(path, MAX_RECIPE_BYTES + 1);
  // A file that grows after its size was taken is counted as it is read.
  if (bytes.length > MAX_RECIPE_BYTES) throw new InputError(`${path}: holds more than ${MAX_RECIPE_BYTES} bytes, larger than a recipe can be`);
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

/** What a path that is not a regular file or a folder is, in words. */
function specialKind(stat: Stats): string {
  if (stat.isFIFO()) return 'a pipe (FIFO)';
  if (stat.isSocket()) return 'a socket';
  if (stat.isCharacterDevice() || stat.isBlockDevice()) return 'a device';
  return 'a special file';
}

/** Up to `limit` bytes of a file, read in pieces so that an endless source stops there. */
function readAtMost(path: string, limit: number): Buffer {
  let fd: number;
  try {
    // Non-blocking: a FIFO put in the file's place after the check above opens at once (and is refused) rather than waiting for a writer.
    fd = openSync(path, constants.O_RDONLY | constants.O_NONBLOCK);
  } catch (e) {
    throw cannotRead(path, e);
  }
  try {
    const stat = fstatSync(fd);
    if (!stat.isFile()) throw new InputError(`${path}: is ${specialKind(stat)}, not a regular file; save the recipe to a file and give that`);
    const buffer = Buffer.alloc(limit);
    let used = 0;
    while (used < limit) {
      const n = readSync(fd, buffer, used, limit - used, null);
      if (n === 0) break;
      used += n;
    }
    return buffer.subarray(0, used);
  } catch (e) {
    throw e instanceof InputError ? e : cannotRead(path, e);
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
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch (e) {
    throw new InputError(`${path}: is not valid JSON: ${jsonReason((e as Error).message, text)}`);
  }
  const twice = repeatedJsonKey(text);
  if (twice) throw repeatedKeyError(path, text, twice);
  return value;
}

/** A key given twice in one object: where the object is, the key, and where both stand in the text. */
interface RepeatedKey {
  path: (string | number)[];
  key: string;
  first: number;
  again: number;
}

/** A JSON object or list the scanner is inside, and where it sits in the one around it. */
interface Level {
  /** keys seen so far with their offsets; null for a list */
  keys: Map<string, number> | null;
  /** the key of the member being read (null while the next string is a key), or the list index */
  at: string | number | null;
}

/**
 * The first key that appears twice in one object of a JSON text (JSON.parse keeps the last
 * silently), or null. The text is known to parse, so tracking strings, objects and lists is
 * enough: a string right after `{` or `,` in an object is a key. Keys are compared decoded
 * ("\u0061" is "a"). The levels are kept in a list, not on the call stack, so that nesting
 * of any depth is scanned.
 */
export function repeatedJsonKey(text: string): RepeatedKey | null {
  const levels: Level[] = [];
  for (let k = 0; k < text.length; k++) {
    const c = text.charCodeAt(k);
    const top = levels.length > 0 ? levels[levels.length - 1] : null;
    if (c === QUOTE) {
      const start = k;
      for (k++; text.charCodeAt(k) !== QUOTE; k++) if (text.charCodeAt(k) === BACKSLASH) k++;
      if (top?.keys && top.at === null) {
        const key = JSON.parse(text.slice(start, k + 1)) as string;
        const first = top.keys.get(key);
        // Each object or list sits at the member its parent is reading.
        if (first !== undefined) return { path: levels.slice(0, -1).map((l) => l.at!), key, first, again: start };
        top.keys.set(key, start);
        top.at = key;
      }
    } else if (c === OPEN_BRACE || c === OPEN_BRACKET) {
      levels.push({ keys: c === OPEN_BRACE ? new Map() : null, at: c === OPEN_BRACE ? null : 0 });
    } else if (c === CLOSE_BRACE || c === CLOSE_BRACKET) {
      levels.pop();
    } else if (c === COMMA && top) {
      top.at = top.keys ? null : (top.at as number) + 1;
    }
  }
  return null;
}

const QUOTE = 0x22;
const BACKSLASH = 0x5c;
const COMMA = 0x2c;
const OPEN_BRACE = 0x7b;
const CLOSE_BRACE = 0x7d;
const OPEN_BRACKET = 0x5b;
const CLOSE_BRACKET = 0x5d;

function repeatedKeyError(path: string, text: string, { path: where, key, first, again }: RepeatedKey): InputError {
  const place = where.length === 0 ? 'at the top level' : `in ${fieldPath(where)}`;
  return new InputError(`${path}: the key ${JSON.stringify(key)} appears twice ${place} (${lineColumn(text, again)}; first at ${lineColumn(text, first)})`);
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

function parseYamlRecipe(path: string, text: string, yaml: Yaml): unknown {
  const fail = (what: string) => new InputError(`${path}: is not valid YAML: ${what}`);
  // Keys given twice are found below, to name them and where they sit; the library's own check says neither.
  const docs = yaml.parseAllDocuments(text, { logLevel: 'silent', uniqueKeys: false });
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
  const twice = repeatedYamlKey(doc, yaml);
  if (twice) throw repeatedKeyError(path, text, twice);
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

/**
 * The key that appears twice in one mapping of a YAML document, earliest in the text (as the
 * JSON scanner finds it), or null. Keys are compared as the recipe will hold them, as text
 * (`1` and `"1"` both become "1"); a key that is itself a list or a mapping is left to the
 * recipe check, which knows no such key. Aliases are not followed (their anchor is walked
 * where it stands), nor is nesting deeper than MAX_RECIPE_DEPTH, which plainCopy refuses.
 */
function repeatedYamlKey(doc: Document.Parsed, { isMap, isPair, isScalar, isSeq }: Yaml): RepeatedKey | null {
  let found: RepeatedKey | null = null;
  const stack: { node: unknown; path: (string | number)[] }[] = [{ node: doc.contents, path: [] }];
  while (stack.length > 0) {
    const { node, path } = stack.pop()!;
    if (path.length > MAX_RECIPE_DEPTH) continue;
    if (isSeq(node)) {
      node.items.forEach((item, k) => stack.push({ node: item, path: [...path, k] }));
    } else if (isMap(node)) {
      const seen = new Map<string, number>();
      for (const pair of node.items) {
        if (!isPair(pair) || !isScalar(pair.key)) continue;
        const key = String(pair.key.value);
        const at = pair.key.range?.[0] ?? 0;
        const first = seen.get(key);
        if (first === undefined) seen.set(key, at);
        else if (found === null || at < found.again) found = { path, key, first, again: at };
        stack.push({ node: pair.value, path: [...path, key] });
      }
    }
  }
  return found;
}

/** `steps[0].minutes`; a key that is not a plain name is quoted, `dopants["a b"]`; a long path is cut after a few steps, as `steps[0][0][0]…`. */
function fieldPath(path: readonly (string | number)[]): string {
  let out = '';
  for (const p of path.slice(0, 6)) {
    if (typeof p === 'number') out += `[${p}]`;
    else if (/^[A-Za-z_][\w-]*$/.test(p)) out += out ? `.${p}` : p;
    else out += `[${JSON.stringify(p)}]`;
  }
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
