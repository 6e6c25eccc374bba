import { execFileSync, spawn, type ChildProcess } from 'node:child_process';
import { mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import npyjs from 'npyjs';
import { chromium, type BrowserContext, type Page } from 'playwright-core';
import { ensureViewerBuilt } from '../../packages/cli/src/view-build.ts';
import { BIN as CLI, REPO, tempDir as cliTempDir } from '../support/cli.ts';

/** Helpers for the viewer's browser tests: real CLI runs, the real server, Debian's Chromium. */

export { REPO, BIN as CLI } from '../support/cli.ts';
export const ARTIFACTS = join(REPO, 'test-artifacts', 'viewer');

export function buildViewer(): Promise<string> {
  return ensureViewerBuilt();
}

export function tempDir(prefix: string): string {
  return cliTempDir(`edgewise-${prefix}-`);
}

export const BASE_RECIPE = JSON.parse(readFileSync(join(REPO, 'examples', 'base-resistor.json'), 'utf8'));

/** The demo recipe with its window resized about the same centre. */
export function recipeWithWindow(widthUm: number, extra: Record<string, unknown> = {}): Record<string, unknown> {
  const r = structuredClone(BASE_RECIPE);
  const [x0, x1] = r.mask.windows[0];
  const c = 0.5 * (x0 + x1);
  r.mask.windows = [[c - widthUm / 2, c + widthUm / 2]];
  return { ...r, ...extra };
}

/** `edgewise run RECIPE --out DIR` with the real binary. */
export function cliRun(recipe: unknown, out: string, work: string): void {
  mkdirSync(work, { recursive: true });
  const file = join(work, `recipe-${Math.random().toString(36).slice(2)}.json`);
  writeFileSync(file, JSON.stringify(recipe, null, 2));
  execFileSync(process.execPath, [CLI, 'run', file, '--out', out, '--quiet'], { stdio: ['ignore', 'ignore', 'pipe'] });
}

export interface SweepRun {
  id: string;
  dir: string;
  widthUm: number;
}

/** A sweep folder over window widths: one `edgewise run` per width, and its sweep.json and sweep.csv. */
export function makeWidthSweep(folder: string, widths: number[], extra: Record<string, unknown> = {}): SweepRun[] {
  const runs = widths.map((w, k) => ({ id: String(k + 1), dir: `run-${String(k + 1).padStart(4, '0')}`, widthUm: w }));
  for (const r of runs) cliRun(recipeWithWindow(r.widthUm, extra), join(folder, r.dir), join(folder, '.recipes'));
  writeFileSync(join(folder, 'sweep.json'), JSON.stringify({
    schema: 'edgewise.sweep/1',
    parameters: ['windowWidthUm'],
    runs: runs.map((r) => ({ id: r.id, dir: r.dir, values: { windowWidthUm: r.widthUm }, status: 'ok', error: null })),
  }, null, 2));
  writeFileSync(join(folder, 'sweep.csv'), ['id,windowWidthUm,status', ...runs.map((r) => `${r.id},${r.widthUm},ok`)].join('\n') + '\n');
  return runs;
}

export function readReport(dir: string) {
  return JSON.parse(readFileSync(join(dir, 'report.json'), 'utf8'));
}

export async function readNpy(file: string): Promise<{ data: Float64Array; shape: number[] }> {
  const bytes = readFileSync(file);
  const parsed = await new npyjs().parse(bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength) as ArrayBuffer);
  return { data: parsed.data as Float64Array, shape: parsed.shape };
}

export interface ViewServer {
  url: string;
  child: ChildProcess;
  stderr: () => string;
  stop: () => Promise<void>;
}

