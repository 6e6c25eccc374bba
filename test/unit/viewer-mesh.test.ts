import npyjs from 'npyjs';
import { describe, expect, it } from 'vitest';
import { encodeNpy } from '../../packages/cli/src/files.ts';
import { layoutGrid } from '../../packages/viewer/src/layout.ts';
import { MASK_BAND_PX } from '../../packages/viewer/src/tile-view.ts';
import {
  gridIndices, gridPositions, layerVertexValues, maskedIntervals, meshLinePositions, nodeGrid, subGridPositions,
  subGridValues, thinAxis,
} from '../../packages/viewer/src/mesh-geometry.ts';
import { parseNpy } from '../../packages/viewer/src/npy.ts';
import { bracket, junctionSide, sampleField } from '../../packages/viewer/src/sample.ts';

// A small non-uniform mesh: 4 cell centres on a 10 µm width (faces 0, 1, 3, 6, 10), 3 z nodes.
const xCentres = Float64Array.from([0.5, 2, 4.5, 8]);
const zNodes = Float64Array.from([0, 0.4, 1.5]);
const width = 10;
const grid = nodeGrid(xCentres, zNodes, width);

describe('mesh to geometry', () => {
  it('puts a vertex at every node, with the side walls added at x = 0 and x = width', () => {
    expect([...grid.xs]).toEqual([0, 0.5, 2, 4.5, 8, 10]);
    const pos = gridPositions(grid);
    expect(pos.length).toBe(3 * 6 * 3);
    // vertex (i = 3, j = 2): x = 4.5, world y = −z = −1.5
    const k = 3 * (2 * 6 + 3);
    expect(pos[k]).toBeCloseTo(4.5, 6);
    expect(pos[k + 1]).toBeCloseTo(-1.5, 6);
  });

  it('covers the cross-section exactly once: triangle areas sum to width × depth (closed form)', () => {
    const pos = gridPositions(grid);
    const idx = gridIndices(grid);
    expect(idx.length).toBe(6 * 5 * 2);
    let area = 0;
    for (let t = 0; t < idx.length; t += 3) {
      const [a, b, c] = [idx[t], idx[t + 1], idx[t + 2]].map((v) => [pos[3 * v], pos[3 * v + 1]]);
      const signed = 0.5 * ((b[0] - a[0]) * (c[1] - a[1]) - (c[0] - a[0]) * (b[1] - a[1]));
      expect(signed).toBeGreaterThan(0); // counter-clockwise on screen: no face is culled
      area += signed;
    }
    expect(area).toBeCloseTo(width * 1.5, 9);
  });

  it('gives each vertex log10 |value| of its node, walls copying the first and last cells', () => {
    // two layers [2, nz = 3, nx = 4]: layer 1 holds 10^(i + j)
    const field = new Float64Array(2 * 3 * 4);
    for (let j = 0; j < 3; j++) for (let i = 0; i < 4; i++) field[12 + j * 4 + i] = -(10 ** (i + j));
    const v = layerVertexValues(field, 1, grid);
    expect(v[1 * 6 + 3]).toBeCloseTo(2 + 1, 6); // node (i = 2, j = 1) → 10^3 (sign dropped)
    expect(v[2 * 6 + 0]).toBeCloseTo(2, 6); // wall at row 2 = first cell 10^2
    expect(v[2 * 6 + 5]).toBeCloseTo(5, 6); // wall = last cell 10^5
    expect(layerVertexValues(field, 0, grid).every((x) => x === 0)).toBe(true); // zeros floor at 1 cm^-3
  });

  it('draws a mesh line along every node column and row', () => {
    expect(meshLinePositions(grid).length).toBe(6 * (6 + 3));
  });

  it('masks the surface outside the windows', () => {
    expect(maskedIntervals([{ x0Um: 8, x1Um: 16 }], 24)).toEqual([[0, 8], [16, 24]]);
    expect(maskedIntervals([{ x0Um: 12, x1Um: 15 }, { x0Um: 0, x1Um: 4 }], 20)).toEqual([[4, 12], [15, 20]]);
  });
});

