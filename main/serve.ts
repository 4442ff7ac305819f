// Browser mode: the same handlers as the desktop app, behind a small HTTP server on 127.0.0.1.
//   GET  /, /assets/...          the built renderer (dist/renderer), strict CSP, no traversal
//   POST /api/<channel>          JSON body (main/wire.ts encoding), header x-rakeline-token
//   GET  /api/events?token=...   server-sent events (progress, watch.run)
// A random 32-byte token per launch guards every /api request; Host and Origin must be our own
// address (no DNS rebinding, no cross-site requests). Run as a script (`npm run serve`) it opens
// the db in the user data folder, imports the demo session on first start and prints the URL.
import { createServer, type IncomingMessage, type ServerResponse } from 'node:http';
import { randomBytes, timingSafeEqual } from 'node:crypto';
import { existsSync } from 'node:fs';
import { readFile } from 'node:fs/promises';
import { homedir } from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { Store } from './store';
import { createHandlers, dispatch, disposeHandlers, ensureDemoSession, progressEmitter, type Emit, type Handlers } from './handlers';
import { encodeWire, decodeWire } from './wire';
import { repairOnStart } from './repair';
import { CONTENT_SECURITY_POLICY, SECURITY_HEADERS, MIME, resolveStatic } from './static';

export { CONTENT_SECURITY_POLICY };
import type { ContractError } from './contract';

export interface BrowserServerOptions {
  dbFile: string;
  /** 0 (default) = any free port. */
  port?: number;
  rendererDir: string;
  /** Import this session folder on start if the db lacks it. */
  demoFolder?: string;
  /** Fixed token (tests); default: 32 random bytes per launch. */
  token?: string;
  /** Largest accepted request body, bytes (default 256 MiB). */
  maxBodyBytes?: number;
  /** Passed to the handlers (tests). */
  progressIntervalMs?: number;
  watchStabilityMs?: number;
}

export interface BrowserServer {
  /** http://127.0.0.1:<port>/#token=... */
  url: string;
  token: string;
  port: number;
  /** The open store and handlers (for tests and the start script). */
  store: Store;
  handlers: Handlers;
  demoSessionId: number | null;
  close(): Promise<void>;
}

const STATUS_OF: Record<ContractError['kind'], number> = {
  validation: 400, input: 422, 'not-found': 404, unsupported: 501, busy: 409, internal: 500,
};

class HttpError extends Error {
  constructor(readonly status: number, message: string) {
    super(message);
  }
}

function sendText(res: ServerResponse, status: number, text: string): void {
  res.writeHead(status, { ...SECURITY_HEADERS, 'Content-Type': 'text/plain; charset=utf-8', 'Cache-Control': 'no-store' });
  res.end(text);
}

function sendJson(res: ServerResponse, status: number, body: unknown): void {
  res.writeHead(status, { ...SECURITY_HEADERS, 'Content-Type': 'application/json; charset=utf-8', 'Cache-Control': 'no-store' });
  res.end(encodeWire(body));
}

function sameToken(given: string | null | undefined, token: string): boolean {
  if (!given) return false;
  const a = Buffer.from(given);
  const b = Buffer.from(token);
  return a.length === b.length && timingSafeEqual(a, b);
}

function readBody(req: IncomingMessage, limit: number): Promise<string> {
  return new Promise((resolve, reject) => {
    const declared = Number(req.headers['content-length']);
    if (Number.isFinite(declared) && declared > limit) {
      reject(new HttpError(413, `Request body larger than ${limit} bytes.`));
      return;
    }
    const chunks: Buffer[] = [];
    let size = 0;
    req.on('data', (c: Buffer) => {
      size += c.length;
      if (size > limit) {
        reject(new HttpError(413, `Request body larger than ${limit} bytes.`));
        req.pause();
        return;
      }
      chunks.push(c);
    });
    req.on('end', () => resolve(Buffer.concat(chunks).toString('utf8')));
    req.on('error', reject);
  });
}

