// Browser mode (main/serve.ts): token, Host and Origin checks, static files without traversal,
// the CSP header, body limits, and server-sent progress events during an import.
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { request, type IncomingHttpHeaders } from 'node:http';
import { tmpdir } from 'node:os';
import path from 'node:path';

vi.mock('electron', () => {
  throw new Error('browser mode must not import electron');
});

import { CONTENT_SECURITY_POLICY, startBrowserServer, type BrowserServer } from '../main/serve';
import { decodeWire, encodeWire } from '../main/wire';
import { writeSessionFolder } from '../main/logwriter';
import { httpApi } from '../renderer/bridge';
import { ContractFailure } from '../main/contract';
import { miniRuns, miniSetup } from './helpers/mini-session';
import { dbHolds } from './helpers/robust';

let dir: string;
let folder: string;
let server: BrowserServer;
const TOKEN = 'x'.repeat(43);

interface Answer { status: number; headers: IncomingHttpHeaders; body: string }

function send(opts: { method?: string; path: string; headers?: Record<string, string>; body?: string; port?: number }): Promise<Answer> {
  return new Promise((resolve, reject) => {
    const headers: Record<string, string> = { Host: `127.0.0.1:${server.port}`, ...(opts.headers ?? {}) };
    if (opts.body !== undefined) headers['Content-Length'] = String(Buffer.byteLength(opts.body));
    const req = request({ host: '127.0.0.1', port: opts.port ?? server.port, method: opts.method ?? 'GET', path: opts.path, headers }, (res) => {
      let body = '';
      res.setEncoding('utf8');
      res.on('data', (c: string) => (body += c));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, headers: res.headers, body }));
    });
    req.on('error', reject);
    if (opts.body !== undefined) req.write(opts.body);
    req.end();
  });
}

const api = (channel: string, payload: unknown, headers: Record<string, string> = {}) =>
  send({
    method: 'POST', path: `/api/${channel}`, body: encodeWire(payload),
    headers: { 'Content-Type': 'application/json', 'x-rakeline-token': TOKEN, ...headers },
  });

beforeAll(async () => {
  dir = mkdtempSync(path.join(tmpdir(), 'rakeline-serve-'));
  const renderer = path.join(dir, 'www');
  mkdirSync(path.join(renderer, 'assets'), { recursive: true });
  writeFileSync(path.join(renderer, 'index.html'), '<!doctype html><title>Rakeline</title>');
  writeFileSync(path.join(renderer, 'assets', 'app.js'), 'console.log(1)');
  writeFileSync(path.join(dir, 'secret.txt'), 'TOP-SECRET');
  folder = path.join(dir, 'session');
  const setup = miniSetup();
  const mini = miniRuns(setup, { dataRuns: 3 });
  writeSessionFolder(folder, setup, mini.index, mini.runs);
  server = await startBrowserServer({
    dbFile: path.join(dir, 'serve.sqlite'), rendererDir: renderer, token: TOKEN, maxBodyBytes: 64 * 1024, progressIntervalMs: 0,
  });
});
afterAll(async () => {
  await server?.close();
  rmSync(dir, { recursive: true, force: true });
});

