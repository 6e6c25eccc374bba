import { mkdirSync, renameSync, rmSync, writeFileSync } from 'node:fs';
import { dirname, join, resolve, sep } from 'node:path';

/** Writes a file atomically: a temporary name in the same folder, then rename. */
export function writeAtomic(path: string, data: string | Uint8Array): void {
  mkdirSync(dirname(path), { recursive: true });
  const temp = `${path}.${process.pid}.${Math.random().toString(36).slice(2)}.tmp`;
  try {
    writeFileSync(temp, data);
    renameSync(temp, path);
  } catch (e) {
    rmSync(temp, { force: true });
    throw e;
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