export async function startBrowserServer(opts: BrowserServerOptions): Promise<BrowserServer> {
  const token = opts.token ?? randomBytes(32).toString('base64url');
  const limit = opts.maxBodyBytes ?? 256 * 1024 * 1024;
  const rendererDir = path.resolve(opts.rendererDir);
  const store = Store.open(opts.dbFile);

  const clients = new Set<ServerResponse>();
  const emit: Emit = (event, data) => {
    const frame = `event: ${event}\ndata: ${encodeWire(data)}\n\n`;
    for (const c of clients) c.write(frame);
  };

  let demoSessionId: number | null = null;
  if (opts.demoFolder) {
    demoSessionId = await ensureDemoSession(store, opts.demoFolder, {
      actor: 'rakeline', onProgress: progressEmitter(emit, 'demo', opts.progressIntervalMs),
    });
  }
  await repairOnStart(store, 'rakeline');
  const handlers = createHandlers({
    store, mode: 'browser', emit, demoSessionId,
    progressIntervalMs: opts.progressIntervalMs, watchStabilityMs: opts.watchStabilityMs,
  });

  let port = 0;
  const allowedHosts = () => new Set([`127.0.0.1:${port}`, `localhost:${port}`]);
  const allowedOrigins = () => new Set([`http://127.0.0.1:${port}`, `http://localhost:${port}`]);

  const handle = async (req: IncomingMessage, res: ServerResponse) => {
    const host = req.headers.host ?? '';
    if (!allowedHosts().has(host.toLowerCase())) return sendText(res, 403, 'Forbidden: unexpected Host header.');
    const origin = req.headers.origin;
    if (origin !== undefined && !allowedOrigins().has(origin)) return sendText(res, 403, 'Forbidden: cross-origin request.');
    if (req.headers['sec-fetch-site'] === 'cross-site') return sendText(res, 403, 'Forbidden: cross-site request.');

    const url = new URL(req.url ?? '/', `http://${host}`);
    const method = req.method ?? 'GET';

    if (url.pathname === '/api' || url.pathname.startsWith('/api/')) {
      if (url.pathname === '/api/events') {
        if (method !== 'GET') return sendText(res, 405, 'Method not allowed.');
        if (!sameToken(url.searchParams.get('token'), token)) return sendText(res, 401, 'Unauthorized: missing or wrong token.');
        res.writeHead(200, {
          ...SECURITY_HEADERS, 'Content-Type': 'text/event-stream; charset=utf-8', 'Cache-Control': 'no-store', Connection: 'keep-alive',
        });
        res.write(': connected\n\n');
        clients.add(res);
        const ping = setInterval(() => res.write(': ping\n\n'), 20_000);
        req.on('close', () => {
          clearInterval(ping);
          clients.delete(res);
        });
        return;
      }
      const given = req.headers['x-rakeline-token'];
      if (!sameToken(Array.isArray(given) ? given[0] : given, token)) return sendText(res, 401, 'Unauthorized: missing or wrong token.');
      if (method !== 'POST') return sendText(res, 405, 'Method not allowed: use POST.');
      const type = (req.headers['content-type'] ?? '').split(';')[0].trim().toLowerCase();
      if (type !== 'application/json') return sendText(res, 415, 'Unsupported media type: send application/json.');
      const channel = decodeURIComponent(url.pathname.slice('/api/'.length));
      const text = await readBody(req, limit);
      let payload: unknown;
      try {
        payload = text.trim() === '' ? {} : decodeWire(text);
      } catch {
        return sendJson(res, 400, { error: { kind: 'validation', message: `Invalid payload for "${channel}": the body is not valid JSON.` } });
      }
      const answer = await dispatch(handlers, channel, payload);
      return sendJson(res, 'error' in answer ? STATUS_OF[answer.error.kind] : 200, answer);
    }

    if (method !== 'GET' && method !== 'HEAD') return sendText(res, 405, 'Method not allowed.');
    const file = await resolveStatic(rendererDir, url.pathname);
    if (!file) {
      if (url.pathname === '/favicon.ico') {
        res.writeHead(204, { ...SECURITY_HEADERS, 'Cache-Control': 'max-age=86400' });
        return res.end();
      }
      return sendText(res, 404, 'Not found.');
    }
    const body = await readFile(file);
    const immutable = /[\\/]assets[\\/]/.test(file);
    res.writeHead(200, {
      ...SECURITY_HEADERS,
      'Content-Type': MIME[path.extname(file).toLowerCase()] ?? 'application/octet-stream',
      'Content-Length': String(body.length),
      'Cache-Control': immutable ? 'public, max-age=31536000, immutable' : 'no-cache',
    });
    res.end(method === 'HEAD' ? undefined : body);
  };

  const server = createServer((req, res) => {
    handle(req, res).catch((e: unknown) => {
      if (res.headersSent) {
        res.destroy();
        return;
      }
      if (e instanceof HttpError) {
        res.setHeader('Connection', 'close');
        sendText(res, e.status, e.message);
      } else {
        console.error('rakeline: request failed:', e);
        sendText(res, 500, 'Internal error.');
      }
    });
  });
  server.headersTimeout = 60_000;
  server.requestTimeout = 0; // long imports

  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(opts.port ?? 0, '127.0.0.1', () => resolve());
  });
  const addr = server.address();
  port = typeof addr === 'object' && addr ? addr.port : 0;

  return {
    url: `http://127.0.0.1:${port}/#token=${token}`,
    token,
    port,
    store,
    handlers,
    demoSessionId,
    async close() {
      for (const c of clients) c.end();
      clients.clear();
      await disposeHandlers(handlers);
      await new Promise<void>((resolve) => {
        server.close(() => resolve());
        server.closeAllConnections();
      });
      store.close();
    },
  };
}