describe('browser mode access control', () => {
  it('binds to 127.0.0.1 and gives a URL carrying the token in the fragment', () => {
    expect(server.url).toBe(`http://127.0.0.1:${server.port}/#token=${TOKEN}`);
  });

  it('a random 32-byte token per launch when none is given', async () => {
    const a = await startBrowserServer({ dbFile: path.join(dir, 'a.sqlite'), rendererDir: dir });
    const b = await startBrowserServer({ dbFile: path.join(dir, 'b.sqlite'), rendererDir: dir });
    try {
      expect(Buffer.from(a.token, 'base64url')).toHaveLength(32);
      expect(a.token).not.toBe(b.token);
    } finally {
      await a.close();
      await b.close();
    }
  });

  it('answers a call with the right token', async () => {
    const r = await api('app.info', {});
    expect(r.status).toBe(200);
    expect((decodeWire(r.body) as { result: { mode: string } }).result.mode).toBe('browser');
  });

  it('refuses a call without the token or with a wrong one (401)', async () => {
    const none = await send({ method: 'POST', path: '/api/app.info', body: '{}', headers: { 'Content-Type': 'application/json' } });
    expect(none.status).toBe(401);
    const wrong = await api('app.info', {}, { 'x-rakeline-token': 'y'.repeat(43) });
    expect(wrong.status).toBe(401);
    const short = await api('app.info', {}, { 'x-rakeline-token': 'x' });
    expect(short.status).toBe(401);
    const sse = await send({ path: '/api/events?token=nope' });
    expect(sse.status).toBe(401);
  });

  it('refuses another Origin (403) even with the token, and accepts our own', async () => {
    expect((await api('app.info', {}, { Origin: 'http://evil.example' })).status).toBe(403);
    expect((await api('app.info', {}, { Origin: `http://127.0.0.1:${server.port + 1}` })).status).toBe(403);
    expect((await api('app.info', {}, { Origin: 'null' })).status).toBe(403);
    expect((await api('app.info', {}, { Origin: `http://127.0.0.1:${server.port}` })).status).toBe(200);
    expect((await api('app.info', {}, { Origin: `http://localhost:${server.port}` })).status).toBe(200);
  });

  it('refuses a foreign Host header (DNS rebinding) with 403', async () => {
    expect((await api('app.info', {}, { Host: `evil.example:${server.port}` })).status).toBe(403);
    expect((await api('app.info', {}, { Host: '127.0.0.1' })).status).toBe(403);
    expect((await send({ path: '/', headers: { Host: 'rebind.example' } })).status).toBe(403);
  });

  it('refuses cross-site fetches, wrong methods, non-JSON bodies and oversized bodies', async () => {
    expect((await api('app.info', {}, { 'Sec-Fetch-Site': 'cross-site' })).status).toBe(403);
    expect((await send({ path: '/api/app.info', headers: { 'x-rakeline-token': TOKEN } })).status).toBe(405);
    const form = await send({
      method: 'POST', path: '/api/app.info', body: 'a=1', headers: { 'x-rakeline-token': TOKEN, 'Content-Type': 'application/x-www-form-urlencoded' },
    });
    expect(form.status).toBe(415);
    const big = await api('sessions.importFiles', { files: [{ name: 'setup.json', text: 'x'.repeat(100 * 1024) }] });
    expect(big.status).toBe(413);
  });

  it('answers a malformed payload with 400 naming the channel and the field', async () => {
    const r = await api('sessions.get', { sessionId: 'one' });
    expect(r.status).toBe(400);
    const { error } = decodeWire(r.body) as { error: { kind: string; message: string } };
    expect(error.kind).toBe('validation');
    expect(error.message).toContain('"sessions.get"');
    expect(error.message).toContain('sessionId');
    const broken = await send({ method: 'POST', path: '/api/app.info', body: '{', headers: { 'Content-Type': 'application/json', 'x-rakeline-token': TOKEN } });
    expect(broken.status).toBe(400);
  });
});

describe('static files', () => {
  it('serves the renderer with the strict Content-Security-Policy', async () => {
    const r = await send({ path: '/' });
    expect(r.status).toBe(200);
    expect(r.headers['content-type']).toMatch(/^text\/html/);
    const csp = String(r.headers['content-security-policy']);
    expect(csp).toBe(CONTENT_SECURITY_POLICY);
    for (const d of ["default-src 'self'", "script-src 'self'", "connect-src 'self'", "object-src 'none'", "frame-ancestors 'none'", "worker-src 'self' blob:"]) {
      expect(csp).toContain(d);
    }
    expect(csp).not.toMatch(/script-src[^;]*unsafe/);
    expect(r.headers['x-content-type-options']).toBe('nosniff');
    const js = await send({ path: '/assets/app.js' });
    expect(js.status).toBe(200);
    expect(js.headers['content-type']).toMatch(/javascript/);
    expect(js.headers['content-security-policy']).toBe(CONTENT_SECURITY_POLICY);
    expect((await api('app.info', {})).headers['content-security-policy']).toBe(CONTENT_SECURITY_POLICY);
  });

  it('refuses directory traversal in every spelling', async () => {
    for (const p of ['/../secret.txt', '/%2e%2e/secret.txt', '/..%2fsecret.txt', '/assets/../../secret.txt', '/assets/%2e%2e%2f%2e%2e%2fsecret.txt', '/..%5csecret.txt', '/%00index.html', '/%E0%A4%A']) {
      const r = await send({ path: p });
      expect(r.status, p).not.toBe(200);
      expect(r.body, p).not.toContain('TOP-SECRET');
    }
    expect((await send({ path: '/nothing-here.js' })).status).toBe(404);
  });
});

