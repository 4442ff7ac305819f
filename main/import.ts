// Reading a session folder: setup.json and runs.csv, then every run log streamed in chunks through
// the pure parser (app/log) while its SHA-256 is computed (node:crypto) — a file is never read
// whole, whatever its size. Bad input throws the parser's LogError (file, line, channel, expected).
// importSession / importSessionFolder store run log after run log inside ONE transaction
// (Store.beginImport) as each is read, so memory holds a few run logs, not the session; large
// imports read, parse, average and pack the logs on worker threads (main/importPool.ts) while this
// thread stores them. readSession keeps a whole parsed session in memory (tests, small sources).
import { createReadStream } from 'node:fs';
import { realpath, stat } from 'node:fs/promises';
import { createHash } from 'node:crypto';
import { join, resolve, sep } from 'node:path';
import type { RawRun, RunInfo, Setup } from '../app/types';
import { LogError, isLogError } from '../app/log/errors';
import { parseSetup } from '../app/log/setup';
import { parseRunIndexDetailed } from '../app/log/runIndex';
import {
  INDEX_FILE, SETUP_FILE, missingFileError, parseSessionTexts, planRunFiles, type RunFilePlan,
} from '../app/log/session';
import { isDiskFull, StoreFullError, type ImportProgress, type ImportReport, type ParsedSession, type SourceInfo, type Store } from './store';
import { RunFileReader, type PreparedFile } from './runFile';
import { ImportPool, workersFor } from './importPool';
import { BufferPool } from '../app/bufferPool';

/** Where the files of a session come from (a folder on disk, or anything else that streams). */
export interface SessionSource {
  /** Absolute folder path recorded with the session (null: not a place to remember). */
  folder: string | null;
  /** Size in bytes, or null when there is no such file. */
  size(name: string): Promise<number | null>;
  /** The file's bytes, chunk by chunk. */
  open(name: string): AsyncIterable<Uint8Array>;
  /** Path on disk of a file, when it is one (lets worker threads read it themselves). */
  path?(name: string): string | null;
}

/** A session file that cannot be read where it is named: a symbolic link loop, or a link whose
 *  target lies outside the session folder. readHead turns it into a LogError naming the index
 *  line (or the file itself for setup.json and runs.csv). */
export class SourcePathError extends Error {
  override name = 'SourcePathError';
  constructor(readonly file: string, readonly why: string) {
    super(`${file} ${why}`);
  }
}

/** Files of a folder on disk, read in chunks of `chunkSize` bytes. Each name is followed to its
 *  real path first: a symbolic link loop, or a link that leads out of the folder (to /etc, say),
 *  is refused (SourcePathError) before anything is read; links inside the folder are followed. */
export function folderSource(folder: string, chunkSize = 1 << 20): SessionSource {
  const root = resolve(folder);
  let rootReal: string | null = null;
  const inside = async (name: string): Promise<string | null> => {
    rootReal ??= await realpath(root);
    let real: string;
    try {
      real = await realpath(join(root, name));
    } catch (e) {
      const code = (e as NodeJS.ErrnoException).code;
      if (code === 'ENOENT' || code === 'ENOTDIR') return null;
      if (code === 'ELOOP') throw new SourcePathError(name, 'is a symbolic link loop (a link that leads back to itself)');
      throw e;
    }
    if (real !== rootReal && !real.startsWith(rootReal.endsWith(sep) ? rootReal : rootReal + sep)) {
      throw new SourcePathError(name, `is a link to ${real}, outside the session folder`);
    }
    return real;
  };
  const reals = new Map<string, string>();
  return {
    folder: root,
    async size(name) {
      const real = await inside(name);
      if (real === null) return null;
      try {
        const s = await stat(real);
        if (!s.isFile()) return null;
        reals.set(name, real);
        return s.size;
      } catch (e) {
        if ((e as NodeJS.ErrnoException).code === 'ENOENT' || (e as NodeJS.ErrnoException).code === 'ENOTDIR') return null;
        throw e;
      }
    },
    open(name) {
      return createReadStream(reals.get(name) ?? join(root, name), { highWaterMark: chunkSize });
    },
    path(name) {
      return reals.get(name) ?? join(root, name);
    },
  };
}

/** Largest setup.json / runs.csv read (they are read whole; run logs never are). */
const TEXT_LIMIT = 64 * 1024 * 1024;

export interface ReadOptions {
  /** Read from this source instead of the folder (tests, virtual folders). */
  source?: SessionSource;
}

/** Parse a whole session folder; LogError on bad input. */
export async function readSessionFolder(folder: string, onProgress?: (p: ImportProgress) => void, opts: ReadOptions = {}): Promise<ParsedSession> {
  return readSession(opts.source ?? folderSource(folder), onProgress);
}

