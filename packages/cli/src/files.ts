import { existsSync, lstatSync, mkdirSync, readdirSync, rmdirSync, readlinkSync, realpathSync, renameSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { hostname } from 'node:os';
import { basename, dirname, join, relative, resolve, sep } from 'node:path';
import { fileSystemError, InputError, UsageError } from './errors.ts';

/** This machine's name as it appears in temporary names: letters, digits and "-" only. */
const HOST = hostname().replace(/[^A-Za-z0-9-]/g, '-') || 'host';

/**
 * The temporary name a file is written under before its rename: `<name>.<host>.<pid>.<random>.tmp`.
 * The host and process id let a later write tell a temporary left by a killed process on this
 * machine from one another machine (a cluster node sharing the folder) is writing now.
 */
export function temporaryName(path: string): string {
  return `${path}.${HOST}.${process.pid}.${Math.random().toString(36).slice(2)}.tmp`;
}

/** A temporary name as temporaryName makes it: the writer's host and pid are groups 1 and 2. */
export const TEMPORARY = /\.([A-Za-z0-9-]+)\.(\d+)\.[0-9a-z]+\.tmp$/;

/** Our temporaries in `folder`, with their writer's host and pid; none where it cannot be read. */
export function temporariesIn(folder: string): { name: string; host: string; pid: number }[] {
  let names: string[];
  try {
    names = readdirSync(folder);
  } catch {
    return [];
  }
  const out: { name: string; host: string; pid: number }[] = [];
  for (const name of names) {
    const m = TEMPORARY.exec(name);
    if (m) out.push({ name, host: m[1], pid: Number(m[2]) });
  }
  return out;
}

/** Folders whose stale temporaries this process has already removed. */
const swept = new Set<string>();

/** Whether a process with this id runs on this machine (EPERM: it does, as another user). */
function alive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (e) {
    return (e as NodeJS.ErrnoException).code === 'EPERM';
  }
}

/**
 * Removes, once per folder per process, the temporaries of our naming that a process of this
 * machine left when it was killed mid-write (kill -9, a power cut): its process is gone, so
 * no rename will ever come. Temporaries of other machines, or of live processes, are left.
 */
export function removeStaleTemporaries(folder: string): void {
  const key = resolve(folder);
  if (swept.has(key)) return;
  swept.add(key);
  for (const { name, host, pid } of temporariesIn(folder)) {
    if (host !== HOST || pid === process.pid || alive(pid)) continue;
    try {
      rmSync(join(folder, name), { force: true });
    } catch {
      // Left for the next write: removing it is tidiness, not the write's job.
    }
  }
}

/** The --out option: the folder given, or the default; an empty name is refused (it would mean the current folder). */
export function outFolder(value: string | undefined, fallback: string): string {
  if (value === undefined) return fallback;
  if (value.trim() === '') throw new UsageError(`--out: is empty; give a folder name (default ${fallback})`);
  return value;
}

/**
 * Makes the output folder and checks that a file can be written in it, before any work whose
 * results would go there: a refusal is one line naming the folder, at once, not after a solve.
 * Returns the folders it made.
 */
export function checkWritable(folder: string): string[] {
  let made: string[];
  try {
    made = makeMissingFolders(folder);
  } catch (e) {
    throw fileSystemError(e, 'write', folder) ?? e;
  }
  const probe = temporaryName(join(folder, '.write-check'));
  try {
    writeFileSync(probe, '');
    rmSync(probe);
  } catch (e) {
    try {
      rmSync(probe, { force: true });
    } catch {
      // Nothing was made.
    }
    throw fileSystemError(e, 'write', folder) ?? e;
  }
  return made;
}

/** Removes folders checkWritable made (deepest first) where they are still empty: work that failed leaves nothing behind. */
export function removeEmptyFolders(made: readonly string[]): void {
  for (const p of [...made].reverse()) {
    try {
      rmdirSync(p);
    } catch {
      return;
    }
  }
}

/**
 * Writes a file atomically: a temporary name in the same folder, then rename. A write that
 * fails leaves no temporary behind and comes back as one line (errors.ts) when the file
 * system says why; the first write into a folder removes what killed writers left there.
 */
export function writeAtomic(path: string, data: string | Uint8Array): void {
  const temp = temporaryName(path);
  try {
    makeMissingFolders(dirname(path));
    removeStaleTemporaries(dirname(path));
    writeFileSync(temp, data);
    renameSync(temp, path);
  } catch (e) {
    try {
      rmSync(temp, { force: true });
    } catch {
      // No temporary could have been made: its folder is missing or is a file (ENOTDIR).
    }
    throw fileSystemError(e, 'write', path) ?? e;
  }
}

/** Removes a file if it is there; a file system that refuses comes back as one line (errors.ts). */
export function removeFile(path: string): void {
  try {
    rmSync(path, { force: true });
  } catch (e) {
    throw fileSystemError(e, 'write', path) ?? e;
  }
}

/** Makes a folder and the missing folders above it; a refusal comes back as one line (errors.ts). */
export function makeFolders(folder: string): void {
  try {
    makeMissingFolders(folder);
  } catch (e) {
    throw fileSystemError(e, 'write', folder) ?? e;
  }
}

