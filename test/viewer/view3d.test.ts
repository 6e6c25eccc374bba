import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ARTIFACTS, buildViewer, cliRun, launchChromium, readNpy, readReport, startView, tempDir, waitForTiles, type ViewServer } from './support.ts';

// The viewer in real Chromium on a 3D run the real CLI wrote: an L-shaped window (two
// touching rectangles: five convex corners and one concave), a boron film driven in, on a
// coarse mesh so the solve takes seconds. Invented scenario.
const RECIPE = {
  schema: 'edgewise.recipe/1',
  title: 'L-shaped window (test, invented)',
  substrate: { dopant: 'P', concentrationCm3: 1e15 },
  crossSection: { widthUm: 10, lengthUm: 10 },
  mask: { rectangles: [[2, 2, 7, 5], [2, 5, 5, 8]] },
  diffusion: { model: 'intrinsic' },
  mesh: { refine: 0.4 },
  steps: [{ kind: 'film', dopant: 'B', doseCm2: 1e15 }, { kind: 'drive-in', temperatureC: 1100, minutes: 30 }],
};

let runDir: string;
let report: ReturnType<typeof readReport>;
let server: ViewServer;
let browser: Awaited<ReturnType<typeof launchChromium>>;
let page: Page;

const snapshot = (p: Page) => p.evaluate(() => window.edgewise.app.snapshot());
const toClient = (id: string, x: number, z: number) => page.evaluate(([i, a, b]) => window.edgewise.app.worldToClient(i, a, b), [id, x, z] as const);
const captionCut = (id: string) => page.$eval(`.caption[data-run-id="${id}"] .caption-cut`, (e) => e.textContent);

beforeAll(async () => {
  const work = tempDir('view3d');
  runDir = join(work, 'run');
  await Promise.all([Promise.resolve().then(() => cliRun(RECIPE, runDir, work)), buildViewer()]);
  report = readReport(runDir);
  server = await startView(runDir);
  browser = await launchChromium();
  page = browser.page;
  page.on('pageerror', (e) => { throw e; });
  await page.goto(server.url);
  await waitForTiles(page);
});

afterAll(async () => {
  await browser?.close();
  await server?.stop();
});