/** What is read before any run log: setup, index, the plan of run files and their sizes. */
interface SessionHead {
  setup: Setup;
  index: RunInfo[];
  plans: RunFilePlan[];
  sizes: Map<string, number>;
  bytesTotal: number;
  setupSource: SourceInfo;
  indexSource: SourceInfo;
  warnings: string[];
}

/** src.size(name), a SourcePathError told as a LogError at `where()`'s place (file, line, column). */
async function sizeOf(src: SessionSource, name: string, where: () => LogError): Promise<number | null> {
  try {
    return await src.size(name);
  } catch (e) {
    if (!(e instanceof SourcePathError)) throw e;
    const at = where();
    throw new LogError({
      file: at.file, line: at.line, column: at.column,
      reason: at.file === name ? `${e.why}; expected a file inside the session folder` : `the file "${name}" ${e.why}; expected a file inside the session folder`,
    });
  }
}

async function readHead(src: SessionSource, onProgress?: (p: ImportProgress) => void): Promise<SessionHead> {
  const sources: SourceInfo[] = [];
  const readText = async (name: string, what: string): Promise<string> => {
    const size = await sizeOf(src, name, () => new LogError({ file: name, reason: '' }));
    if (size === null) throw new LogError({ file: name, reason: `the session folder has no ${what} (${name})` });
    if (size > TEXT_LIMIT) throw new LogError({ file: name, reason: `${size} bytes is too large for a ${what} (limit ${TEXT_LIMIT})` });
    const h = createHash('sha256');
    const parts: Buffer[] = [];
    let bytes = 0;
    for await (const chunk of src.open(name)) {
      h.update(chunk);
      parts.push(Buffer.from(chunk.buffer, chunk.byteOffset, chunk.byteLength));
      bytes += chunk.byteLength;
      if (bytes > TEXT_LIMIT) throw new LogError({ file: name, reason: `too large for a ${what} (limit ${TEXT_LIMIT} bytes)` });
    }
    sources.push({ name, sha256: h.digest('hex'), bytes });
    try {
      return new TextDecoder('utf-8', { fatal: true }).decode(Buffer.concat(parts));
    } catch {
      throw new LogError({ file: name, reason: 'not UTF-8 text' });
    }
  };

  onProgress?.({ phase: 'scan', bytesDone: 0, bytesTotal: 0, runsDone: 0, runsTotal: 0 });
  const setup = parseSetup(await readText(SETUP_FILE, 'setup file'), SETUP_FILE);
  const idx = parseRunIndexDetailed(await readText(INDEX_FILE, 'run index'), INDEX_FILE);
  const plans = planRunFiles(idx.runs, idx.lines);
  const sizes = new Map<string, number>();
  for (const plan of plans) {
    const s = await sizeOf(src, plan.file, () => missingFileError(plan));
    if (s === null) throw missingFileError(plan);
    sizes.set(plan.file, s);
  }
  const bytesTotal = [...sizes.values()].reduce((a, b) => a + b, 0);
  onProgress?.({ phase: 'scan', bytesDone: 0, bytesTotal, runsDone: 0, runsTotal: idx.runs.length });
  return { setup, index: idx.runs, plans, sizes, bytesTotal, setupSource: sources[0], indexSource: sources[1], warnings: [...idx.warnings] };
}

/** Parse a whole session into memory; LogError on bad input. */
export async function readSession(src: SessionSource, onProgress?: (p: ImportProgress) => void): Promise<ParsedSession> {
  const head = await readHead(src, onProgress);
  const { setup, plans, bytesTotal } = head;
  const warnings = head.warnings;
  const sources: ParsedSession['sources'] = [head.setupSource, head.indexSource];
  const runsTotal = head.index.length;
  let bytesDone = 0;
  let runsDone = 0;

  const byRun = new Map(head.index.map((r) => [r.run, r]));
  const runs: RawRun[] = [];
  for (const plan of plans) {
    const reader = new RunFileReader(plan, setup, byRun, Number.NaN, { expectedBytes: head.sizes.get(plan.file) });
    for await (const chunk of src.open(plan.file)) {
      reader.push(chunk);
      bytesDone += chunk.byteLength;
      onProgress?.({ phase: 'parse', file: plan.file, bytesDone, bytesTotal, runsDone, runsTotal });
    }
    const got = reader.endRaw();
    warnings.push(...got.warnings);
    sources.push({ name: got.name, sha256: got.sha256, bytes: got.bytes });
    runs.push(...got.raws);
    runsDone += got.raws.length;
    onProgress?.({ phase: 'parse', file: plan.file, bytesDone, bytesTotal, runsDone, runsTotal });
  }
  const order = new Map(head.index.map((r, i) => [r.run, i]));
  runs.sort((a, b) => order.get(a.info.run)! - order.get(b.info.run)!);
  return { folder: src.folder, setup, index: head.index, runs, sources, warnings };
}

