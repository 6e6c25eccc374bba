import { execFileSync } from 'node:child_process';
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  ARTIFACTS, bilinear, buildViewer, CLI, cliRun, REPO, stagePixels, launchChromium, makeWidthSweep, readNpy, readReport,
  recipeWithWindow, startView, tempDir, waitForTiles, type SweepRun, type ViewServer,
} from './support.ts';

// The viewer in real Chromium on folders the real CLI wrote. Window widths from 0.5 µm to
// 8 µm around the demo recipe's window centre: the narrowest are near two diffusion lengths.
const WIDTHS = [8, 0.5, 2, 1, 4];

let work: string;
let sweepDir: string;
let runs: SweepRun[];
let server: ViewServer;
let browser: Awaited<ReturnType<typeof launchChromium>>;
let page: Page;

async function snapshot(p: Page) {
  return p.evaluate(() => window.edgewise.app.snapshot());
}

async function shot(p: Page, name: string): Promise<void> {
  mkdirSync(ARTIFACTS, { recursive: true });
  await p.screenshot({ path: join(ARTIFACTS, `${name}.png`) });
}

beforeAll(async () => {
  work = tempDir('viewer');
  sweepDir = join(work, 'sweep');
  const [, built] = await Promise.all([
    Promise.resolve().then(() => { runs = makeWidthSweep(sweepDir, WIDTHS); }),
    buildViewer(),
  ]);
  expect(built).toMatch(/dist$/);
  const recipeFile = join(work, 'live-recipe.json');
  writeFileSync(recipeFile, JSON.stringify(recipeWithWindow(8)));
  server = await startView(sweepDir, ['--recipe', recipeFile]);
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

describe('edgewise view on a sweep folder', () => {
  it('serves on 127.0.0.1 only and refuses paths outside the folder', async () => {
    expect(new URL(server.url).hostname).toBe('127.0.0.1');
    const outside = await fetch(`${server.url}data/..%2f..%2fetc%2fpasswd`);
    expect([403, 404]).toContain(outside.status);
    const report = await fetch(`${server.url}data/${runs[0].dir}/report.json`);
    expect(report.status).toBe(200);
    // The batch endpoint gives the same bytes as the files on disk, and refuses the rest.
    const asked = [`${runs[0].dir}/x.npy`, `${runs[0].dir}/nothing.npy`, '../../etc/passwd'];
    const batch = Buffer.from(await (await fetch(`${server.url}api/files?${asked.map((p) => `p=${encodeURIComponent(p)}`).join('&')}`)).arrayBuffer());
    const headLength = batch.readUInt32LE(0);
    const index = JSON.parse(batch.subarray(4, 4 + headLength).toString());
    expect(index.map((e: { error?: string }) => e.error ?? null)).toEqual([null, 'not found', 'outside the opened folder']);
    const onDisk = readFileSync(join(sweepDir, runs[0].dir, 'x.npy'));
    expect(batch.subarray(4 + headLength, 4 + headLength + index[0].size).equals(onDisk)).toBe(true);
  });

  it('shows one tile per run, sorted by window width, each captioned with the xj of its report.json', async () => {
    const s = await snapshot(page);
    expect(s.problems).toEqual([]);
    expect(s.tiles).toHaveLength(WIDTHS.length);
    const sorted = [...runs].sort((a, b) => a.widthUm - b.widthUm);
    expect(s.tiles.map((t) => t.dir)).toEqual(sorted.map((r) => r.dir));
    const captions = await page.$$eval('.caption', (els) => els.map((e) => ({
      id: (e as HTMLElement).dataset.runId, xj: e.querySelector('.xj')!.textContent, head: e.querySelector('.caption-head')!.textContent,
    })));
    expect(captions).toHaveLength(WIDTHS.length);
    for (const c of captions) {
      const run = runs.find((r) => r.id === c.id)!;
      const report = readReport(join(sweepDir, run.dir)); // source: the CLI's report.json
      expect(c.xj).toMatch(new RegExp(`^xj ${report.windows[0].junctionDepthUm.toFixed(3)}( ± [0-9.]+)? µm$`));
      // The swept parameter in words and units, not its key (source: sweep.json's values).
      expect(c.head).toBe(`window width ${run.widthUm} µm`);
    }
    // Captions are on top of the canvases: the page's topmost element at a caption's middle is in it.
    const onTop = await page.$$eval('.caption', (els) => els.map((e) => {
      const r = e.getBoundingClientRect();
      return e.contains(document.elementFromPoint(r.left + 10, r.top + r.height / 2));
    }));
    expect(onTop.every(Boolean)).toBe(true);
    // One length scale: every tile has the same pixels per µm.
    expect(new Set(s.tiles.map((t) => t.view!.pxPerUmX)).size).toBe(1);
    await shot(page, 'sweep-grid');
  });

  it('draws every tile true to scale by default: a µm across is as many pixels as a µm down, measured on screen', async () => {
    const s = await snapshot(page);
    expect(s.shown).toBe('edges'); // wider than deep (24 µm × 3.2 µm): the edge view by default
    for (const t of s.tiles) for (const v of t.views) expect(v.pxPerUmZ).toBe(v.pxPerUmX);
    // Pixels of the 2 µm window's tile: across, the gap in the mask band is the window's width;
    // down, the junction contour crosses the window's centre line at xj below the surface.
    const run = runs.find((r) => r.widthUm === 2)!;
    const report = readReport(join(sweepDir, run.dir)); // source: report.json (window edges, xj at the centre)
    const w = report.windows[0];
    const view = s.tiles.find((t) => t.id === run.id)!.views[0];
    const at = (x: number, z: number) => page.evaluate(([i, xx, zz]) => window.edgewise.app.worldToClient(i as string, xx as number, zz as number)!, [run.id, x, z]);
    const [left] = await at(view.x0Um, 0);
    const [, bandY] = await at(w.centreUm, -3 / view.pxPerUmZ);
    const row = Array.from({ length: view.width }, (_, k) => [left + k + 0.5, bandY] as [number, number]);
    const rowPx = await stagePixels(page, row, 'gl');
    const grey = (p: number[]) => Math.abs(p[0] - 138) + Math.abs(p[1] - 143) + Math.abs(p[2] - 152) < 24; // the mask's colour (tile.ts)
    const centreK = Math.round((await at(w.centreUm, 0))[0] - left);
    let a = centreK;
    while (a > 0 && !grey(rowPx[a - 1])) a--;
    let b = centreK;
    while (b < rowPx.length - 1 && !grey(rowPx[b + 1])) b++;
    const acrossPxPerUm = (b - a + 1) / (w.x1Um - w.x0Um);
    const [cx, top] = await at(w.centreUm, -12 / view.pxPerUmZ);
    const column = Array.from({ length: view.height + 12 }, (_, k) => [cx, top + k + 0.5] as [number, number]);
    const [glCol, withContour] = await Promise.all([stagePixels(page, column, 'gl'), stagePixels(page, column)]);
    await page.evaluate(() => window.edgewise.app.set({ contours: false }));
    const withoutContour = await stagePixels(page, column);
    await page.evaluate(() => window.edgewise.app.set({ contours: true }));
    const background = [246, 246, 244]; // the stage's clear colour (stage.ts)
    const surface = glCol.findIndex((p) => Math.abs(p[0] - background[0]) + Math.abs(p[1] - background[1]) + Math.abs(p[2] - background[2]) > 30);
    // The contour: the rows the junction line changes (drawn centred on the junction).
    const line = withContour.map((p, k) => (Math.abs(p[0] - withoutContour[k][0]) + Math.abs(p[1] - withoutContour[k][1]) + Math.abs(p[2] - withoutContour[k][2]) > 30 ? k : -1)).filter((k) => k >= 0);
    expect(surface).toBeGreaterThan(0);
    expect(line.length).toBeGreaterThan(0);
    expect(line[line.length - 1] - line[0]).toBeLessThan(8); // one line, a few px wide
    const contourRow = 0.5 * (line[0] + line[line.length - 1]) + 0.5;
    const downPxPerUm = (contourRow - surface) / w.junctionDepthUm;
    // One µm across and one µm down within 4 % (the two lengths are 80 px and 74 px, read to a pixel or so).
    expect(Math.abs(downPxPerUm / acrossPxPerUm - 1)).toBeLessThan(0.04);
    expect(Math.abs(acrossPxPerUm / view.pxPerUmX - 1)).toBeLessThan(0.04);
  });

  it('draws the lateral reach as a dimension at each mask edge, its label the report\'s figure', async () => {
    const s = await snapshot(page);
    for (const run of runs) {
      const report = readReport(join(sweepDir, run.dir)); // source: report.json
      const w = report.windows[0];
      const tile = s.tiles.find((t) => t.id === run.id)!;
      for (const side of ['left', 'right'] as const) {
        const reach = side === 'left' ? (w.lateralReachLeftUm ?? w.lateralLeftUm) : (w.lateralReachRightUm ?? w.lateralRightUm);
        const edge = side === 'left' ? w.x0Um : w.x1Um;
        const end = side === 'left' ? edge - reach : edge + reach;
        const label = await page.$eval(`.dimension[data-run-id="${run.id}"][data-side="${side}"]`, (e) => ({ text: e.textContent, box: e.getBoundingClientRect().toJSON() }));
        expect(label.text).toBe(`${reach.toFixed(3)} µm`);
        const view = tile.views.find((v) => edge >= v.x0Um && edge <= v.x0Um + v.width / v.pxPerUmX)!;
        const lineZ = view.z0Um - 9 / view.pxPerUmZ; // DIMENSION_RISE_PX above the view's top (dimensions.ts)
        const [mid, lineY] = await page.evaluate(([i, xx, zz]) => window.edgewise.app.worldToClient(i as string, xx as number, zz as number)!, [run.id, 0.5 * (edge + end), lineZ]);
        const [centre] = await page.evaluate(([i, xx, zz]) => window.edgewise.app.worldToClient(i as string, xx as number, zz as number)!, [run.id, w.centreUm, lineZ]);
        const [onLine, offLine] = await stagePixels(page, [[mid, lineY], [centre, lineY]]);
        expect(onLine[0] + onLine[1] + onLine[2]).toBeLessThan(3 * 110); // the dark dimension line
        expect(offLine[0] + offLine[1] + offLine[2]).toBeGreaterThan(3 * 230); // none over the window
        // The number sits just above its line.
        expect(label.box.bottom).toBeLessThanOrEqual(lineY + 1);
        expect(label.box.bottom).toBeGreaterThan(lineY - 12);
      }
    }
    await shot(page, 'edge-view');
  });

  it('shows the hover readout over any tile of the grid, from that tile\'s field', async () => {
    const sorted = [...runs].sort((a, b) => a.widthUm - b.widthUm);
    for (const run of [sorted[1], sorted[3]]) {
      const dir = join(sweepDir, run.dir);
      const report = readReport(dir);
      const [field, x, z] = await Promise.all([readNpy(join(dir, 'field.npy')), readNpy(join(dir, 'x.npy')), readNpy(join(dir, 'z.npy'))]);
      const w = report.windows[0];
      const view = (await snapshot(page)).tiles.find((t) => t.id === run.id)!.views[0];
      for (const [tx, tz] of [[w.x0Um - 0.3, 0.4 * w.junctionDepthUm], [w.x0Um + 0.2, 1.2 * w.junctionDepthUm]]) {
        const p = await page.evaluate(([i, xx, zz]) => window.edgewise.app.worldToClient(i as string, xx as number, zz as number)!, [run.id, tx, tz]);
        await page.mouse.move(p[0], p[1]);
        const readout = await page.$eval('.readout', (el) => ({
          hidden: (el as HTMLElement).hidden, runId: (el as HTMLElement).dataset.runId,
          rows: [...el.querySelectorAll('div')].map((d) => ({ ...(d as HTMLElement).dataset, text: d.textContent }) as Record<string, string | undefined>),
        }));
        expect(readout.hidden).toBe(false);
        expect(readout.runId).toBe(run.id);
        const xShown = Number(/([-\d.]+) µm/.exec(readout.rows.find((r) => r.quantity === 'x')!.text!)![1]);
        const zShown = Number(/([-\d.]+) µm/.exec(readout.rows.find((r) => r.quantity === 'z')!.text!)![1]);
        expect(Math.abs(xShown - tx)).toBeLessThan(2 / view.pxPerUmX);
        expect(Math.abs(zShown - tz)).toBeLessThan(2 / view.pxPerUmZ);
        const shown = Number(readout.rows.find((r) => r.layer === 'net')!.value);
        // source: bilinear interpolation of this run's field.npy at the shown (x, z)
        const expected = bilinear(field.data, 0, x.data, z.data, report.crossSection.widthUm, xShown, zShown);
        expect(Math.abs(shown - expected) / Math.abs(expected)).toBeLessThan(0.01);
      }
    }
    await page.mouse.move(2, 2);
  });

  it('draws the junction contour where report.json says it is', async () => {
    await page.evaluate(() => window.edgewise.app.set({ shown: 'full' }));
    const points: { run: string; at: [number, number] }[] = [];
    for (const run of runs) {
      const report = readReport(join(sweepDir, run.dir)); // source: report.json junction polylines
      const line: [number, number][] = report.junctions[0].polylinesUm[0];
      for (let k = 0; k < line.length; k += Math.max(1, Math.floor(line.length / 12))) points.push({ run: run.id, at: line[k] });
    }
    const client = await page.evaluate((pts) => pts.map((p) => window.edgewise.app.worldToClient(p.run, p.at[0], p.at[1])!), points);
    // Away from the contour: mid-depth of the substrate far under the mask, 3 µm from the left wall.
    const control = await page.evaluate((ids) => ids.map((id) => window.edgewise.app.worldToClient(id, 3, 1.7)!), runs.map((r) => r.id));
    const withLines = await stagePixels(page, [...client, ...control]);
    await page.evaluate(() => window.edgewise.app.set({ contours: false }));
    const without = await stagePixels(page, [...client, ...control]);
    await page.evaluate(() => window.edgewise.app.set({ contours: true }));
    const differs = (a: number[], b: number[]) => Math.abs(a[0] - b[0]) + Math.abs(a[1] - b[1]) + Math.abs(a[2] - b[2]) > 30;
    const onLine = client.map((_, k) => differs(withLines[k], without[k]));
    // Every sampled contour point changes colour when the contour is drawn (a 3.5 px line: common practice for visibility).
    expect(onLine.filter(Boolean).length).toBe(client.length);
    for (let k = 0; k < control.length; k++) expect(differs(withLines[client.length + k], without[client.length + k])).toBe(false);
    await page.evaluate(() => window.edgewise.app.set({ shown: 'edges' }));
  });

  it('draws every tile in one WebGL canvas, and the panel toggles the mask, mesh lines, iso lines and colour range', async () => {
    // One canvas for all tiles (plus the 2D overlay and the colour bar), however many tiles.
    expect(await page.$$eval('canvas', (els) => els.length)).toBe(3);
    await page.evaluate(() => window.edgewise.app.set({ shown: 'full' }));
    const id = runs.find((r) => r.widthUm === 8)!.id;
    const report = readReport(join(sweepDir, runs.find((r) => r.widthUm === 8)!.dir));
    const w = report.windows[0];
    const at = (x: number, z: number) => page.evaluate(([i, xx, zz]) => window.edgewise.app.worldToClient(i as string, xx as number, zz as number)!, [id, x, z]);
    const view = (await snapshot(page)).tiles.find((t) => t.id === id)!.view!;
    // The mask band sits above the surface over the masked stretch, 3 px up; none over the window.
    const overMask = await at(w.x0Um / 2, -3 / view.pxPerUmZ);
    const overWindow = await at(w.centreUm, -3 / view.pxPerUmZ);
    const field = await at(w.centreUm, 0.5 * w.junctionDepthUm);
    const probe = () => stagePixels(page, [overMask, overWindow, field], 'gl');
    const on = await probe();
    await page.evaluate(() => window.edgewise.app.set({ mask: false }));
    const off = await probe();
    await page.evaluate(() => window.edgewise.app.set({ mask: true }));
    const dist = (a: number[], b: number[]) => Math.abs(a[0] - b[0]) + Math.abs(a[1] - b[1]) + Math.abs(a[2] - b[2]);
    expect(dist(on[0], off[0])).toBeGreaterThan(30);
    expect(dist(on[1], off[1])).toBe(0);
    expect(dist(on[2], off[2])).toBe(0);

    // Mesh lines and iso lines each change some of the pixels along a row through the tile.
    const row = await Promise.all(Array.from({ length: 120 }, (_, k) => at(0.3 + (k * 23.4) / 120, 0.5 * w.junctionDepthUm)));
    const plain = await stagePixels(page, row, 'gl');
    const changed = async (options: Record<string, unknown>, undo: Record<string, unknown>) => {
      await page.evaluate((o) => window.edgewise.app.set(o), options);
      const px = await stagePixels(page, row, 'gl');
      await page.evaluate((o) => window.edgewise.app.set(o), undo);
      return px.filter((p, k) => dist(p, plain[k]) > 20).length;
    };
    expect(await changed({ mesh: true }, { mesh: false })).toBeGreaterThan(5);

    // A range of its own: the colour bar's decades follow it.
    await page.evaluate(() => window.edgewise.app.set({ fromLog10: 15, toLog10: 19 }));
    const decades = await page.$$eval('.bar-ticks span', (els) => els.map((e) => Number((e as HTMLElement).dataset.exponent)));
    expect(decades).toEqual([15, 16, 17, 18, 19]);
    expect(await changed({}, {})).toBeGreaterThan(60); // the field's colours moved with the range
    await page.evaluate(() => window.edgewise.app.set({ autoRange: true, shown: 'edges' }));
  });

  it('draws iso-concentration lines in the diffused region only: none in the substrate or round the junction', async () => {
    const run = runs.find((r) => r.widthUm === 2)!;
    const report = readReport(join(sweepDir, run.dir)); // source: report.json
    const w = report.windows[0];
    const view = (await snapshot(page)).tiles.find((t) => t.id === run.id)!.views[0];
    const at = (x: number, z: number) => page.evaluate(([i, xx, zz]) => window.edgewise.app.worldToClient(i as string, xx as number, zz as number)!, [run.id, x, z]);
    const paneWidth = view.width / view.pxPerUmX;
    // Across the diffused region at half the junction depth, and down the window's centre
    // from just below the junction (|net doping| under the substrate's 1e15 cm⁻³) to the bottom.
    const row = await Promise.all(Array.from({ length: 150 }, (_, k) => at(view.x0Um + ((k + 0.5) * paneWidth) / 150, 0.5 * w.junctionDepthUm)));
    const bottom = view.z0Um + view.height / view.pxPerUmZ;
    const below = await Promise.all(Array.from({ length: 40 }, (_, k) => at(w.centreUm, w.junctionDepthUm + 4 / view.pxPerUmZ + (k / 40) * (bottom - w.junctionDepthUm - 6 / view.pxPerUmZ))));
    const plain = await stagePixels(page, [...row, ...below], 'gl');
    await page.evaluate(() => window.edgewise.app.set({ isoLines: 0.25 }));
    const lined = await stagePixels(page, [...row, ...below], 'gl');
    await page.evaluate(() => window.edgewise.app.set({ isoLines: 0 }));
    const dist = (a: number[], b: number[]) => Math.abs(a[0] - b[0]) + Math.abs(a[1] - b[1]) + Math.abs(a[2] - b[2]);
    const changedInRow = row.filter((_, k) => dist(plain[k], lined[k]) > 20).length;
    const changedBelow = below.filter((_, k) => dist(plain[row.length + k], lined[row.length + k]) > 6).length;
    expect(changedInRow).toBeGreaterThan(4);
    expect(changedBelow).toBe(0);
  });

  it('focuses a clicked tile; after zoom and pan the hover readout matches field.npy there within 1 %', async () => {
    const run = runs.find((r) => r.widthUm === 8)!;
    const dir = join(sweepDir, run.dir);
    const report = readReport(dir);
    const [field, x, z] = await Promise.all([readNpy(join(dir, 'field.npy')), readNpy(join(dir, 'x.npy')), readNpy(join(dir, 'z.npy'))]);
    await page.evaluate(() => window.edgewise.app.set({ shown: 'full' }));
    const target = await page.evaluate((id) => window.edgewise.app.worldToClient(id, 12, 0.5)!, run.id);
    await page.mouse.click(target[0], target[1]);
    await page.evaluate(() => window.edgewise.app.nextFrame());
    expect((await snapshot(page)).focused).toBe(run.id);
    // Zoom in about the region to be probed, then drag the view: both change the world window.
    const before = (await snapshot(page)).tiles.find((t) => t.id === run.id)!.view!;
    const centre = await page.evaluate(([id, zz]) => window.edgewise.app.worldToClient(id as string, 12, zz as number)!, [run.id, 0.8 * report.windows[0].junctionDepthUm]);
    await page.mouse.move(centre[0], centre[1]);
    await page.mouse.wheel(0, -300);
    await page.mouse.down();
    await page.mouse.move(centre[0] + 40, centre[1] - 20, { steps: 4 });
    await page.mouse.up();
    await page.evaluate(() => window.edgewise.app.nextFrame());
    const after = (await snapshot(page)).tiles.find((t) => t.id === run.id)!.view!;
    expect(after.pxPerUmX).toBeGreaterThan(before.pxPerUmX * 1.3);
    expect(after.x0Um).not.toBeCloseTo(before.x0Um, 3);

    const w = report.windows[0];
    const targets: [number, number][] = [
      [w.centreUm + 1.1, 0.3 * w.junctionDepthUm], // inside the diffused (p-type) region
      [w.x0Um - 0.4, 0.5 * w.junctionDepthUm], // under the mask, still inside the junction
      [w.centreUm - 0.7, 0.5 * (w.junctionDepthUm + report.crossSection.depthUm)], // below the junction, in the substrate
    ];
    for (const [tx, tz] of targets) {
      const p = await page.evaluate(([id, xx, zz]) => window.edgewise.app.worldToClient(id as string, xx as number, zz as number)!, [run.id, tx, tz]);
      // The probe must land inside the focused plot for the readout to mean anything.
      expect(p[0]).toBeGreaterThan(after.left);
      expect(p[0]).toBeLessThan(after.left + after.width);
      expect(p[1]).toBeGreaterThan(after.top);
      expect(p[1]).toBeLessThan(after.top + after.height);
      await page.mouse.move(p[0], p[1]);
      const readout = await page.$eval('.readout', (el) => ({
        hidden: (el as HTMLElement).hidden,
        rows: [...el.querySelectorAll('div')].map((d) => ({ ...(d as HTMLElement).dataset, text: d.textContent }) as Record<string, string | undefined>),
      }));
      expect(readout.hidden).toBe(false);
      const xShown = Number(/([-\d.]+) µm/.exec(readout.rows.find((r) => r.quantity === 'x')!.text!)![1]);
      const zShown = Number(/([-\d.]+) µm/.exec(readout.rows.find((r) => r.quantity === 'z')!.text!)![1]);
      // The pointer is where we aimed, to within a pixel at this zoom.
      expect(Math.abs(xShown - tx)).toBeLessThan(2 / after.pxPerUmX);
      expect(Math.abs(zShown - tz)).toBeLessThan(2 / after.pxPerUmZ);
      report.field.layers.forEach((name: string, layer: number) => {
        const row = readout.rows.find((r) => r.layer === name)!;
        const shown = Number(/(-?[\d.]+e-?\d+)/.exec(row.text!)![1]);
        // source: bilinear interpolation of field.npy between the mesh nodes at the shown (x, z)
        const expected = bilinear(field.data, layer, x.data, z.data, report.crossSection.widthUm, xShown, zShown);
        expect(Math.abs(shown - expected) / Math.abs(expected)).toBeLessThan(0.01);
      });
      const net = bilinear(field.data, 0, x.data, z.data, report.crossSection.widthUm, xShown, zShown);
      // Boron into a phosphorus substrate: acceptors exceed donors above the junction.
      expect(readout.rows.find((r) => r.quantity === 'side')!.text).toMatch(net < 0 ? /p-type/ : /n-type/);
      expect(tz < w.junctionDepthUm ? net < 0 : net > 0).toBe(true);
    }
    await shot(page, 'focus-readout');
    await page.keyboard.press('Escape');
    await page.evaluate(() => window.edgewise.app.set({ shown: 'edges' }));
    expect((await snapshot(page)).mode).toBe('grid');
  });

  it('plots junction depth and the lateral reach (wider edge, any depth) against window width, with the runs\' error bars', async () => {
    const dots = await page.$$eval('#plot circle', (els) => els.map((e) => ({
      series: e.parentElement!.getAttribute('class'), id: (e as SVGElement).dataset.runId, um: Number((e as SVGElement).dataset.valueUm),
      cy: Number(e.getAttribute('cy')),
    })));
    const bars = await page.$$eval('#plot path.error-bar', (els) => els.map((e) => ({
      series: e.parentElement!.getAttribute('class'), id: (e as SVGElement).dataset.runId, um: Number((e as SVGElement).dataset.errorUm),
      d: e.getAttribute('d')!,
    })));
    const xj = dots.filter((d) => /junctionDepthUm/.test(d.series!));
    const reach = dots.filter((d) => /lateralUm/.test(d.series!));
    expect(xj).toHaveLength(WIDTHS.length);
    expect(reach).toHaveLength(WIDTHS.length);
    for (const d of xj) {
      const run = runs.find((r) => r.id === d.id)!;
      expect(d.um).toBe(readReport(join(sweepDir, run.dir)).windows[0].junctionDepthUm); // source: report.json
    }
    for (const d of reach) {
      const w = readReport(join(sweepDir, runs.find((r) => r.id === d.id)!.dir)).windows[0];
      // source: report.json, the wider edge's reach at any depth (not the surface lateral)
      expect(d.um).toBe(Math.max(w.lateralReachLeftUm, w.lateralReachRightUm));
      const edge = w.lateralReachLeftUm >= w.lateralReachRightUm ? 'lateralReachLeftUm' : 'lateralReachRightUm';
      const bar = bars.find((b) => b.id === d.id && /lateralUm/.test(b.series!));
      if (w.errors?.[edge] > 0) {
        expect(bar?.um).toBe(w.errors[edge]);
      } else expect(bar).toBeUndefined();
    }
    // Every bar spans value ± error on the plot's own scale (µm per pixel from two xj dots).
    const [a, b] = [xj[0], xj[xj.length - 1]];
    const pxPerUm = (a.cy - b.cy) / (b.um - a.um);
    expect(bars.length).toBeGreaterThan(0);
    for (const bar of bars) {
      const dot = dots.find((d) => d.id === bar.id && d.series === bar.series)!;
      const [, yLow, yHigh] = /^M[\d.]+,([\d.]+)V([\d.]+)/.exec(bar.d)!.map(Number);
      expect(Math.abs(yLow - yHigh) / 2).toBeCloseTo(bar.um * pxPerUm, 1);
      expect((yLow + yHigh) / 2).toBeCloseTo(dot.cy, 1);
    }
    const axis = await page.textContent('#plot .y-label');
    expect(axis).toContain('lateral reach');
    expect(await page.textContent('#plot .legend-lateralUm')).toMatch(/lateral reach, any depth/);
  });

  it('re-runs an edited recipe in a worker with progress, without freezing the page, with error bars, and the shown xj changes', async () => {
    await page.keyboard.press('Escape'); // back to the grid, whatever the test before left
    const liveXj = async (minutes: number) => {
      const input = page.locator('#panel [data-path="steps[1].minutes"] input');
      await input.fill(String(minutes));
      await input.press('Enter');
      await page.evaluate(() => { document.body.dataset.live = ''; });
      const frames = page.evaluate(() => new Promise<number>((resolve) => {
        // Frames the page draws while the solver runs: none if the solve blocked the page.
        let n = 0;
        const tick = () => {
          if ((document.body.dataset.live ?? '') !== '') resolve(n);
          else {
            n++;
            requestAnimationFrame(tick);
          }
        };
        requestAnimationFrame(tick);
      }));
      await page.locator('#panel button', { hasText: 'run in the background' }).click();
      await page.waitForFunction(() => (document.body.dataset.live ?? '').startsWith('done'), null, { timeout: 60_000 });
      await page.waitForSelector('.caption[data-run-id="live"] .xj');
      const xj = await page.$eval('.caption[data-run-id="live"] .xj', (e) => Number((e as HTMLElement).dataset.um));
      const progress = await page.$eval('#progress progress', (e) => (e as HTMLProgressElement).value);
      const caption = await page.$eval('.caption[data-run-id="live"] .xj', (e) => e.textContent);
      return { xj, frames: await frames, progress, caption };
    };
    const first = await liveXj(60);
    // Same recipe as the CLI run of the 8 µm window: the worker's solver2d gives the CLI's xj,
    // and the same error bar from the same two coarser solves (source: report.json).
    const cli = readReport(join(sweepDir, runs.find((r) => r.widthUm === 8)!.dir)).windows[0];
    expect(first.xj).toBeCloseTo(cli.junctionDepthUm, 5);
    expect(first.caption).toBe(`xj ${cli.junctionDepthUm.toFixed(3)} ± ${cli.errors.junctionDepthUm.toFixed(3)} µm`);
    expect(first.progress).toBe(1);
    expect(first.frames).toBeGreaterThan(2);
    const longer = await liveXj(240);
    // Four times the drive-in: xj grows, roughly as the square root of Dt (closed form, erfc/Gaussian profiles).
    expect(longer.xj).toBeGreaterThan(first.xj * 1.3);
    expect(longer.caption).toMatch(new RegExp(`^xj ${longer.xj.toFixed(3)} ± [0-9.]+ µm$`));
    expect((await snapshot(page)).tiles).toHaveLength(WIDTHS.length + 1);
    await shot(page, 'live-rerun');
  });

  it('opens a folder chosen with the picker and frees the old tiles\' GPU memory', async () => {
    await page.evaluate(() => window.edgewise.app.nextFrame());
    const before = await snapshot(page);
    const single = join(work, 'single');
    cliRun(recipeWithWindow(3), single, join(work, '.recipes'));
    await page.evaluate(() => { window.edgewise.app.timing.firstFrameMs = null; });
    await page.setInputFiles('#folder-input', single);
    await page.waitForFunction(() => window.edgewise.app.snapshot().tiles.length === 1 && window.edgewise.app.snapshot().timing.firstFrameMs !== null, null, { timeout: 30_000 });
    const after = await snapshot(page);
    expect(after.problems).toEqual([]);
    // three.js counts live geometries. A tile owns at most three (field, mask slab, mesh lines:
    // source, the Tile class), and a drawn tile at least the first two.
    expect(before.gpu.geometries).toBeGreaterThanOrEqual(2 * before.tiles.length);
    expect(after.gpu.geometries).toBeGreaterThanOrEqual(2);
    expect(after.gpu.geometries).toBeLessThanOrEqual(3);
  });
});

describe('other ways in', () => {
  it('opens the files of a run dropped on the page', async () => {
    const dir = join(work, 'dropped');
    cliRun(recipeWithWindow(5), dir, join(work, '.recipes'));
    const files = ['report.json', 'field.npy', 'x.npy', 'z.npy'].map((name) => ({ name, base64: readFileSync(join(dir, name)).toString('base64') }));
    const other = await browser.context.newPage();
    try {
      await other.goto(server.url);
      await waitForTiles(other);
      await other.evaluate(async (list) => {
        const data = new DataTransfer();
        for (const f of list) data.items.add(new File([Uint8Array.from(atob(f.base64), (c) => c.charCodeAt(0))], f.name));
        window.edgewise.app.timing.firstFrameMs = null;
        window.dispatchEvent(new DragEvent('drop', { dataTransfer: data, bubbles: true, cancelable: true }));
      }, files);
      await other.waitForFunction(() => window.edgewise.app.snapshot().tiles.length === 1 && window.edgewise.app.snapshot().timing.firstFrameMs !== null, null, { timeout: 30_000 });
      const xj = await other.$eval('.caption .xj', (e) => Number((e as HTMLElement).dataset.um));
      expect(xj).toBe(readReport(dir).windows[0].junctionDepthUm); // source: the dropped report.json
    } finally {
      await other.close();
    }
  });

  it('opens a sweep folder written by edgewise sweep, and takes its recipe for the live mode', async () => {
    const dir = join(work, 'real-sweep');
    execFileSync(process.execPath, [CLI, 'sweep', join(REPO, 'examples', 'base-resistor.json'), '--widths', '2,6', '--out', dir, '--quiet'], { stdio: ['ignore', 'ignore', 'pipe'] });
    const sweep = JSON.parse(readFileSync(join(dir, 'sweep.json'), 'utf8'));
    const view = await startView(dir);
    const other = await browser.context.newPage();
    try {
      await other.goto(view.url);
      await waitForTiles(other);
      const s = await other.evaluate(() => window.edgewise.app.snapshot());
      expect(s.problems).toEqual([]);
      expect(s.tiles.map((t) => t.dir)).toEqual(sweep.runs.map((r: { dir: string }) => r.dir)); // source: sweep.json, in width order
      expect(s.recipe).toMatch(/recipe\.json/);
    } finally {
      await other.close();
      await view.stop();
    }
  });
});

describe('a lone run', () => {
  it('opens a run folder without asking for a sweep.json it does not have', async () => {
    const dir = join(work, 'lone');
    cliRun(recipeWithWindow(3), dir, join(work, '.recipes'));
    const view = await startView(dir);
    const other = await browser.context.newPage();
    const asked: string[] = [];
    other.on('request', (r) => asked.push(new URL(r.url()).pathname));
    try {
      await other.goto(view.url);
      await waitForTiles(other);
      const s = await other.evaluate(() => window.edgewise.app.snapshot());
      expect(s.problems).toEqual([]);
      expect(s.tiles).toHaveLength(1);
      expect(asked.some((p) => /report\.json/.test(p) || /api\/files/.test(p))).toBe(true);
      expect(asked.filter((p) => /sweep\.json/.test(p))).toEqual([]);
    } finally {
      await other.close();
      await view.stop();
    }
  });
});

describe('broken folders', () => {
  it('shows which file is malformed and why, not a blank page', async () => {
    const dir = join(work, 'broken');
    cliRun(recipeWithWindow(4), dir, join(work, '.recipes'));
    writeFileSync(join(dir, 'report.json'), '{ "schema": "edgewise.report/1", "windows": [ {"x0Um": 10,');
    const view = await startView(dir);
    const other = await browser.context.newPage();
    try {
      await other.goto(view.url);
      await waitForTiles(other);
      const message = await other.locator('#messages').innerText();
      expect(message).toContain('report.json');
      expect(message).toMatch(/not valid JSON/);
      expect(await other.locator('#messages').isVisible()).toBe(true);
      expect(await other.locator('.empty').innerText()).toMatch(/Nothing to show/);
      mkdirSync(ARTIFACTS, { recursive: true });
      await other.screenshot({ path: join(ARTIFACTS, 'malformed-report.png') });
    } finally {
      await other.close();
      await view.stop();
    }
  });
});