/**
 * One folder at a time from the top: mkdirSync's recursive mode retries without end where a
 * file system refuses new entries (it does so under /proc).
 */
function makeMissingFolders(folder: string): string[] {
  const missing: string[] = [];
  for (let p = folder; !existsSync(p) && dirname(p) !== p; p = dirname(p)) missing.push(p);
  missing.reverse();
  for (const p of missing) {
    try {
      mkdirSync(p);
    } catch (e) {
      // Another writer (a sweep's other worker) made it first.
      if ((e as NodeJS.ErrnoException).code !== 'EEXIST' || !isFolder(p)) throw e;
    }
  }
  return missing;
}

function isFolder(path: string): boolean {
  try {
    return statSync(path).isDirectory();
  } catch {
    return false;
  }
}

/**
 * The path of `name` inside `folder`, refusing one that would lie outside it: a name that
 * climbs out (`../x`), or a symbolic link under the folder that leads elsewhere
 * (`out/run-0001 -> /tmp/x`). Both are compared where they really are: the real path of the
 * deepest part that exists, with the rest of the path after it. The check sees the folder as
 * it is when called: a link swapped in between the check and the write is not seen.
 */
export function inside(folder: string, name: string): string {
  const root = resolve(folder);
  const path = resolve(join(root, name));
  const refusal = (why: string) => new InputError(`refusing to write outside the output folder ${root}: ${name}${why}`);
  if (!within(root, path)) throw refusal('');
  const realRoot = realLocation(root);
  const real = realLocation(path);
  if (realRoot === null || real === null) throw refusal(' (symbolic links on the way lead round in a loop)');
  if (within(realRoot, real)) return path;
  // Name the first part under the folder that leads out: that is the link to remove.
  let part = root;
  for (const piece of relative(root, path).split(sep)) {
    part = join(part, piece);
    const there = realLocation(part);
    if (there === null || within(realRoot, there)) continue;
    const link = relative(root, part);
    throw refusal(link === relative(root, path) ? ` leads to ${there} through a symbolic link` : ` (${link} leads to ${there} through a symbolic link)`);
  }
  throw refusal(` (it leads to ${real})`);
}

/** `path` is `root` or lies under it (a whole path segment, not a prefix of the text: /tmp/run-2 is not under /tmp/run). */
function within(root: string, path: string): boolean {
  return path === root || path.startsWith(root.endsWith(sep) ? root : root + sep);
}

/** Links followed by hand before a chain counts as a loop (Linux follows at most 40 in one lookup). */
const MAX_LINK_HOPS = 40;

/**
 * Where an absolute path really is: the real path of its deepest part that exists, with the
 * rest appended. A link that leads nowhere (realpath refuses it) is followed as it reads;
 * null for links that lead round in a loop.
 */
function realLocation(path: string, hops = 0): string | null {
  const rest: string[] = [];
  let existing = path;
  while (!present(existing)) {
    rest.unshift(basename(existing));
    existing = dirname(existing);
  }
  try {
    return join(realpathSync(existing), ...rest);
  } catch (e) {
    if (!lstatSync(existing).isSymbolicLink()) throw e;
    if (hops >= MAX_LINK_HOPS) return null;
    const parent = realLocation(dirname(existing), hops + 1);
    return parent === null ? null : realLocation(join(resolve(parent, readlinkSync(existing)), ...rest), hops + 1);
  }
}

/** Something (a file, a folder, a link, even one that leads nowhere) is at `path`. */
function present(path: string): boolean {
  try {
    lstatSync(path);
    return true;
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    // ENOTDIR: a file stands where a folder on the way should be; ELOOP: a link on the way loops.
    if (code === 'ENOENT' || code === 'ENOTDIR' || code === 'ELOOP') return false;
    throw e;
  }
}

/**
 * NumPy .npy, format version 1.0: magic, version, little-endian header length, a Python
 * dict literal header padded with spaces to a multiple of 64 bytes and ending in '\n',
 * then the raw little-endian float64 data in C order.
 * (NumPy Enhancement Proposal 1, "A simple file format for NumPy arrays".)
 */
export function encodeNpy(data: Float64Array, shape: readonly number[]): Uint8Array {
  const count = shape.reduce((a, b) => a * b, 1);
  if (count !== data.length) throw new Error(`npy: shape ${shape} holds ${count} values, data has ${data.length}`);
  const shapeText = shape.length === 1 ? `(${shape[0]},)` : `(${shape.join(', ')})`;
  let header = `{'descr': '<f8', 'fortran_order': False, 'shape': ${shapeText}, }`;
  const preamble = 10;
  const padded = Math.ceil((preamble + header.length + 1) / 64) * 64;
  header = header.padEnd(padded - preamble - 1, ' ') + '\n';
  const out = new Uint8Array(padded + data.byteLength);
  out.set([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59, 1, 0], 0);
  new DataView(out.buffer).setUint16(8, header.length, true);
  for (let k = 0; k < header.length; k++) out[preamble + k] = header.charCodeAt(k);
  const bytes = new Uint8Array(data.buffer, data.byteOffset, data.byteLength);
  // Float64Array is in platform order; every platform Node runs on here is little-endian.
  out.set(bytes, padded);
  return out;
}
