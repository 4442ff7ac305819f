// Static files of the built renderer and the headers they go out with, shared by browser mode
// (main/serve.ts) and the Electron app protocol (main/electron.ts).
import { realpath, stat } from 'node:fs/promises';
import path from 'node:path';

/** Content-Security-Policy of every response (renderer pages and API answers alike).
 *  style-src allows inline styles because the renderer shows the day sheet (inline CSS, no
 *  scripts) in a sandboxed srcdoc frame, which inherits this policy; scripts stay 'self' only. */
export const CONTENT_SECURITY_POLICY = [
  "default-src 'self'",
  "script-src 'self'",
  "style-src 'self' 'unsafe-inline'",
  "frame-src 'self' about: blob:",
  "connect-src 'self'",
  "img-src 'self' data: blob:",
  "font-src 'self'",
  "worker-src 'self' blob:",
  "object-src 'none'",
  "base-uri 'none'",
  "form-action 'none'",
  "frame-ancestors 'none'",
].join('; ');

export const SECURITY_HEADERS: Record<string, string> = {
  'Content-Security-Policy': CONTENT_SECURITY_POLICY,
  'X-Content-Type-Options': 'nosniff',
  'X-Frame-Options': 'DENY',
  'Referrer-Policy': 'no-referrer',
  'Cross-Origin-Opener-Policy': 'same-origin',
  'Cross-Origin-Resource-Policy': 'same-origin',
};

export const MIME: Record<string, string> = {
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.mjs': 'text/javascript; charset=utf-8',
  '.css': 'text/css; charset=utf-8',
  '.json': 'application/json; charset=utf-8',
  '.map': 'application/json; charset=utf-8',
  '.svg': 'image/svg+xml',
  '.png': 'image/png',
  '.ico': 'image/x-icon',
  '.woff2': 'font/woff2',
  '.woff': 'font/woff',
  '.wasm': 'application/wasm',
  '.txt': 'text/plain; charset=utf-8',
};

/** Map a URL path to a file under root, or null when it would leave root (or is not a plain path). */
export async function resolveStatic(root: string, urlPath: string): Promise<string | null> {
  let decoded: string;
  try {
    decoded = decodeURIComponent(urlPath);
  } catch {
    return null;
  }
  if (decoded.includes('\0') || decoded.includes('\\')) return null;
  const segs = decoded.split('/').filter((s) => s !== '');
  if (segs.some((s) => s === '..' || s === '.' || s.startsWith('.'))) return null;
  const rel = segs.length === 0 ? 'index.html' : segs.join('/');
  const file = path.resolve(root, rel);
  const inside = (p: string, base: string) => {
    const r = path.relative(base, p);
    return r !== '' && !r.startsWith('..') && !path.isAbsolute(r);
  };
  if (!inside(file, root)) return null;
  try {
    const [realRoot, realFile] = await Promise.all([realpath(root), realpath(file)]);
    if (!inside(realFile, realRoot)) return null;
    const s = await stat(realFile);
    return s.isFile() ? realFile : null;
  } catch {
    return null;
  }
}

