// Reading a session folder from disk: setup.json and runs.csv, then every run log streamed in
// chunks through the pure parser (app/log) while its SHA-256 is computed (node:crypto) — a file is
// never read whole, whatever its size. Bad input throws the parser's LogError (file, line,
// channel, expected). importSessionFolder then stores the result in one transaction.
import { createReadStream } from 'node:fs';
import { stat } from 'node:fs/promises';
import { createHash } from 'node:crypto';
import { join, resolve } from 'node:path';
import type { RawRun } from '../app/types';
import { LogError } from '../app/log/errors';
import { parseSetup } from '../app/log/setup';
import { parseRunIndexDetailed } from '../app/log/runIndex';
import {
  INDEX_FILE, SETUP_FILE, collectRuns, missingFileError, parseSessionTexts, planRunFiles, runParserFor,
} from '../app/log/session';
import type { ImportProgress, ImportReport, ParsedSession, Store } from './store';

/** Where the files of a session come from (a folder on disk, or anything else that streams). */
export interface SessionSource {
  /** Absolute folder path recorded with the session (null: not a place to remember). */
  folder: string | null;
  /** Size in bytes, or null when there is no such file. */
  size(name: string): Promise<number | null>;
  /** The file's bytes, chunk by chunk. */
  open(name: string): AsyncIterable<Uint8Array>;
}

/** Files of a folder on disk, read in chunks of `chunkSize` bytes. */
export function folderSource(folder: string, chunkSize = 1 << 20): SessionSource {
  const root = resolve(folder);
  return {
    folder: root,
    async size(name) {
      try {
        const s = await stat(join(root, name));
        return s.isFile() ? s.size : null;
      } catch (e) {
        if ((e as NodeJS.ErrnoException).code === 'ENOENT' || (e as NodeJS.ErrnoException).code === 'ENOTDIR') return null;
        throw e;
      }
    },
    open(name) {
      return createReadStream(join(root, name), { highWaterMark: chunkSize });
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

export async function readSession(src: SessionSource, onProgress?: (p: ImportProgress) => void): Promise<ParsedSession> {
  const sources: ParsedSession['sources'] = [];
  const warnings: string[] = [];

  const readText = async (name: string, what: string): Promise<string> => {
    const size = await src.size(name);
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
  warnings.push(...idx.warnings);
  const plans = planRunFiles(idx.runs, idx.lines);
  const sizes = new Map<string, number>();
  for (const plan of plans) {
    const s = await src.size(plan.file);
    if (s === null) throw missingFileError(plan);
    sizes.set(plan.file, s);
  }
  const bytesTotal = [...sizes.values()].reduce((a, b) => a + b, 0);
  const runsTotal = idx.runs.length;
  let bytesDone = 0;
  let runsDone = 0;
  onProgress?.({ phase: 'scan', bytesDone, bytesTotal, runsDone, runsTotal });

  const byRun = new Map(idx.runs.map((r) => [r.run, r]));
  const runs: RawRun[] = [];
  for (const plan of plans) {
    const parser = runParserFor(plan, setup);
    const h = createHash('sha256');
    let bytes = 0;
    for await (const chunk of src.open(plan.file)) {
      h.update(chunk);
      parser.push(chunk);
      bytes += chunk.byteLength;
      bytesDone += chunk.byteLength;
      onProgress?.({ phase: 'parse', file: plan.file, bytesDone, bytesTotal, runsDone, runsTotal });
    }
    const got = collectRuns(plan, parser.end(), byRun, warnings);
    warnings.push(...parser.warnings);
    sources.push({ name: plan.file, sha256: h.digest('hex'), bytes });
    runs.push(...got);
    runsDone += got.length;
    onProgress?.({ phase: 'parse', file: plan.file, bytesDone, bytesTotal, runsDone, runsTotal });
  }
  const order = new Map(idx.runs.map((r, i) => [r.run, i]));
  runs.sort((a, b) => order.get(a.info.run)! - order.get(b.info.run)!);
  return { folder: src.folder, setup, index: idx.runs, runs, sources, warnings };
}

/** Read a folder and store it (one transaction). */
export async function importSessionFolder(
  store: Store,
  folder: string,
  opts: { actor?: string; onProgress?: (p: ImportProgress) => void } = {},
): Promise<ImportReport> {
  const parsed = await readSessionFolder(folder, opts.onProgress);
  return store.importParsed(parsed, opts.actor ?? 'import', { onProgress: opts.onProgress });
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
