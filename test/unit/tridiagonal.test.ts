import { describe, expect, it } from 'vitest';
import { solveTridiagonal } from '../../packages/solver2d/src/tridiagonal.ts';

describe('solveTridiagonal', () => {
  it('solves a diagonally dominant system to round-off (checked by multiplying back)', () => {
    const n = 50;
    const a = new Float64Array(n), b = new Float64Array(n), c = new Float64Array(n), x = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      a[i] = i > 0 ? -0.3 - 0.01 * i : 0;
      c[i] = i < n - 1 ? -0.4 + 0.002 * i : 0;
      b[i] = 1 + Math.abs(a[i]) + Math.abs(c[i]);
      x[i] = Math.sin(i);
    }
    const d = new Float64Array(n);
    for (let i = 0; i < n; i++) d[i] = b[i] * x[i] + (i > 0 ? a[i] * x[i - 1] : 0) + (i < n - 1 ? c[i] * x[i + 1] : 0);
    solveTridiagonal(a, b, c, d, new Float64Array(2 * n), n);
    for (let i = 0; i < n; i++) expect(d[i]).toBeCloseTo(x[i], 12);
  });
});
