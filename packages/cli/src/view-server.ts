import { createReadStream, existsSync, readdirSync, realpathSync, statSync } from 'node:fs';
import { createServer, type IncomingMessage, type Server, type ServerResponse } from 'node:http';
import type { AddressInfo } from 'node:net';
import { extname, join, relative, resolve, sep } from 'node:path';

/**
 * The HTTP side of `edgewise view`, on 127.0.0.1 only:
 *   /            the built viewer (static files)
 *   /data/…      files of the opened run or sweep folder (read-only, never outside it)
 *   /api/source  what is open: { label, recipe }
 *   /api/list    paths of the report.json and sweep.json files below the folder
 *   /recipe.json the recipe given with --recipe, for the live mode
 */
export interface ViewServerOptions {
  dataDir: string;
  viewerDir: string;
  recipePath?: string | null;
  port?: number;
}

const TYPES: Record<string, string> = {
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.mjs': 'text/javascript; charset=utf-8',
  '.css': 'text/css; charset=utf-8',
  '.json': 'application/json; charset=utf-8',
  '.csv': 'text/csv; charset=utf-8',
  '.svg': 'image/svg+xml',
  '.npy': 'application/octet-stream',
  '.png': 'image/png',
  '.txt': 'text/plain; charset=utf-8',
};

/** Depth of folders searched for run folders by /api/list. */
const LIST_DEPTH = 3;

/** A path inside root for a URL path, or null if it would leave root (also through links). */
export function resolveInside(root: string, urlPath: string): string | null {
  let decoded: string;
  try {
    decoded = decodeURIComponent(urlPath);
  } catch {
    return null;
  }
  if (decoded.includes('\0')) return null;
  const base = realpathSync(root);
  const path = resolve(base, `.${sep}${decoded.replace(/^\/+/, '')}`);
  if (path !== base && !path.startsWith(base + sep)) return null;
  if (existsSync(path)) {
    const real = realpathSync(path);
    if (real !== base && !real.startsWith(base + sep)) return null;
  }
  return path;
}

export function listResults(root: string): string[] {
  const out: string[] = [];
  const walk = (dir: string, depth: number) => {
    let entries;
    try {
      entries = readdirSync(dir, { withFileTypes: true });
    } catch {
      return;
    }
    for (const e of entries) {
      if (e.name.startsWith('.') || e.name === 'node_modules') continue;
      const p = join(dir, e.name);
      if (e.isDirectory() && depth < LIST_DEPTH) walk(p, depth + 1);
      else if (e.isFile() && (e.name === 'report.json' || e.name === 'sweep.json')) out.push(relative(root, p).split(sep).join('/'));
    }
  };
  walk(root, 0);
  return out.sort();
}

function send(res: ServerResponse, status: number, body: string, type = 'text/plain; charset=utf-8'): void {
  res.writeHead(status, { 'content-type': type, 'cache-control': 'no-store', 'x-content-type-options': 'nosniff' });
  res.end(body);
}

function sendFile(res: ServerResponse, path: string, cache: boolean): void {
  let st;
  try {
    st = statSync(path);
  } catch {
    send(res, 404, 'not found');
    return;
  }
  if (!st.isFile()) {
    send(res, 404, 'not found');
    return;
  }
  res.writeHead(200, {
    'content-type': TYPES[extname(path).toLowerCase()] ?? 'application/octet-stream',
    'content-length': st.size,
    'cache-control': cache ? 'max-age=3600' : 'no-store',
    'x-content-type-options': 'nosniff',
  });
  createReadStream(path).on('error', () => res.destroy()).pipe(res);
}

export function handler(options: ViewServerOptions) {
  const dataDir = resolve(options.dataDir);
  const viewerDir = resolve(options.viewerDir);
  return (req: IncomingMessage, res: ServerResponse) => {
    if (req.method !== 'GET' && req.method !== 'HEAD') {
      send(res, 405, 'only GET');
      return;
    }
    const url = new URL(req.url ?? '/', 'http://127.0.0.1');
    const path = url.pathname;
    if (path === '/api/source') {
      send(res, 200, JSON.stringify({ label: options.dataDir, recipe: Boolean(options.recipePath) }), TYPES['.json']);
    } else if (path === '/api/list') {
      send(res, 200, JSON.stringify(listResults(dataDir)), TYPES['.json']);
    } else if (path === '/recipe.json') {
      if (options.recipePath) sendFile(res, resolve(options.recipePath), false);
      else send(res, 404, 'no recipe given (edgewise view DIR --recipe FILE)');
    } else if (path.startsWith('/data/')) {
      const file = resolveInside(dataDir, path.slice('/data/'.length));
      if (file === null) send(res, 403, 'outside the opened folder');
      else sendFile(res, file, false);
    } else {
      const file = resolveInside(viewerDir, path === '/' ? 'index.html' : path);
      if (file === null) send(res, 403, 'outside the viewer');
      else sendFile(res, file, path.startsWith('/assets/'));
    }
  };
}

/** Starts the server on 127.0.0.1; resolves with it and its address once listening. */
export function startViewServer(options: ViewServerOptions): Promise<{ server: Server; url: string }> {
  const server = createServer(handler(options));
  return new Promise((resolvePromise, reject) => {
    server.once('error', reject);
    server.listen(options.port ?? 0, '127.0.0.1', () => {
      const { port } = server.address() as AddressInfo;
      resolvePromise({ server, url: `http://127.0.0.1:${port}/` });
    });
  });
}
