import { existsSync, mkdirSync, renameSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { dirname, join, resolve, sep } from 'node:path';
import { fileSystemError } from './errors.ts';

/**
 * Writes a file atomically: a temporary name in the same folder, then rename. A write that
 * fails leaves no temporary behind and comes back as one line (errors.ts) when the file
 * system says why.
 */
export function writeAtomic(path: string, data: string | Uint8Array): void {
  const temp = `${path}.${process.pid}.${Math.random().toString(36).slice(2)}.tmp`;
  try {
    makeMissingFolders(dirname(path));
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
function makeMissingFolders(folder: string): void {
  const missing: string[] = [];
  for (let p = folder; !existsSync(p) && dirname(p) !== p; p = dirname(p)) missing.push(p);
  for (const p of missing.reverse()) {
    try {
      mkdirSync(p);
    } catch (e) {
      // Another writer (a sweep's other worker) made it first.
      if ((e as NodeJS.ErrnoException).code !== 'EEXIST' || !isFolder(p)) throw e;
    }
  }
}

function isFolder(path: string): boolean {
  try {
    return statSync(path).isDirectory();
  } catch {
    return false;
  }
}

/** A path inside `folder`; refuses names that would climb out of it. */
export function inside(folder: string, name: string): string {
  const root = resolve(folder);
  const path = resolve(join(root, name));
  if (path !== root && !path.startsWith(root + sep)) throw new Error(`refusing to write outside ${root}: ${name}`);
  return path;
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
