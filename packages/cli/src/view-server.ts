import { createReadStream, existsSync, readdirSync, readFileSync, realpathSync, statSync } from 'node:fs';
import { createServer, type IncomingMessage, type Server, type ServerResponse } from 'node:http';
import type { AddressInfo } from 'node:net';
import { extname, join, relative, resolve, sep } from 'node:path';
import { InputError } from './errors.ts';

/**
 * The HTTP side of `edgewise view`, on 127.0.0.1 only:
 *   /            the built viewer (static files)
 *   /data/…      files of the opened run or sweep folder (read-only, never outside it)
 *   /api/source  what is open: { label, recipe }
 *   /api/list    paths of the report.json, sweep.json and recipe.json files below the folder
 *   /api/files?p=…&p=…  several files of the folder in one response (see sendBatch): a
 *                sweep's runs are many small files, and one request each costs more than
 *                the bytes
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
      else if (e.isFile() && (e.name === 'report.json' || e.name === 'sweep.json' || e.name === 'recipe.json')) out.push(relative(root, p).split(sep).join('/'));
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

/** Most files one batch request may ask for. */
const BATCH_LIMIT = 64;

/**
 * A batch of files: a little-endian u32 byte length, a JSON index of
 * [{ path, size } | { path, error }] in the order asked, then the files' bytes one after
 * another, each padded to a multiple of 8 bytes so typed arrays can view them in place.
 */
function sendBatch(res: ServerResponse, dataDir: string, paths: string[]): void {
  if (paths.length === 0 || paths.length > BATCH_LIMIT) {
    send(res, 400, `ask for 1 to ${BATCH_LIMIT} files`);
    return;
  }
  const index: ({ path: string; size: number } | { path: string; error: string })[] = [];
  const bodies: Buffer[] = [];
  for (const path of paths) {
    const file = resolveInside(dataDir, path);
    if (file === null) {
      index.push({ path, error: 'outside the opened folder' });
      continue;
    }
    try {
      if (!statSync(file).isFile()) throw new Error('not a file');
      const body = readFileSync(file);
      index.push({ path, size: body.length });
      bodies.push(body);
      const pad = (8 - (body.length % 8)) % 8;
      if (pad) bodies.push(Buffer.alloc(pad));
    } catch {
      index.push({ path, error: 'not found' });
    }
  }
  let head = Buffer.from(JSON.stringify(index));
  // Pad the index so the first file starts on a multiple of 8 too.
  const headPad = (8 - ((4 + head.length) % 8)) % 8;
  head = Buffer.concat([head, Buffer.from(' '.repeat(headPad))]);
  const length = Buffer.alloc(4);
  length.writeUInt32LE(head.length, 0);
  const total = 4 + head.length + bodies.reduce((n, b) => n + b.length, 0);
  res.writeHead(200, { 'content-type': 'application/octet-stream', 'content-length': total, 'cache-control': 'no-store', 'x-content-type-options': 'nosniff' });
  res.write(length);
  res.write(head);
  for (const b of bodies) res.write(b);
  res.end();
}

/**
 * Whether a request's Host header names this server as the browser reached it: 127.0.0.1 or
 * localhost with the served port. Any other name (a domain an attacker's DNS points at
 * 127.0.0.1, "DNS rebinding") would let a page from elsewhere read the opened folder.
 */
export function hostAllowed(host: string | undefined, port: number): boolean {
  return host === `127.0.0.1:${port}` || host?.toLowerCase() === `localhost:${port}`;
}

/** `port` gives the port the server listens on (known once it listens); every request must name it in its Host header. */
export function handler(options: ViewServerOptions, port: () => number) {
  const dataDir = resolve(options.dataDir);
  const viewerDir = resolve(options.viewerDir);
  return (req: IncomingMessage, res: ServerResponse) => {
    if (!hostAllowed(req.headers.host, port())) {
      send(res, 403, `this server answers only at 127.0.0.1:${port()} or localhost:${port()}`);
      return;
    }
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
    } else if (path === '/api/files') {
      sendBatch(res, dataDir, url.searchParams.getAll('p'));
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
  let listening = 0;
  const server = createServer(handler(options, () => listening));
  return new Promise((resolvePromise, reject) => {
    server.once('error', (e: NodeJS.ErrnoException) => {
      const asked = options.port ?? 0;
      if (e.code === 'EADDRINUSE') reject(new InputError(`--port ${asked}: is in use by another program; choose another port, or leave out --port for any free one`));
      else if (e.code === 'EACCES') reject(new InputError(`--port ${asked}: may not be opened by this user (ports below 1024 need privileges); choose a port from 1024 to 65535, or leave out --port`));
      else reject(e);
    });
    server.listen(options.port ?? 0, '127.0.0.1', () => {
      listening = (server.address() as AddressInfo).port;
      resolvePromise({ server, url: `http://127.0.0.1:${listening}/` });
    });
  });
}