export interface ImportOptions {
  actor?: string;
  onProgress?: (p: ImportProgress) => void;
  /** The folder recorded with the session (default: the source's; null: none, e.g. an upload). */
  folder?: string | null;
  /** Worker threads: a number (0 = read on this thread), or 'auto' (default: by size). */
  workers?: number | 'auto';
}

/**
 * Import a session from any source into the store: ONE transaction, run log after run log as they
 * are read (see the file header). Bad input → LogError and the database as it was.
 */
export async function importSession(store: Store, src: SessionSource, opts: ImportOptions = {}): Promise<ImportReport> {
  const onProgress = opts.onProgress;
  const head = await readHead(src, onProgress);
  const folder = opts.folder === undefined ? src.folder : opts.folder;
  let pool: ImportPool | null = null;
  const writer = store.beginImport(
    { folder, setup: head.setup, index: head.index, setupSource: head.setupSource, indexSource: head.indexSource },
    opts.actor ?? 'import',
    { onProgress },
  );
  try {
    if (!writer.refused) {
      writer.bytes.total = head.bytesTotal;
      const runsTotal = head.index.length;
      let runsRead = 0;
      const onBytes = (file: string, n: number) => {
        writer.bytes.done += n;
        onProgress?.({ phase: 'parse', file, bytesDone: writer.bytes.done, bytesTotal: head.bytesTotal, runsDone: runsRead, runsTotal });
      };
      const onFile = (f: PreparedFile) => {
        runsRead += f.runs.length;
        writer.addFile(f);
      };
      // Run logs already stored with these very bytes are only hashed, not parsed again; a log
      // larger than its stored copy is checked for having only grown (the stored bytes its start).
      const plans: RunFilePlan[] = [];
      for (const plan of head.plans) {
        const size = head.sizes.get(plan.file)!;
        const before = writer.grownCandidate(plan.file, size);
        if (before && (await prefixHash(src, plan.file, before.bytes)) === before.sha256) writer.markGrown(plan.file);
        const known = writer.unchangedCandidate(plan.file, size, plan.runs);
        if (known) {
          const h = createHash('sha256');
          for await (const chunk of src.open(plan.file)) {
            h.update(chunk);
            onBytes(plan.file, chunk.byteLength);
          }
          const sha256 = h.digest('hex');
          if (sha256 === known.sha256) {
            writer.addFile({ name: plan.file, sha256, bytes: size, runs: [], warnings: [] });
            continue;
          }
          writer.bytes.total += size; // read again below, in full
        }
        plans.push(plan);
      }
      const rest: SessionHead = { ...head, plans };
      const toRead = plans.reduce((t, p) => t + head.sizes.get(p.file)!, 0);
      const wanted = opts.workers === undefined || opts.workers === 'auto' ? workersFor(toRead) : opts.workers;
      if (wanted > 0 && src.path && plans.length > 1) pool = await readOnWorkers(src, rest, writer.spikeK, wanted, onBytes, onFile);
      else await readHere(src, rest, writer.spikeK, onBytes, onFile);
    }
    // After a large import the WAL holds every page it wrote: one of the (now idle) import threads
    // copies it into the database file, so the import is done once its COMMIT is (the data are
    // safe in the WAL from then on) and the calling thread stays free.
    const report = writer.finish(head.warnings, { checkpoint: pool ? 'later' : 'now' });
    if (pool && writer.committed) {
      const p = pool;
      pool = null;
      store.track(p.checkpointAndClose(store.file).then((r) => {
        if (!r.ok) process.emitWarning(`rakeline: the checkpoint after the import did not finish (${r.error ?? 'database busy'}); SQLite completes it at a later write`);
        return r;
      }));
    }
    return report;
  } catch (e) {
    writer.abort();
    if (isDiskFull(e, store.file) && !(e instanceof StoreFullError)) throw new StoreFullError(store.file, e instanceof Error ? e.message : String(e), 'import');
    throw e;
  } finally {
    if (pool) void pool.close();
  }
}

/** SHA-256 of the first `bytes` bytes of a file. */
async function prefixHash(src: SessionSource, name: string, bytes: number): Promise<string> {
  const h = createHash('sha256');
  let left = bytes;
  for await (const chunk of src.open(name)) {
    if (left <= 0) break;
    const take = chunk.byteLength <= left ? chunk : chunk.subarray(0, left);
    h.update(take);
    left -= take.byteLength;
    if (left <= 0) break;
  }
  return h.digest('hex');
}

