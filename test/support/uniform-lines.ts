import type { UniformLines } from '../../packages/solver2d/src/adi.ts';

export interface LineMarks {
  /** rows from this index down are marked */
  rowsFrom: number;
  /** this many columns at the left wall, and at the right wall */
  left: number;
  right: number;
  /** further columns marked, by index */
  columns?: readonly number[];
}

/**
 * Marks rows and columns of an nx × nz cross-section as uniform and sets ν on them to exactly
 * `value`, as simulate.ts does where no dopant has arrived (ν row-major, changed in place).
 */
export function markUniformLines(nu: Float64Array, nx: number, nz: number, value: number, marks: LineMarks): UniformLines {
  const uniform: UniformLines = { nu: value, rows: new Uint8Array(nz), columns: new Uint8Array(nx) };
  uniform.rows.fill(1, Math.max(0, marks.rowsFrom));
  uniform.columns.fill(1, 0, marks.left);
  uniform.columns.fill(1, nx - marks.right);
  for (const i of marks.columns ?? []) uniform.columns[i] = 1;
  for (let j = 0; j < nz; j++) {
    for (let i = 0; i < nx; i++) if (uniform.rows[j] === 1 || uniform.columns[i] === 1) nu[j * nx + i] = value;
  }
  return uniform;
}
