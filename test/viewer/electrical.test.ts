import { join } from 'node:path';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdirSync } from 'node:fs';
import { ARTIFACTS, buildViewer, cliRun, launchChromium, readNpy, readReport, stagePixels, startView, tempDir, waitForTiles, type ViewServer } from './support.ts';

// A small boron base with electrical rules at 0 and 10 V (demo scenario, invented), written by
// the real CLI and opened in real Chromium.
const RECIPE = {
  title: 'small base with electrical rules (demo scenario)',
  substrate: { dopant: 'P', concentrationCm3: 1e16 },
  // Deep enough to hold the depletion at 10 V (1.7 µm below the centre).
  crossSection: { widthUm: 12, depthUm: 4 },
  mask: { windows: [[4, 8]] },
  mesh: { refine: 0.5 },
  steps: [
    { kind: 'predeposition', dopant: 'B', surfaceConcentrationCm3: 1e19, temperatureC: 1000, minutes: 20 },
    { kind: 'drive-in', temperatureC: 1100, minutes: 20 },
  ],
  electrical: { biasV: [0, 10] },
};

let dir: string;
let server: ViewServer;
let browser: Awaited<ReturnType<typeof launchChromium>>;
let page: Page;

beforeAll(async () => {
  const work = tempDir('viewer-electrical');
  dir = join(work, 'run');
  await Promise.all([Promise.resolve().then(() => cliRun(RECIPE, dir, work)), buildViewer()]);
  server = await startView(dir);
  browser = await launchChromium();
  page = browser.page;
  page.on('pageerror', (e) => { throw e; });
  await page.goto(server.url);
  await waitForTiles(page);
  // The whole width, so that the window centre is drawn too.
  await page.evaluate(() => window.edgewise.app.set({ shown: 'full' }));
}, 180_000);

afterAll(async () => {
  await browser?.close();
  await server?.stop();
});

const client = (x: number, z: number) => page.evaluate(([xx, zz]) => {
  const app = window.edgewise.app;
  return app.worldToClient(app.snapshot().tiles[0].id, xx, zz);
}, [x, z] as const);
const set = (options: Record<string, unknown>) => page.evaluate((o) => window.edgewise.app.setElectrical(o), options);
const differs = (a: number[], b: number[]) => Math.abs(a[0] - b[0]) + Math.abs(a[1] - b[1]) + Math.abs(a[2] - b[2]) > 30;

describe('the viewer on a run with electrical rules', () => {
  it('offers an "electrical" control with potential and field at each bias of the run', async () => {
    const titles = await page.locator('.lil-gui > .lil-title').evaluateAll((els) => els.map((e) => [e.textContent, (e.parentElement as HTMLElement).style.display]));
    expect(titles).toContainEqual(['electrical', '']);
    const options = await page.locator('.lil-gui select').evaluateAll((selects) => selects.flatMap((s) => [...(s as HTMLSelectElement).options].map((o) => o.textContent)));
    expect(options).toEqual(expect.arrayContaining(['potential, V', '|field|, V/cm', '0 V', '10 V']));
  });

  it('colours the tile by potential, then by field: the pixels change and the colour bar says V, then V/cm', async () => {
    // Points in the depleted substrate beside and below the region, and inside it.
    const at = await Promise.all([[9, 0.5], [6, 2.2], [5, 0.3]].map(([x, z]) => client(x, z)));
    const doping = await stagePixels(page, at as [number, number][]);
    await set({ colourBy: 'potential', bias: 1, edges: false });
    const potential = await stagePixels(page, at as [number, number][]);
    expect(await page.locator('.bar-title').textContent()).toBe('potential, V');
    await set({ colourBy: 'field' });
    const field = await stagePixels(page, at as [number, number][]);
    expect(await page.locator('.bar-title').textContent()).toBe('|field|, V/cm');
    console.log(`pixels (doping, potential, field): ${JSON.stringify([doping, potential, field])}`);
    expect(potential.some((p, k) => differs(p, doping[k]))).toBe(true);
    expect(field.some((p, k) => differs(p, potential[k]))).toBe(true);
  });

  it('draws the depletion edge where the solved carriers recover to half the doping below the window centre', async () => {
    // The report's depletion depth below the centre at 10 V, and the same from the file the line is drawn from.
    const depth = readReport(dir).electrical.windows[0].depletionDepthUm[1] as number;
    const d = await readNpy(join(dir, 'electrical-depletion.npy'));
    expect(d.shape[1]).toBe(2);
    await set({ colourBy: 'potential', bias: 1, edges: false });
    const [onEdge, deeper] = await Promise.all([client(6, depth), client(6, depth + 0.6)]);
    const without = await stagePixels(page, [onEdge!, deeper!]);
    await set({ edges: true });
    const withEdge = await stagePixels(page, [onEdge!, deeper!]);
    mkdirSync(ARTIFACTS, { recursive: true });
    await page.screenshot({ path: join(ARTIFACTS, 'electrical-potential.png') });
    console.log(`depletion depth ${depth} µm at 10 V; pixels without and with the edge: ${JSON.stringify([without, withEdge])}`);
    expect(differs(withEdge[0], without[0])).toBe(true);
    expect(differs(withEdge[1], without[1])).toBe(false);
  });
});