describe('level of detail', () => {
  // A graded axis: 0.01 µm steps near 0 growing by 15 % a step (as the solver's meshes grow).
  const axis = Float64Array.from({ length: 60 }, (_, k) => 0.01 * (1.15 ** k - 1) / 0.15);

  it('keeps only mesh node lines, at least the asked spacing apart, with both ends', () => {
    const keep = thinAxis(axis, 0.2);
    expect(keep[0]).toBe(0);
    expect(keep[keep.length - 1]).toBe(axis.length - 1);
    for (let k = 1; k < keep.length; k++) {
      expect(keep[k]).toBeGreaterThan(keep[k - 1]);
      expect(axis[keep[k]] - axis[keep[k - 1]]).toBeGreaterThanOrEqual(0.2 - 1e-12);
    }
    expect(keep.length).toBeLessThan(axis.length);
  });

  it('keeps every line where the mesh is already coarser than the spacing', () => {
    const keep = [...thinAxis(axis, 0.2)];
    for (let i = 1; i < axis.length; i++) if (axis[i] - axis[i - 1] >= 0.2 && i < axis.length - 1) expect(keep).toContain(i);
    expect(thinAxis(axis, 0).length).toBe(axis.length);
    expect(thinAxis(axis, 0.001).length).toBe(axis.length);
  });

  it('draws a sub-grid at the kept nodes with their own values', () => {
    const sub = { columns: Uint32Array.from([0, 2, 5]), rows: Uint32Array.from([0, 2]) };
    const pos = subGridPositions(grid, sub);
    expect([pos[3], pos[4]]).toEqual([2, -0]); // node (2, 0)
    expect([pos[3 * 5], pos[3 * 5 + 1]]).toEqual([10, -1.5]); // node (5, 2)
    const full = Float32Array.from({ length: 6 * 3 }, (_, k) => k);
    expect([...subGridValues(full, grid, sub)]).toEqual([0, 2, 5, 12, 14, 17]);
  });
});

describe('readout sampling', () => {
  const field = new Float64Array(2 * 3 * 4);
  // layer 0: a linear function 3x − 2z + 1 at the nodes (walls get the first cell's value)
  for (let j = 0; j < 3; j++) for (let i = 0; i < 4; i++) field[j * 4 + i] = 3 * xCentres[i] - 2 * zNodes[j] + 1;

  it('returns a node\'s own value at the node', () => {
    const s = sampleField(field, 2, grid, 4.5, 0.4)!;
    expect(s.values[0]).toBeCloseTo(3 * 4.5 - 0.8 + 1, 12);
  });

  it('is exact for a field linear in x and z between nodes (bilinear interpolation)', () => {
    const s = sampleField(field, 2, grid, 3.3, 0.9)!;
    expect(s.values[0]).toBeCloseTo(3 * 3.3 - 2 * 0.9 + 1, 12);
  });

  it('is nothing outside the cross-section', () => {
    expect(sampleField(field, 2, grid, 10.01, 0.5)).toBeNull();
    expect(sampleField(field, 2, grid, 5, -0.01)).toBeNull();
  });

  it('finds the bracketing interval by bisection', () => {
    expect(bracket(grid.xs, 2)).toBe(2);
    expect(bracket(grid.xs, 7.9)).toBe(3);
    expect(bracket(grid.xs, 100)).toBe(4);
  });

  it('names the side of the junction from the sign of net doping (donors − acceptors)', () => {
    expect(junctionSide(1e15)).toMatch(/^n-type/);
    expect(junctionSide(-1e18)).toMatch(/^p-type/);
  });
});

describe('npy reader', () => {
  it('reads what the CLI writes, as npyjs (the reference reader) does', async () => {
    const data = Float64Array.from({ length: 24 }, (_, k) => Math.sin(k) * 1e18);
    const bytes = encodeNpy(data, [2, 3, 4]);
    const buffer = bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength) as ArrayBuffer;
    const ours = parseNpy(buffer);
    const reference = await new npyjs().parse(buffer);
    expect(ours.shape).toEqual(reference.shape);
    expect([...ours.data]).toEqual([...(reference.data as Float64Array)]);
  });

  it('refuses a truncated file, saying so', () => {
    const bytes = encodeNpy(new Float64Array(12), [3, 4]);
    const cut = bytes.buffer.slice(0, bytes.byteLength - 8) as ArrayBuffer;
    expect(() => parseNpy(cut)).toThrow(/truncated/);
    expect(() => parseNpy(new TextEncoder().encode('{"not": "npy"}').buffer as ArrayBuffer)).toThrow(/magic/);
  });
});

describe('grid layout', () => {
  const extents = [{ widthUm: 24, depthUm: 1.9 }, { widthUm: 12, depthUm: 1.9 }, { widthUm: 24, depthUm: 1.2 }];
  const layout = layoutGrid(extents, { width: 1200, height: 700 });
  const views = layout.views.map((v) => v[0]);

  it('gives every tile the same µm per pixel, across and down', () => {
    for (const v of views) {
      expect(v.pxPerUmX).toBe(layout.pxPerUmX);
      expect(v.pxPerUmZ).toBe(layout.pxPerUmZ);
    }
    expect(layout.pxPerUmZ / layout.pxPerUmX).toBe(layout.stretch);
  });

  it('draws widths in proportion: half the width, half the pixels', () => {
    expect(views[1].width).toBeCloseTo(views[0].width / 2, 0);
    expect(views[2].height - MASK_BAND_PX - 1).toBeCloseTo((views[0].height - MASK_BAND_PX - 1) * (1.2 / 1.9), 0);
  });

  it('keeps every tile inside the area and apart from the others', () => {
    for (const v of views) {
      expect(v.left + v.width).toBeLessThanOrEqual(1200);
      expect(v.top + v.height).toBeLessThanOrEqual(700);
    }
    const [a, b] = views;
    expect(a.left + a.width <= b.left || a.top + a.height <= b.top).toBe(true);
  });
});