/** `edgewise view DIR` with the real binary; resolves with the address it prints. */
export function startView(dir: string, args: string[] = []): Promise<ViewServer> {
  const child = spawn(process.execPath, [CLI, 'view', dir, ...args], { stdio: ['ignore', 'pipe', 'pipe'] });
  let out = '';
  let err = '';
  child.stderr!.on('data', (d) => { err += d; });
  return new Promise((resolvePromise, reject) => {
    const timer = setTimeout(() => reject(new Error(`edgewise view printed no address in 60 s: ${out} ${err}`)), 60_000);
    child.on('exit', (code) => reject(new Error(`edgewise view exited with ${code}: ${err}`)));
    child.stdout!.on('data', (d) => {
      out += d;
      const m = /(http:\/\/127\.0\.0\.1:\d+\/)/.exec(out);
      if (m) {
        clearTimeout(timer);
        resolvePromise({
          url: m[1], child, stderr: () => err,
          stop: () => new Promise<void>((done) => {
            if (child.exitCode !== null) return done();
            child.once('exit', () => done());
            child.kill('SIGTERM');
          }),
        });
      }
    });
  });
}

/** Chromium as the project uses it in tests: headless, software WebGL, a fresh profile. */
export async function launchChromium(): Promise<{ context: BrowserContext; page: Page; close: () => Promise<void> }> {
  const profile = tempDir('chromium-profile');
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: '/usr/bin/chromium',
    headless: true,
    args: [
      '--headless', '--no-sandbox', '--disable-gpu', '--no-first-run', '--disable-background-networking',
      '--disable-component-update', '--disable-sync', '--use-angle=swiftshader', '--enable-unsafe-swiftshader',
    ],
    viewport: { width: 1400, height: 860 },
    deviceScaleFactor: 1,
  });
  const page = context.pages()[0] ?? (await context.newPage());
  return {
    context, page,
    close: async () => {
      await context.close();
      rmSync(profile, { recursive: true, force: true });
    },
  };
}

/** Waits for the page to have drawn the tiles of what it opened. */
export async function waitForTiles(page: Page): Promise<void> {
  await page.waitForFunction(() => {
    const s = window.edgewise?.app.snapshot();
    return s !== undefined && s.timing.loadMs !== null && (s.tiles.length === 0 || s.timing.firstFrameMs !== null);
  }, null, { timeout: 60_000 });
}

/**
 * RGBA of the page's picture at client points: the WebGL canvas (the field, the mask) with
 * the overlay canvas (contours, axes) drawn over it, as the eye sees them.
 */
export function stagePixels(page: Page, points: [number, number][], layers: 'all' | 'gl' = 'all'): Promise<number[][]> {
  return page.evaluate(([pts, which]) => {
    const gl = document.querySelector('canvas.stage-gl') as HTMLCanvasElement;
    const overlay = document.querySelector('canvas.stage-overlay') as HTMLCanvasElement;
    const copy = document.createElement('canvas');
    copy.width = gl.width;
    copy.height = gl.height;
    const ctx = copy.getContext('2d')!;
    ctx.drawImage(gl, 0, 0);
    if (which === 'all') ctx.drawImage(overlay, 0, 0, gl.width, gl.height);
    const r = gl.getBoundingClientRect();
    const ratio = gl.width / r.width;
    return (pts as [number, number][]).map(([x, y]) => Array.from(ctx.getImageData(Math.floor((x - r.left) * ratio), Math.floor((y - r.top) * ratio), 1, 1).data));
  }, [points, layers] as const);
}

/**
 * Bilinear interpolation of one layer of field.npy at (x, z) between mesh nodes, with the
 * wall columns taking the first and last cell's values (the zero-flux walls of
 * DEVELOPERS.md's mesh): the reference the readout is checked against.
 */
export function bilinear(field: Float64Array, layer: number, x: Float64Array, z: Float64Array, widthUm: number, xUm: number, zUm: number): number {
  const nx = x.length;
  const nz = z.length;
  const xs = [0, ...x, widthUm];
  let i = 0;
  while (i < xs.length - 2 && xs[i + 1] < xUm) i++;
  let j = 0;
  while (j < nz - 2 && z[j + 1] < zUm) j++;
  const at = (ii: number, jj: number) => field[layer * nx * nz + jj * nx + Math.min(nx - 1, Math.max(0, ii - 1))];
  const tx = (xUm - xs[i]) / (xs[i + 1] - xs[i]);
  const tz = (zUm - z[j]) / (z[j + 1] - z[j]);
  return (1 - tz) * ((1 - tx) * at(i, j) + tx * at(i + 1, j)) + tz * ((1 - tx) * at(i, j + 1) + tx * at(i + 1, j + 1));
}