describe('edgewise view on a 3D run', () => {
  it('shows the plan view and the cuts along x, along y and along a corner\'s diagonal', async () => {
    const s = await snapshot(page);
    expect(s.problems).toEqual([]);
    expect(s.tiles.map((t) => [t.id, t.section])).toEqual([
      ['run/plan', 'plan'], ['run/cut-x', 'x'], ['run/cut-y', 'y'], ['run/cut-diagonal', 'diagonal'],
    ]);
    for (const t of s.tiles) expect(t.views.length).toBeGreaterThan(0);
    mkdirSync(ARTIFACTS, { recursive: true });
    await page.screenshot({ path: join(ARTIFACTS, 'view3d.png') });
  });

  it('draws every tile true to shape: a 1 µm square of the data is square on screen (within 2 %)', async () => {
    const s = await snapshot(page);
    for (const t of s.tiles) {
      const v = t.views[0];
      const x = v.x0Um + 0.1 * (v.width / v.pxPerUmX);
      const z = 0.2;
      const [p, q, r] = await Promise.all([toClient(t.id, x, z), toClient(t.id, x + 1, z), toClient(t.id, x, z + 1)]);
      const across = Math.hypot(q![0] - p![0], q![1] - p![1]);
      const down = Math.hypot(r![0] - p![0], r![1] - p![1]);
      expect(across, t.id).toBeGreaterThan(5);
      expect(Math.abs(down / across - 1), t.id).toBeLessThan(0.02);
    }
  });

  it('names each cut in its caption, at the first rectangle\'s middle and its first convex corner', async () => {
    // Rectangle 1 is [2, 7] × [2, 5] µm: its middle is (4.5, 3.5); its bottom-left corner is convex.
    expect(await captionCut('run/plan')).toBe('plan view at the surface');
    expect(await captionCut('run/cut-x')).toBe('cut along x at y = 3.50 µm');
    expect(await captionCut('run/cut-y')).toBe('cut along y at x = 4.50 µm');
    expect(await captionCut('run/cut-diagonal')).toBe('cut along the diagonal through the bottom-left corner of rectangle 1 (2.00, 2.00) µm');
  });

  it('writes the report\'s corner and edge reaches on the plan view, at the end of each reach', async () => {
    const r0 = report.rectangles[0];
    const labels = await page.$$eval('.dimension.plan-reach', (els) => els.map((e) => {
      const b = e.getBoundingClientRect();
      const d = (e as HTMLElement).dataset;
      return { kind: d.kind, name: d.name, rectangle: Number(d.rectangle), um: Number(d.um), text: e.textContent, x: b.left + b.width / 2, y: b.top + b.height / 2 };
    }));
    const corner = labels.find((l) => l.kind === 'corner' && l.rectangle === 0 && l.name === 'bottomLeft')!;
    expect(corner.um).toBe(r0.cornerReachUm.bottomLeft);
    expect(corner.text).toBe(`${r0.cornerReachUm.bottomLeft.toFixed(3)} µm`);
    // The label sits just beyond the reach's end, down and left of the corner (2, 2) along (−1, −1)/√2.
    const reach = r0.cornerReachUm.bottomLeft * Math.SQRT1_2;
    const [ex, ey] = (await toClient('run/plan', 2 - reach, 10 - (2 - reach)))!;
    expect(corner.x).toBeLessThan(ex);
    expect(corner.y).toBeGreaterThan(ey);
    expect(Math.hypot(corner.x - ex, corner.y - ey)).toBeLessThan(60);
    // The inside corner of the L, (5, 5): rectangle 2's bottom-right, concave.
    const concave = labels.find((l) => l.kind === 'corner' && l.rectangle === 1 && l.name === 'bottomRight')!;
    expect(report.rectangles[1].cornerKind.bottomRight).toBe('concave');
    expect(concave.um).toBe(report.rectangles[1].cornerReachUm.bottomRight);
    const left = labels.find((l) => l.kind === 'edge' && l.rectangle === 0 && l.name === 'left')!;
    expect(left.um).toBe(r0.edgeReachUm.left);
    // No label covers another (an edge's and a corner's meet at the L's inside corner).
    const boxes = await page.$$eval('.dimension.plan-reach', (els) => els.map((e) => e.getBoundingClientRect().toJSON()));
    for (const [k, a] of boxes.entries()) {
      for (const b of boxes.slice(k + 1)) expect(a.left < b.right && b.left < a.right && a.top < b.bottom && b.top < a.bottom).toBe(false);
    }
    // One label per reach the report gives.
    const given = report.rectangles.flatMap((r: { edgeReachUm: object; cornerReachUm: object }) => [...Object.values(r.edgeReachUm), ...Object.values(r.cornerReachUm)]).filter((v: unknown) => typeof v === 'number');
    expect(labels).toHaveLength(given.length);
  });

  it('reads the 3D field under the pointer on a cut: x, y, z and the value trilinear between the nodes', async () => {
    const s = await snapshot(page);
    const tile = s.tiles.find((t) => t.id === 'run/cut-x')!;
    const [px, py] = (await toClient(tile.id, 3.13, 0.41))!;
    await page.mouse.move(px, py);
    const rows = await page.$$eval('.readout [data-quantity], .readout [data-layer]', (els) => els.map((e) => ({ ...(e as HTMLElement).dataset })));
    const at = (q: string) => Number(rows.find((r) => r.quantity === q)!.um);
    expect(at('y')).toBeCloseTo(3.5, 12);
    expect(Math.abs(at('x') - 3.13)).toBeLessThan(0.05);
    // The reference: the field of field.npy, trilinear between the cell centres in x and y
    // and the nodes in z (an x cut samples at the x centres, so its tile's bilinear readout is that).
    const field = await readNpy(join(runDir, 'field.npy'));
    const [x, y, z] = await Promise.all(['x', 'y', 'z'].map((n) => readNpy(join(runDir, `${n}.npy`)).then((a) => a.data)));
    const [, nz, ny, nx] = field.shape;
    const locate = (c: Float64Array, v: number) => {
      let i = 0;
      while (i < c.length - 2 && c[i + 1] < v) i++;
      return [i, (v - c[i]) / (c[i + 1] - c[i])] as const;
    };
    const [i, tx] = locate(x, at('x'));
    const [j, ty] = locate(y, at('y'));
    const [k, tz] = locate(z, at('z'));
    let ref = 0;
    for (const [di, wi] of [[0, 1 - tx], [1, tx]]) for (const [dj, wj] of [[0, 1 - ty], [1, ty]]) for (const [dk, wk] of [[0, 1 - tz], [1, tz]]) {
      ref += wi * wj * wk * field.data[((k + dk) * ny + (j + dj)) * nx + (i + di)];
    }
    expect(nz).toBe(z.length);
    const net = Number(rows.find((r) => r.layer === 'net')!.value);
    expect(Math.abs(net - ref)).toBeLessThan(1e-9 * Math.abs(ref));
  });

  it('moves the cuts and the corner when asked, and the captions follow', async () => {
    await page.evaluate(() => window.edgewise.app.setCuts({ xCutAtYUm: 6.5, corner: { rectangle: 1, corner: 'bottomRight' } }));
    expect(await captionCut('run/cut-x')).toBe('cut along x at y = 6.50 µm');
    expect(await captionCut('run/cut-diagonal')).toBe('cut along the diagonal through the bottom-right corner of rectangle 2 (5.00, 5.00) µm');
    const line = await page.$eval('.caption[data-run-id="run/cut-diagonal"] .caption-section', (e) => e.textContent);
    expect(line).toContain(`corner reach ${report.rectangles[1].cornerReachUm.bottomRight.toFixed(3)}`);
    expect(line).toContain('concave');
    // The panel offers the cuts too.
    expect(await page.locator('.lil-gui .lil-title', { hasText: '3D cuts' }).count()).toBe(1);
    const s = await snapshot(page);
    expect(s.tiles).toHaveLength(4);
    await page.screenshot({ path: join(ARTIFACTS, 'view3d-concave.png') });
  });

  it('re-runs the 3D recipe live: the live run shows as its own plan view and cuts, with the same reaches', async () => {
    await page.evaluate(() => { document.body.dataset.live = ''; });
    await page.locator('#panel button', { hasText: 'run in the background' }).click();
    await page.waitForFunction(() => (document.body.dataset.live ?? '').startsWith('done'), null, { timeout: 120_000 });
    const s = await snapshot(page);
    expect(s.problems).toEqual([]);
    expect(s.tiles.map((t) => t.id).slice(4)).toEqual(['live/plan', 'live/cut-x', 'live/cut-y', 'live/cut-diagonal']);
    // The same recipe through the same solver in the page's worker: the report's numbers again.
    const live = await page.$eval('.dimension.plan-reach[data-run-id="live/plan"][data-kind="corner"][data-rectangle="0"][data-name="bottomLeft"]', (e) => e.textContent);
    expect(live).toBe(`${report.rectangles[0].cornerReachUm.bottomLeft.toFixed(3)} µm`);
    expect(await page.$eval('.caption[data-run-id="live/cut-x"] .caption-head', (e) => e.textContent)).toBe('live re-run');
    // The cut chosen before (y = 6.5 µm) holds for the live run too.
    expect(await captionCut('live/cut-x')).toBe('cut along x at y = 6.50 µm');
  });
});