// ---------------------------------------------------------------------------------------------
// Script entry: `npm run serve` (after `node scripts/build.mjs --renderer`).

/** Default db file: the OS user data folder of Rakeline. */
export function defaultDbFile(): string {
  const home = homedir();
  let base: string;
  if (process.platform === 'win32') base = process.env.APPDATA ?? path.join(home, 'AppData', 'Roaming');
  else if (process.platform === 'darwin') base = path.join(home, 'Library', 'Application Support');
  else base = process.env.XDG_DATA_HOME || path.join(home, '.local', 'share');
  return path.join(base, 'Rakeline', 'rakeline.sqlite');
}

/** The repository (or installed package) root: the nearest folder above this module holding a
 *  package.json — main/ from the sources, dist/node/ in the compiled build. */
function findRoot(from: string): string {
  for (let dir = from; ; dir = path.dirname(dir)) {
    if (existsSync(path.join(dir, 'package.json'))) return dir;
    if (path.dirname(dir) === dir) return path.resolve(from, '..');
  }
}
const repoRoot = findRoot(path.dirname(fileURLToPath(import.meta.url)));

/** Write resources/demo/session with the demo generator (in this process) when it is missing. */
export async function ensureDemoFolder(folder = path.join(repoRoot, 'resources', 'demo', 'session')): Promise<string | null> {
  if (existsSync(path.join(folder, 'setup.json'))) return folder;
  try {
    const { writeDemoSession } = await import('../resources/demo/generate');
    writeDemoSession(folder);
  } catch (e) {
    console.error(`rakeline: could not write the demo session to ${folder}: ${e instanceof Error ? e.message : String(e)}`);
    return null;
  }
  return existsSync(path.join(folder, 'setup.json')) ? folder : null;
}

/** Browser mode's command line (`npm run serve`: scripts/serve.mjs runs the compiled build). */
export async function serveMain(argv: string[] = process.argv): Promise<void> {
  const { Command } = await import('commander');
  const program = new Command('rakeline-serve')
    .description('Rakeline in a web browser: a local server on 127.0.0.1 with a per-launch token')
    .option('--db <file>', 'SQLite file', defaultDbFile())
    .option('--port <n>', 'port (0 = any free port)', '0')
    .option('--renderer <dir>', 'built renderer folder', path.join(repoRoot, 'dist', 'renderer'))
    .option('--no-demo', 'do not import the demo session')
    .parse(argv);
  const o = program.opts<{ db: string; port: string; renderer: string; demo: boolean }>();
  const port = Number(o.port);
  if (!Number.isInteger(port) || port < 0 || port > 65535) {
    console.error(`rakeline: --port must be an integer 0–65535, got "${o.port}"`);
    process.exit(2);
  }
  if (!existsSync(path.join(o.renderer, 'index.html'))) {
    console.error(`rakeline: no built renderer in ${o.renderer}; run \`node scripts/build.mjs --renderer\` first.`);
    process.exit(1);
  }
  const { mkdirSync } = await import('node:fs');
  mkdirSync(path.dirname(path.resolve(o.db)), { recursive: true });
  const demoFolder = o.demo ? (await ensureDemoFolder()) ?? undefined : undefined;
  const server = await startBrowserServer({ dbFile: path.resolve(o.db), port, rendererDir: o.renderer, demoFolder });
  const banner = process.env.RAKELINE_SERVE_BANNER ?? 'Rakeline is running in your browser at';
  console.log(`${banner} ${server.url}`);
  let closing = false;
  const stop = () => {
    if (closing) return;
    closing = true;
    server.close().then(() => process.exit(0), () => process.exit(1));
  };
  process.on('SIGINT', stop);
  process.on('SIGTERM', stop);
}

const invokedAs = process.argv[1] ? path.resolve(process.argv[1]) : '';
if (invokedAs === fileURLToPath(import.meta.url) || invokedAs.replace(/\.ts$/, '') === fileURLToPath(import.meta.url).replace(/\.ts$/, '')) {
  serveMain().catch((e: unknown) => {
    console.error(`rakeline: ${e instanceof Error ? e.message : String(e)}`);
    process.exit(1);
  });
}