describe('server-sent events', () => {
  it('delivers progress events of an import while it runs', async () => {
    const events: { event: string; data: unknown }[] = [];
    let resolveConnected!: () => void;
    const connected = new Promise<void>((r) => (resolveConnected = r));
    const sse = request({ host: '127.0.0.1', port: server.port, path: `/api/events?token=${TOKEN}`, headers: { Host: `127.0.0.1:${server.port}` } });
    let buf = '';
    sse.on('response', (res) => {
      expect(res.statusCode).toBe(200);
      expect(res.headers['content-type']).toMatch(/^text\/event-stream/);
      res.setEncoding('utf8');
      res.on('data', (c: string) => {
        buf += c;
        if (buf.includes(': connected')) resolveConnected();
        let cut: number;
        while ((cut = buf.indexOf('\n\n')) >= 0) {
          const frame = buf.slice(0, cut);
          buf = buf.slice(cut + 2);
          const ev = /^event: (.+)$/m.exec(frame)?.[1];
          const data = /^data: (.+)$/m.exec(frame)?.[1];
          if (ev && data) events.push({ event: ev, data: decodeWire(data) });
        }
      });
    });
    sse.end();
    await connected;
    try {
      const r = await api('sessions.importFolder', { folder, taskId: 'sse-task' });
      expect(r.status).toBe(200);
      const { result } = decodeWire(r.body) as { result: { reduced: number } };
      expect(result.reduced).toBe(3);
      // The answer came after the events were written on the open stream; give the socket a
      // moment to hand them over (bounded wait, no timing assertion).
      const last = () => events.some((e) => e.event === 'progress' && (e.data as { phase: string; done: number; total: number }).phase === 'reduce'
        && (e.data as { done: number; total: number }).done === (e.data as { total: number }).total);
      for (let i = 0; i < 250 && !last(); i++) await new Promise((res) => setTimeout(res, 20));
      const progress = events.filter((e) => e.event === 'progress').map((e) => e.data as { taskId: string; phase: string; done: number; total: number });
      expect(progress.length).toBeGreaterThan(0);
      expect(progress.every((p) => p.taskId === 'sse-task')).toBe(true);
      expect(progress.some((p) => p.phase === 'parse')).toBe(true);
      expect(progress.some((p) => p.phase === 'reduce' && p.done === p.total && p.total === 3)).toBe(true);
    } finally {
      sse.destroy();
    }
  });

  // A wake-less session (no rake probes): the reduction itself gives cd = NaN, nothing edited.
  describe('results over the HTTP bridge (main verifies what the page asks it to store)', () => {
    let sessionId: number;
    let genuine: Record<string, unknown> & { corrected: { cl: number; cd: number }; run: number };
    const dbFile = () => path.join(dir, 'serve.sqlite');
    beforeAll(async () => {
      const wakeless = path.join(dir, 'wakeless');
      const setup = miniSetup({ rakeProbes: 0 });
      const mini = miniRuns(setup, { dataRuns: 3, seed: 7 });
      writeSessionFolder(wakeless, setup, mini.index, mini.runs);
      const imp = decodeWire((await api('sessions.importFolder', { folder: wakeless })).body) as { result: { report: { sessionId: number } } };
      sessionId = imp.result.report.sessionId;
      const run = mini.index.find((i) => i.kind === 'data')!.run;
      const got = decodeWire((await api('runs.get', { sessionId, run })).body) as { result: { result: typeof genuine } };
      genuine = got.result.result;
    });

    it('carries a genuinely NaN cd (wake-less run) from the store to the page', () => {
      expect(Number.isNaN(genuine.corrected.cd)).toBe(true);
      expect(Number.isFinite(genuine.corrected.cl)).toBe(true);
    });

    it('refuses a hostile page\'s altered cl, naming the run and the field; the store is unchanged', async () => {
      const before = dbHolds(dbFile());
      const hostile = structuredClone(genuine);
      hostile.corrected.cl += 0.05;
      const res = await api('runs.saveResults', { sessionId, results: [hostile] });
      expect(res.status).toBe(400); // a validation error envelope
      const answer = decodeWire(res.body) as { error: { kind: string; message: string } };
      expect(answer.error.kind).toBe('validation');
      expect(answer.error.message).toContain(`run ${genuine.run}: corrected.cl: `);
      expect(answer.error.message).toContain('nothing was stored');
      // The same with a hand-made NaN where the reduction gives a number, and a dropped flag.
      const nan = structuredClone(genuine);
      nan.corrected.cl = NaN;
      const e2 = decodeWire((await api('runs.saveResults', { sessionId, results: [nan] })).body) as { error: { message: string } };
      expect(e2.error.message).toContain('corrected.cl: NaN where the reduction gives');
      expect(dbHolds(dbFile())).toEqual(before);
    });

    it('accepts the genuine result (NaN cd included) and stores main\'s own reduction', async () => {
      const hist = (decodeWire((await api('runs.get', { sessionId, run: genuine.run })).body) as { result: { history: unknown[] } }).result.history.length;
      const res = decodeWire((await api('runs.saveResults', { sessionId, results: [genuine] })).body) as { result: { saved: number[] } };
      expect(res.result.saved).toHaveLength(1);
      const back = decodeWire((await api('runs.get', { sessionId, run: genuine.run })).body) as { result: { history: unknown[]; result: typeof genuine } };
      expect(back.result.history).toHaveLength(hist + 1);
      expect(Number.isNaN(back.result.result.corrected.cd)).toBe(true);
      expect(back.result.result.corrected.cl).toBe(genuine.corrected.cl);
    });
  });
});

