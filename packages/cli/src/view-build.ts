import { existsSync, readdirSync, renameSync, rmSync, statSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

/**
 * The built viewer that `edgewise view` serves: packages/viewer/dist, built with Vite
 * whenever a source of the viewer (or of solver2d, which its worker bundles) is newer.
 * The build goes to a temporary folder first and is renamed into place, so a page being
 * served never sees half a build.
 */

/** packages/viewer, found from this module (both src/ and the bundle in dist/ sit one level below packages/cli). */
export function viewerRoot(): string {
  return join(dirname(fileURLToPath(import.meta.url)), '..', '..', 'viewer');
}

function newest(path: string): number {
  if (!existsSync(path)) return 0;
  const st = statSync(path);
  if (!st.isDirectory()) return st.mtimeMs;
  let m = st.mtimeMs;
  for (const e of readdirSync(path)) m = Math.max(m, newest(join(path, e)));
  return m;
}

export function viewerIsStale(root = viewerRoot()): boolean {
  const built = join(root, 'dist', 'index.html');
  if (!existsSync(built)) return true;
  const sources = [join(root, 'src'), join(root, 'index.html'), join(root, 'vite.config.ts'), join(root, '..', 'solver2d', 'src')];
  return statSync(built).mtimeMs < Math.max(...sources.map(newest));
}

/** Builds the viewer if it is missing or stale; returns the dist folder. */
export async function ensureViewerBuilt(options: { root?: string; force?: boolean; log?: (line: string) => void } = {}): Promise<string> {
  const root = options.root ?? viewerRoot();
  const dist = join(root, 'dist');
  if (!options.force && !viewerIsStale(root)) return dist;
  if (!existsSync(join(root, 'index.html'))) throw new Error(`no viewer sources at ${root}`);
  options.log?.('building the viewer (vite) …');
  // Vite is the viewer's own dependency: resolve it from there, not from the CLI bundle.
  const vitePath = createRequire(join(root, 'package.json')).resolve('vite');
  const vite = (await import(pathToFileURL(vitePath).href)) as typeof import('vite');
  const temp = join(root, `dist.${process.pid}.${Date.now().toString(36)}.tmp`);
  try {
    await vite.build({ root, configFile: join(root, 'vite.config.ts'), logLevel: 'warn', build: { outDir: temp, emptyOutDir: true } });
    for (let attempt = 0; ; attempt++) {
      try {
        rmSync(dist, { recursive: true, force: true });
        renameSync(temp, dist);
        break;
      } catch (e) {
        // Another build renamed its folder into place between our two calls: go again.
        if (attempt >= 5) throw e;
      }
    }
  } finally {
    rmSync(temp, { recursive: true, force: true });
  }
  return dist;
}
