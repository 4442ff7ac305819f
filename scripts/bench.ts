// `npm run bench` — performance figures of the store/import/reduction path, printed beside their
// targets (never asserted: the figures depend on the machine).
//   large session: demoSession({ runs: 300, taps: 96, rakeProbes: 64, wallTaps: 40, samples: 2000 })
//   written as CSV (≈ 1.2 GB at 6 significant digits, 2.8 GB with every digit), imported into a fresh database, reduced with Monte Carlo,
//   one run re-reduced after a tap override; plus the default demo day reduced.
// Options: --quick (a small session, for a smoke run), --keep (keep the databases; path printed),
// --repeat N (imports of the large session, each into a new database; the median is the figure),
// --stages (scripts/bench-stages.ts: the import's time stage by stage on one thread, on the
// --vs-numpy session of --runs N runs, default 100; --files N its first N run logs),
// --digits N (significant digits of the logged values, default 6; 0 = every digit), --fresh
// (generate the session files again rather than reuse those kept in .bench/ from an earlier run;
// generating the large session takes about a minute and a half and is not part of any figure).
import { existsSync, mkdtempSync, readdirSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { demoSession, type DemoOptions } from '../resources/demo/scenario';
import { writeSessionFolder } from '../main/logwriter';
import { Store } from '../main/store';
import { importSessionFolder } from '../main/import';
import { fileURLToPath } from 'node:url';
import { readFileSync } from 'node:fs';
import { createHash } from 'node:crypto';
import { folderBytes } from './bench-vs-numpy';
import { setImportWorkerScript, workersFor } from '../main/importPool';
import { createRunParser } from '../app/log/runParser';
import type { Setup } from '../app/types';
import { reduceStoredSession, reduceStoredSessionAsync, reduceWorkersFor } from '../main/reduceService';

const argv = process.argv.slice(2);
const args = new Set(argv);
if (args.has('--vs-numpy')) {
  const { benchVsNumpy } = await import('./bench-vs-numpy');
  process.exit(await benchVsNumpy(argv));
}
if (args.has('--verify')) {
  const { benchVerify } = await import('./bench-verify');
  process.exit(await benchVerify());
}
if (args.has('--stages')) {
  const { benchStages } = await import('./bench-stages');
  const runsArg = argv.indexOf('--runs');
  const runs = runsArg >= 0 ? Number(argv[runsArg + 1]) : 100;
  const filesArg = argv.indexOf('--files');
  const folder = join('.bench', `session-${runs}r-96t-64p-40w-2000s-d6`);
  if (!existsSync(join(folder, '.complete'))) {
    console.error(`no ${folder}: run npm run bench -- --vs-numpy --sizes ${runs} once to write it`);
    process.exit(2);
  }
  benchStages(folder, filesArg >= 0 ? Number(argv[filesArg + 1]) : 1e9);
  process.exit(0);
}
const quick = args.has('--quick');
const keep = args.has('--keep');
if (args.has('--help')) {
  console.log('usage: npm run bench -- [--quick] [--keep] [--digits N]   or   npm run bench -- --vs-numpy [--sizes 30,100,300] [--rounds 3]\n' +
    '  --vs-numpy  Rakeline against the numpy/pandas baseline (../shared/bench/baseline_numpy.py), whole processes, interleaved\n' +
    '              (add --startup for the start-up figures only)\n' +
    '  --stages    where an import\'s time goes, stage by stage, one thread (--runs 100 the session, --files N the first N logs)\n' +
    '  --verify    what main/verify.ts costs a run (main re-reduces the results the page sends)\n' +
    '  --quick     a small session (smoke run)\n' +
    '  --keep      keep the generated files and databases (path printed)\n' +
    '  --digits N  significant digits of the logged sample values (default 6, like a scanner log; 0 = exact)\n' +
    '  --fresh     generate the session files again (they are kept in .bench/ between runs)\n' +
    '  --repeat N  import the large session N times, each into a new database (default 5; 1 with --quick)');
  process.exit(0);
}
const digitsArg = argv.indexOf('--digits');
const DIGITS = digitsArg >= 0 ? Number(argv[digitsArg + 1]) : 6;
if (!Number.isInteger(DIGITS) || DIGITS < 0 || DIGITS > 17) {
  console.error('--digits expects a whole number 0…17');
  process.exit(2);
}
const writeOpts = DIGITS ? { digits: DIGITS } : {};
const repeatArg = argv.indexOf('--repeat');
const REPEAT = repeatArg >= 0 ? Number(argv[repeatArg + 1]) : quick ? 1 : 5;
if (!Number.isInteger(REPEAT) || REPEAT < 1 || REPEAT > 20) {
  console.error('--repeat expects a whole number 1…20');
  process.exit(2);
}

const LARGE: DemoOptions = quick
  ? { runs: 24, taps: 96, rakeProbes: 64, wallTaps: 40, samples: 300 }
  : { runs: 300, taps: 96, rakeProbes: 64, wallTaps: 40, samples: 2000 };

const t = () => performance.now();
const mb = (bytes: number) => bytes / 1e6;
/** Peak resident set size of this process so far, MB (resourceUsage reports kB). */
const peakRssMb = () => process.resourceUsage().maxRSS / 1024;

/** Single-thread rate of the run-log reader itself (SHA-256 + parse, no averaging or storing) on
 *  the session's own files, after one warm-up pass (the JIT compiles the scanner first). */
function parseOnlyRate(folder: string, setup: Setup): number {
  const files = readdirSync(join(folder, 'runs')).sort().slice(0, 40).map((f) => readFileSync(join(folder, 'runs', f)));
  let rate = 0;
  for (let pass = 0; pass < 2; pass++) {
    const t0 = performance.now();
    let bytes = 0;
    for (const buf of files) {
      const p = createRunParser('x.csv', setup, { runColumn: false, expectedBytes: buf.length });
      const h = createHash('sha256');
      for (let o = 0; o < buf.length; o += 1 << 20) {
        const chunk = buf.subarray(o, Math.min(buf.length, o + (1 << 20)));
        h.update(chunk);
        p.push(chunk);
      }
      p.end();
      h.digest();
      bytes += buf.length;
    }
    rate = mb(bytes) / ((performance.now() - t0) / 1000);
  }
  return rate;
}

function line(label: string, value: string, target = ''): void {
  console.log(`${label.padEnd(44)} ${value.padStart(14)}   ${target}`);
}

async function main(): Promise<void> {
  const root = mkdtempSync(join(tmpdir(), 'rakeline-bench-'));
  console.log(`Rakeline bench${quick ? ' (quick)' : ''} — files in ${root}`);
  console.log(`large session: ${JSON.stringify(LARGE)}, values written with ${DIGITS ? `${DIGITS} significant digits` : 'all digits (exact)'}`);
  try {
    // 1. generate and write (or reuse the files of an earlier run: same options, same bytes)
    const demo = demoSession(LARGE);
    const cache = join(fileURLToPath(new URL('..', import.meta.url)), '.bench',
      `session-${LARGE.runs}r-${LARGE.taps}t-${LARGE.rakeProbes}p-${LARGE.wallTaps}w-${LARGE.samples}s-d${DIGITS}`);
    const folder = cache;
    let t0 = t();
    if (args.has('--fresh') || !existsSync(join(cache, '.complete'))) {
      rmSync(cache, { recursive: true, force: true });
      writeSessionFolder(folder, demo.setup, demo.index, demo.runs(), writeOpts);
      writeFileSync(join(cache, '.complete'), new Date().toISOString() + '\n');
      line('generate + write CSV', `${((t() - t0) / 1000).toFixed(1)} s`);
    } else line('session files reused from', folder.replace(/^.*\/(\.bench\/)/, '$1'));
    const bytes = folderBytes(folder) - statSync(join(cache, '.complete')).size;
    line('session folder size', `${mb(bytes).toFixed(0)} MB`, `(${demo.index.length} runs, ${demo.setup.channels.length} channels)`);

    // 2. import into a fresh database, with the import worker the desktop app runs (the esbuild
    //    bundle of main/importWorker.ts; from the sources each thread would first load tsx)
    const bundle = join(fileURLToPath(new URL('..', import.meta.url)), '.bench', 'dist');
    // @ts-expect-error: an untyped JavaScript module of ours
    const { buildMain } = await import('./build.mjs');
    await buildMain({ quiet: true, outdir: bundle });
    setImportWorkerScript(join(bundle, 'importWorker.cjs'));
    // Each time into a new database file; the figure is the median (the cores are shared, so one
    // import alone can be ±15 % off).
    let store!: Store;
    let rep!: Awaited<ReturnType<typeof importSessionFolder>>;
    const times: number[] = [];
    for (let k = 0; k < REPEAT; k++) {
      store?.close();
      store = Store.open(join(root, `bench-${k}.sqlite`));
      t0 = t();
      rep = await importSessionFolder(store, folder, { actor: 'bench' });
      const s1 = (t() - t0) / 1000;
      times.push(s1);
      line(`import ${k + 1}/${REPEAT}: time (read, parse, store, commit)`, `${s1.toFixed(2)} s`, `${(mb(bytes) / s1).toFixed(0)} MB/s (${rep.importedRuns.length} runs, ${workersFor(bytes)} worker threads)`);
      t0 = t();
      await store.settled();
      line('  then WAL checkpoint (background thread)', `${((t() - t0) / 1000).toFixed(2)} s`, '(after the commit; not in the import time)');
    }
    const sorted = [...times].sort((a, b) => a - b);
    const mid = sorted.length >> 1;
    const importS = sorted.length % 2 ? sorted[mid] : 0.5 * (sorted[mid - 1] + sorted[mid]);
    line(`import: rate, median of ${REPEAT}`, `${(mb(bytes) / importS).toFixed(0)} MB/s`, `target ≥ 150 MB/s (range ${(mb(bytes) / Math.max(...times)).toFixed(0)}–${(mb(bytes) / Math.min(...times)).toFixed(0)})`);
    const db = store.db.prepare('SELECT SUM(length(data)) AS b, SUM(n) AS n FROM samples').get() as { b: number; n: number };
    line('stored samples', `${(db.b / db.n).toFixed(2)} B/sample`, `(${mb(db.b).toFixed(0)} MB for ${(db.n / 1e6).toFixed(1)} M samples; 8 as doubles)`);
    line('parse only, one thread (run-log reader)', `${parseOnlyRate(folder, demo.setup).toFixed(0)} MB/s`, '(hash + parse of 40 run logs, warm)');
    line('peak RSS after import', `${peakRssMb().toFixed(0)} MB`, 'target < 1024 MB');

    // 3. reduce the whole session with Monte Carlo
    const settings = store.getSettings(rep.sessionId);
    t0 = t();
    // As the app does (worker threads only with four cores or more; see reduceWorkersFor).
    const nData = store.listRuns(rep.sessionId).filter((r) => r.kind === 'data').length;
    const auto = reduceWorkersFor(nData, settings.mcDraws);
    const { results } = await reduceStoredSessionAsync(store, rep.sessionId, { actor: 'bench' });
    const reduceS = (t() - t0) / 1000;
    line(`reduce all (MC ${settings.mcDraws} draws): time`, `${reduceS.toFixed(2)} s`, `target < 10 s (${auto ? `${auto} worker threads` : 'this thread'})`);
    const other = auto ? 0 : 2;
    t0 = t();
    await reduceStoredSessionAsync(store, rep.sessionId, { actor: 'bench', workers: other });
    line(`  the same on ${other ? `${other} new worker threads` : 'this thread'}`, `${((t() - t0) / 1000).toFixed(2)} s`, other ? '(they compile the core afresh)' : '');
    line('reduce all: rate', `${(results.length / reduceS).toFixed(1)} runs/s`, `(${results.length} data runs)`);
    line('import (median) + reduce all: total', `${(importS + reduceS).toFixed(2)} s`, `(${(bytes / 1e9).toFixed(2)} GB of logs, ${(db.n / 1e6).toFixed(1)} M samples)`);

    // 4. one-run re-reduction after a tap override
    const setup = store.getSetup(rep.sessionId);
    const tap = setup.taps[Math.floor(setup.taps.length / 3)];
    const oneRun = results[Math.floor(results.length / 2)]?.run;
    store.setTapBad(rep.sessionId, tap.id, true, 'bench', 'bench override');
    if (oneRun !== undefined) {
      reduceStoredSession(store, rep.sessionId, { runs: [oneRun], actor: 'bench' }); // warm
      const reps = 5;
      t0 = t();
      for (let i = 0; i < reps; i++) reduceStoredSession(store, rep.sessionId, { runs: [oneRun], actor: 'bench' });
      line(`re-reduce 1 run after tap ${tap.id} bad (MC)`, `${((t() - t0) / reps).toFixed(1)} ms`, 'target < 50 ms');
      t0 = t();
      for (let i = 0; i < reps; i++) reduceStoredSession(store, rep.sessionId, { runs: [oneRun], settings: { mcDraws: 0 }, actor: 'bench' });
      line('re-reduce 1 run, no MC', `${((t() - t0) / reps).toFixed(1)} ms`);
    }
    store.close();
    line('peak RSS (large session)', `${peakRssMb().toFixed(0)} MB`, 'target < 1024 MB');

    // 5. the default demo day
    const day = demoSession();
    const dayFolder = join(root, 'day');
    writeSessionFolder(dayFolder, day.setup, day.index, day.runs(), writeOpts);
    const dayStore = Store.open(join(root, 'day.sqlite'));
    const dayRep = await importSessionFolder(dayStore, dayFolder, { actor: 'bench' });
    t0 = t();
    const day1 = reduceStoredSession(dayStore, dayRep.sessionId, { actor: 'bench' });
    const dayS = (t() - t0) / 1000;
    line('demo day: reduce all (MC)', `${(day1.results.length / dayS).toFixed(1)} runs/s`, `(${day1.results.length} data runs in ${dayS.toFixed(2)} s)`);
    dayStore.close();
    line('peak RSS (whole bench)', `${peakRssMb().toFixed(0)} MB`);
  } finally {
    if (keep) console.log(`kept: ${root}`);
    else rmSync(root, { recursive: true, force: true });
  }
}

main().catch((e) => {
  console.error(e instanceof Error ? (e.stack ?? e.message) : e);
  process.exitCode = 1;
});