describe('renderer bridge over HTTP (renderer/bridge.ts)', () => {
  it('calls through the server and turns error answers into ContractFailure', async () => {
    const client = httpApi(TOKEN, `http://127.0.0.1:${server.port}`);
    const info = await client.call('app.info', {});
    expect(info.mode).toBe('browser');
    const err = await client.call('sessions.get', { sessionId: 4242 }).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(ContractFailure);
    expect((err as ContractFailure).detail.kind).toBe('not-found');
    const bad = await client.call('sessions.get', { sessionId: -1 } as never).catch((e: unknown) => e);
    expect((bad as ContractFailure).detail.message).toContain('sessionId');
    const stranger = httpApi('z'.repeat(43), `http://127.0.0.1:${server.port}`);
    const refused = await stranger.call('app.info', {}).catch((e: unknown) => e);
    expect(refused).toBeInstanceOf(ContractFailure);
    expect((refused as ContractFailure).message).toContain('401');
  });
});

describe('demo session on first start', () => {
  it('imports the demo folder once and reports its id', async () => {
    const db = path.join(dir, 'demo.sqlite');
    const first = await startBrowserServer({ dbFile: db, rendererDir: dir, demoFolder: folder });
    const id = first.demoSessionId;
    expect(id).not.toBeNull();
    expect(first.store.listRuns(id!).filter((r) => r.result).length).toBe(3);
    await first.close();
    const second = await startBrowserServer({ dbFile: db, rendererDir: dir, demoFolder: folder, token: TOKEN });
    try {
      expect(second.demoSessionId).toBe(id);
      expect(second.store.listSessions()).toHaveLength(1);
      expect(second.store.auditTrail(id!).filter((a) => a.action.includes('import')).length).toBeLessThanOrEqual(1);
    } finally {
      await second.close();
    }
  });
});
