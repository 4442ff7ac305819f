// Parser choice benchmark (docs/LOG-FORMAT.md, "Parser choice"): a generated ~50 MB numeric run
// log (≈200 channels) read by (a) our scanner app/log/runParser.ts and (b) csv-parse 7 (stream
// API, records of strings, Number() per cell into Float64Arrays, as the scanner does), both fed
// the same 1 MiB string chunks; also csv-parse's sync API on the whole text. And (c) the import
// path of main/import.ts: file bytes (1 MiB chunks) straight into the scanner + SHA-256. Prints MB/s (1 MB = 10^6 bytes); best of 3.
// Run: npx tsx scripts/bench-parser.ts [MB]
import { createHash } from 'node:crypto';
import { parse as csvParse } from 'csv-parse';
import { parse as csvParseSync } from 'csv-parse/sync';
import { createRunParser } from '../app/log/runParser';
import { channelToSI } from '../app/units';
import { miniSetup, rng } from '../test/helpers/mini-session';

const targetMB = Number(process.argv[2] ?? 50);
const setup = miniSetup({ taps: 80, rakeProbes: 25, wallTaps: 7 });
const names = setup.channels.map((c) => c.name);

function generate(): string {
  const rand = rng(7);
  const parts: string[] = [`t_s,${names.join(',')}\n`];
  let bytes = parts[0].length;
  for (let i = 0; bytes < targetMB * 1e6; i++) {
    let line = (i / 1000).toFixed(3);
    for (let k = 0; k < names.length; k++) line += ',' + ((rand() - 0.5) * 2000).toFixed(4);
    line += '\n';
    parts.push(line);
    bytes += line.length;
  }
  return parts.join('');
}

const text = generate();
const MB = text.length / 1e6;
const CHUNK = 1 << 20;
const chunks: string[] = [];
for (let i = 0; i < text.length; i += CHUNK) chunks.push(text.slice(i, i + CHUNK));
const bytes = Buffer.from(text);
console.log(`generated ${MB.toFixed(1)} MB, ${names.length} channels, ${text.split('\n').length - 2} samples`);

function ours(): number {
  const p = createRunParser('bench.csv', setup, { runColumn: false });
  for (const c of chunks) p.push(c);
  const r = p.end();
  return r[names[0]].length;
}

async function theirs(): Promise<number> {
  const factors = setup.channels.map((c) => channelToSI(1, c.unit));
  let cols: Float64Array[] = names.map(() => new Float64Array(1024));
  let n = 0;
  let header = true;
  const parser = csvParse({ delimiter: ',', bom: true });
  const done = new Promise<void>((resolve, reject) => {
    parser.on('readable', () => {
      let rec: string[] | null;
      while ((rec = parser.read()) !== null) {
        if (header) {
          header = false;
          continue;
        }
        if (n === cols[0].length) cols = cols.map((c) => { const g = new Float64Array(c.length * 2); g.set(c); return g; });
        for (let k = 0; k < names.length; k++) {
          const v = Number(rec[k + 1]);
          if (!Number.isFinite(v)) throw new Error('bad number');
          cols[k][n] = v * factors[k];
        }
        n++;
      }
    });
    parser.on('end', () => resolve());
    parser.on('error', reject);
  });
  for (const c of chunks) parser.write(c);
  parser.end();
  await done;
  return n;
}

function theirsSync(): number {
  const recs = csvParseSync(text) as string[][];
  const factors = setup.channels.map((c) => channelToSI(1, c.unit));
  const cols = names.map(() => new Float64Array(recs.length - 1));
  for (let i = 1; i < recs.length; i++) for (let k = 0; k < names.length; k++) cols[k][i - 1] = Number(recs[i][k + 1]) * factors[k];
  return cols[0].length;
}

function importPath(): number {
  const h = createHash('sha256');
  const p = createRunParser('bench.csv', setup, { runColumn: false });
  for (let i = 0; i < bytes.length; i += CHUNK) {
    const b = bytes.subarray(i, Math.min(bytes.length, i + CHUNK));
    h.update(b);
    p.push(b);
  }
  h.digest('hex');
  return p.end()[names[0]].length;
}

async function best(label: string, f: () => number | Promise<number>): Promise<number> {
  let bestMBs = 0;
  let n = 0;
  for (let k = 0; k < 3; k++) {
    const t = performance.now();
    n = await f();
    const s = (performance.now() - t) / 1000;
    bestMBs = Math.max(bestMBs, MB / s);
  }
  console.log(`${label.padEnd(44)} ${bestMBs.toFixed(0).padStart(5)} MB/s  (${n} samples)`);
  return bestMBs;
}

const a = await best('app/log/runParser, string chunks', ours);
const b = Math.max(await best('csv-parse 7 stream + Number()', theirs), await best('csv-parse 7 sync (whole text) + Number()', theirsSync));
await best('import path: bytes + SHA-256 + scanner', importPath);
console.log(`own scanner / csv-parse = ${(a / b).toFixed(1)}×`);

// (d) The whole import of a session folder on disk: read + SHA-256 + parse + average (app/samples
// averageRun) + store in one SQLite transaction (WAL, synchronous FULL). 25 runs × 202 channels ×
// 2000 samples. The averaging share is timed on its own as well.
{
  const { mkdtempSync, rmSync } = await import('node:fs');
  const { tmpdir } = await import('node:os');
  const { join } = await import('node:path');
  const { writeSessionFolder } = await import('../main/logwriter');
  const { importSessionFolder, readSessionFolder } = await import('../main/import');
  const { Store } = await import('../main/store');
  const { averageRun } = await import('../app/samples');
  const { miniRuns } = await import('../test/helpers/mini-session');
  const dir = mkdtempSync(join(tmpdir(), 'rk-bench-'));
  try {
    const { index, runs } = miniRuns(setup, { dataRuns: 18, samples: 2000 });
    writeSessionFolder(join(dir, 'day'), setup, index, runs, { digits: 7 });
    const parsed = await readSessionFolder(join(dir, 'day'));
    const mb = parsed.sources.reduce((a, s) => a + s.bytes, 0) / 1e6;
    let bestImport = 0;
    let bestAvg = Infinity;
    for (let k = 0; k < 3; k++) {
      const store = Store.open(join(dir, `db-${k}.sqlite`));
      let t = performance.now();
      await importSessionFolder(store, join(dir, 'day'));
      bestImport = Math.max(bestImport, mb / ((performance.now() - t) / 1000));
      store.close();
      t = performance.now();
      for (const r of parsed.runs) averageRun(r, 5);
      bestAvg = Math.min(bestAvg, (performance.now() - t) / 1000);
    }
    const label = `full import to SQLite (${index.length} runs, ${mb.toFixed(0)} MB)`;
    console.log(`${label.padEnd(44)} ${bestImport.toFixed(0).padStart(5)} MB/s`);
    console.log(`${'  of which averageRun (app/samples.ts)'.padEnd(44)} ${bestAvg.toFixed(2).padStart(5)} s  (${(mb / bestAvg).toFixed(0)} MB/s alone)`);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