/** Every run log read on this thread, one after the other. */
async function readHere(
  src: SessionSource, head: SessionHead, spikeK: number,
  onBytes: (file: string, n: number) => void, onFile: (f: PreparedFile) => void,
): Promise<void> {
  const byRun = new Map(head.index.map((r) => [r.run, r]));
  const arena = new BufferPool();
  const spares = new BufferPool(16);
  for (const plan of head.plans) {
    const reader = new RunFileReader(plan, head.setup, byRun, spikeK, { expectedBytes: head.sizes.get(plan.file), arena, spares });
    for await (const chunk of src.open(plan.file)) {
      reader.push(chunk);
      onBytes(plan.file, chunk.byteLength);
    }
    const f = reader.end();
    onFile(f);
    for (const b of packedBuffers(f)) spares.give(b); // stored: free to pack the next runs into
  }
}

/** The buffers a prepared file's runs are packed in. */
function packedBuffers(f: PreparedFile): ArrayBuffer[] {
  return [...new Set(f.runs.map((r) => r.bytes.buffer as ArrayBuffer))];
}

/** Run logs read on worker threads; handed over in index order, a few in flight at a time.
 *  Returns the pool, still open, if every file was read on it (else null, the pool closed). */
async function readOnWorkers(
  src: SessionSource, head: SessionHead, spikeK: number, workers: number,
  onBytes: (file: string, n: number) => void, onFile: (f: PreparedFile) => void,
): Promise<ImportPool | null> {
  let pool: ImportPool;
  try {
    pool = new ImportPool(workers);
  } catch (e) {
    await readHereAfterWorkers(e, src, head, 0, spikeK, onBytes, onFile);
    return null;
  }
  const byRun = new Map(head.index.map((r) => [r.run, r]));
  const started: Promise<PreparedFile>[] = [];
  const counted = new Map<string, number>();
  const start = (k: number) => {
    const plan = head.plans[k];
    const p = pool.run({
      path: src.path!(plan.file)!, plan, infos: plan.runs.map((r) => byRun.get(r)!), setup: head.setup, spikeK, chunkSize: 1 << 20,
    }, (n) => {
      counted.set(plan.file, (counted.get(plan.file) ?? 0) + n);
      onBytes(plan.file, n);
    });
    p.catch(() => undefined); // awaited in order below; a later file's failure must not go unhandled
    started[k] = p;
  };
  let k = 0;
  let broken: { error: unknown } | null = null;
  let storing = false;
  try {
    const window = 2 * workers + 2;
    for (let j = 0; j < Math.min(window, head.plans.length); j++) start(j);
    for (; k < head.plans.length; k++) {
      const f = await started[k];
      delete started[k];
      storing = true;
      onFile(f); // a failure to store (disk full, …) is the import's answer, not the threads'
      storing = false;
      pool.recycle(packedBuffers(f)); // stored: back to a thread, to pack its next runs into
      if (k + window < head.plans.length) start(k + window);
    }
  } catch (e) {
    await pool.close();
    // Bad input is the import's answer; a worker that could not start or died is not: the rest
    // of the run logs are then read on this thread (progress counted again from there).
    if (isLogError(e) || storing || k >= head.plans.length) throw e;
    broken = { error: e };
  }
  if (broken === null) return pool;
  for (const plan of head.plans.slice(k)) onBytes(plan.file, -(counted.get(plan.file) ?? 0));
  await readHereAfterWorkers(broken.error, src, head, k, spikeK, onBytes, onFile);
  return null;
}

async function readHereAfterWorkers(
  e: unknown, src: SessionSource, head: SessionHead, from: number, spikeK: number,
  onBytes: (file: string, n: number) => void, onFile: (f: PreparedFile) => void,
): Promise<void> {
  process.emitWarning(`rakeline: import worker threads unavailable (${e instanceof Error ? e.message : String(e)}); reading on the main thread`);
  await readHere(src, { ...head, plans: head.plans.slice(from) }, spikeK, onBytes, onFile);
}

/** Read a folder and store it (one transaction). */
export async function importSessionFolder(
  store: Store,
  folder: string,
  opts: Omit<ImportOptions, 'folder'> = {},
): Promise<ImportReport> {
  return importSession(store, folderSource(folder), opts);
}

/** A session from file texts already in memory (dropped files); SHA-256 of each file's UTF-8 bytes. */
export function parseSessionFiles(files: { name: string; text: string }[], folder: string | null = null): ParsedSession {
  const t = parseSessionTexts(files);
  const used = new Set([SETUP_FILE, INDEX_FILE, ...t.runs.map((r) => r.info.file!)]);
  const sources = files
    .map((f) => ({ name: f.name.replace(/\\/g, '/'), buf: Buffer.from(f.text, 'utf8') }))
    .filter((f) => used.has(f.name))
    .map((f) => ({ name: f.name, sha256: createHash('sha256').update(f.buf).digest('hex'), bytes: f.buf.byteLength }));
  return { folder, setup: t.setup, index: t.index, runs: t.runs, sources, warnings: t.warnings };
}
