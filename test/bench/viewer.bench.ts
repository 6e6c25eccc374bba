/**
 * Viewer speed, run by hand (not a test): `npx tsx test/bench/viewer.bench.ts [tiles] [columns] [rows]`.
 * Makes a sweep of window widths with the real CLI on a fixed mesh (default 24 runs on
 * 400 × 200), serves it with `edgewise view`, opens it in headless Chromium (software
 * WebGL), and prints: time to read the files, to the first drawn frame, and the time of
 * single frames in the grid and, focused, while zooming and panning.
 */
import { execFileSync } from 'node:child_process';
import { rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { buildViewer, CLI, launchChromium, recipeWithWindow, startView, tempDir, waitForTiles } from '../viewer/support.ts';

const tiles = Number(process.argv[2] ?? 24);
const columns = Number(process.argv[3] ?? 400);
const rows = Number(process.argv[4] ?? 200);

function median(values: number[]): number {
  const s = [...values].sort((a, b) => a - b);
  return s[Math.floor(s.length / 2)];
}

async function main(): Promise<void> {
  const work = tempDir('viewer-bench');
  const sweep = join(work, 'sweep');
  const recipe = join(work, 'recipe.json');
  writeFileSync(recipe, JSON.stringify(recipeWithWindow(8, { mesh: { columns, rows } })));
  const widths = Array.from({ length: tiles }, (_, k) => Number((1 + 0.5 * k).toFixed(2)));
  let started = performance.now();
  execFileSync(process.execPath, [CLI, 'sweep', recipe, '--widths', widths.join(','), '--out', sweep, '--quiet'], { stdio: ['ignore', 'ignore', 'inherit'] });
  console.log(`made ${tiles} runs on a ${columns} × ${rows} mesh with edgewise sweep in ${((performance.now() - started) / 1000).toFixed(1)} s`);
  started = performance.now();
  await buildViewer();
  console.log(`viewer build checked/done in ${((performance.now() - started) / 1000).toFixed(1)} s`);

  const server = await startView(sweep);
  const browser = await launchChromium();
  try {
    const { page } = browser;
    const firsts: { load: number; first: number; nav: number; cells: number }[] = [];
    for (let attempt = 0; attempt < 3; attempt++) {
      await page.goto(`${server.url}?attempt=${attempt}`);
      await waitForTiles(page);
      const s = await page.evaluate(() => window.edgewise.app.snapshot());
      if (s.tiles.length !== tiles) throw new Error(`expected ${tiles} tiles, got ${s.tiles.length}: ${JSON.stringify(s.problems)}`);
      firsts.push({ load: s.timing.loadMs!, first: s.timing.firstFrameMs!, nav: s.timing.sinceNavigationMs!, cells: s.tiles.reduce((n, t) => n + t.columns * t.rows, 0) });
    }
    const last = firsts[firsts.length - 1];
    console.log(`mesh cells drawn: ${last.cells.toLocaleString('en')} (${tiles} tiles)`);
    console.log(`read + parse the files (ms): ${firsts.map((f) => f.load.toFixed(0)).join(', ')}`);
    console.log(`first frame after opening, incl. reading (ms): ${firsts.map((f) => f.first.toFixed(0)).join(', ')}  ← target < 2000`);
    console.log(`first frame since navigation start (ms): ${firsts.map((f) => f.nav.toFixed(0)).join(', ')}`);
    const grid = await page.evaluate(() => Array.from({ length: 5 }, () => window.edgewise.app.drawNow()));
    console.log(`grid frame, all ${tiles} tiles (ms, median of 5): ${median(grid).toFixed(1)}`);
    const id = await page.evaluate(() => window.edgewise.app.snapshot().tiles[0].id);
    await page.evaluate((runId) => window.edgewise.app.focusRun(runId), id);
    const zoom = await page.evaluate(() => Array.from({ length: 20 }, (_, k) => {
      window.edgewise.app.zoomBy(k < 10 ? 1.15 : 1 / 1.15, 7, -3);
      return window.edgewise.app.drawNow();
    }));
    console.log(`focused tile, zoom + pan frame (ms): median ${median(zoom).toFixed(1)}, worst ${Math.max(...zoom).toFixed(1)}`);
  } finally {
    await browser.close();
    await server.stop();
    rmSync(work, { recursive: true, force: true });
  }
}

await main();
