/**
 * Reader for NumPy's .npy format (versions 1.0–3.0; NumPy Enhancement Proposal 1): magic
 * "\x93NUMPY", version, header length, a Python dict literal header, then C-order data.
 * Only what the CLI writes and the viewer needs: little-endian float64 or float32.
 */
export interface NpyArray {
  data: Float64Array;
  shape: number[];
}

export class NpyError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'NpyError';
  }
}

const MAGIC = [0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59];

export function parseNpy(buffer: ArrayBuffer): NpyArray {
  const bytes = new Uint8Array(buffer);
  if (bytes.length < 10 || MAGIC.some((b, k) => bytes[k] !== b)) throw new NpyError('not a NumPy .npy file (no \\x93NUMPY magic)');
  const major = bytes[6];
  const view = new DataView(buffer);
  let headerLength: number;
  let start: number;
  if (major === 1) {
    headerLength = view.getUint16(8, true);
    start = 10;
  } else if (major === 2 || major === 3) {
    if (bytes.length < 12) throw new NpyError('truncated header');
    headerLength = view.getUint32(8, true);
    start = 12;
  } else {
    throw new NpyError(`format version ${major}.${bytes[7]} is not supported (1.0 to 3.0 are)`);
  }
  if (start + headerLength > bytes.length) throw new NpyError('truncated header');
  const header = new TextDecoder(major === 3 ? 'utf-8' : 'latin1').decode(bytes.subarray(start, start + headerLength));
  const descr = /'descr'\s*:\s*'([^']*)'/.exec(header)?.[1];
  const fortran = /'fortran_order'\s*:\s*(True|False)/.exec(header)?.[1];
  const shapeText = /'shape'\s*:\s*\(([^)]*)\)/.exec(header)?.[1];
  if (descr === undefined || fortran === undefined || shapeText === undefined) throw new NpyError(`header is not a dict with descr, fortran_order and shape: ${header.trim()}`);
  if (fortran === 'True') throw new NpyError('Fortran-order arrays are not supported (C order is)');
  const shape = shapeText.split(',').map((s) => s.trim()).filter((s) => s.length > 0).map(Number);
  if (shape.some((n) => !Number.isInteger(n) || n < 0)) throw new NpyError(`bad shape (${shapeText})`);
  const count = shape.reduce((a, b) => a * b, 1);
  const dataStart = start + headerLength;
  const width = descr === '<f8' ? 8 : descr === '<f4' ? 4 : 0;
  if (width === 0) throw new NpyError(`data type ${descr} is not supported (little-endian float64 <f8 or float32 <f4 are)`);
  const have = bytes.length - dataStart;
  if (have < count * width) throw new NpyError(`holds ${Math.floor(have / width)} values, its shape (${shape.join(', ')}) needs ${count}: the file is truncated`);
  const data = new Float64Array(count);
  if (width === 8 && dataStart % 8 === 0) data.set(new Float64Array(buffer, dataStart, count));
  else for (let k = 0; k < count; k++) data[k] = width === 8 ? view.getFloat64(dataStart + 8 * k, true) : view.getFloat32(dataStart + 4 * k, true);
  return { data, shape };
}
