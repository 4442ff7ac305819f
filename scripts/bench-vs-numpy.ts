// `npm run bench -- --vs-numpy`: Rakeline against what an engineer would write instead — the
// numpy/pandas pipeline ../shared/bench/baseline_numpy.py (beside the repository), same session
// folders, whole processes timed from start to exit, interleaved (the order rotates from one round
// to the next), three rounds; medians and ratios printed, with the machine's load beside them.
//   sessions: 30, 100 and 300 runs of the bench's large session shape (96 taps, 64 rake probes,
//   40 wall taps, 2000 samples a channel, 6 significant digits), kept in .bench/ between runs
//   Rakeline:  node bin/rakeline.mjs --db NEW ingest SESSION   (import + reduce, 400 MC draws)
//   baseline:  /usr/bin/python3 -s baseline_numpy.py SESSION NEW             (pandas parser)
//              … --parser numpy --jobs 2
//   reduce only: `rakeline reduce` on the imported database against `--reduce-only` on the
//   baseline's own database.
// Options (after --vs-numpy): --sizes 30,100 (a subset), --rounds N (default 3), --baseline FILE,
// --startup (the start-up figures only).
import { spawnSync } from 'node:child_process';
import { existsSync, readdirSync, rmSync, statSync, writeFileSync, mkdtempSync } from 'node:fs';
import { loadavg, tmpdir, availableParallelism } from 'node:os';
import { join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { demoSession, type DemoOptions } from '../resources/demo/scenario';
import { writeSessionFolder } from '../main/logwriter';
// @ts-expect-error: an untyped JavaScript module of ours
import { ensureCompiled } from './compiled.mjs';

const REPO = resolve(fileURLToPath(new URL('..', import.meta.url)));
const PYTHON = '/usr/bin/python3';
/** ../shared/bench/baseline_numpy.py from the repository's root; from a linked git worktree, the
 *  root of the main checkout (git's common folder's parent); --baseline FILE overrides both. */
function baselinePath(argv: string[]): string {
  const given = argv.includes('--baseline') ? argv[argv.indexOf('--baseline') + 1] : undefined;
  if (given) return resolve(given);
  const rel = ['..', 'shared', 'bench', 'baseline_numpy.py'];
  const here = resolve(REPO, ...rel);
  if (existsSync(here)) return here;
  const common = spawnSync('git', ['rev-parse', '--path-format=absolute', '--git-common-dir'], { cwd: REPO, encoding: 'utf8' });
  const main = common.status === 0 ? resolve(common.stdout.trim(), '..') : REPO;
  const there = resolve(main, ...rel);
  return existsSync(there) ? there : here;
}
let BASELINE = '';
const BIN = join(REPO, 'bin', 'rakeline.mjs');
const TIME = '/usr/bin/time';

const shape = (runs: number): DemoOptions => ({ runs, taps: 96, rakeProbes: 64, wallTaps: 40, samples: 2000 });
const load = () => loadavg().map((v) => v.toFixed(2)).join(' ');
const median = (xs: number[]) => {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : 0.5 * (s[m - 1] + s[m]);
};

/** Bytes of every file below a folder (the session sizes both benches print). */
export function folderBytes(dir: string): number {
  let total = 0;
  for (const e of readdirSync(dir, { withFileTypes: true })) {
    const p = join(dir, e.name);
    total += e.isDirectory() ? folderBytes(p) : statSync(p).size;
  }
  return total;
}

/** The session folder of `runs` runs (written once, kept in .bench/ with the main bench's). */
function session(runs: number): string {
  const o = shape(runs);
  const dir = join(REPO, '.bench', `session-${o.runs}r-${o.taps}t-${o.rakeProbes}p-${o.wallTaps}w-${o.samples}s-d6`);
  if (!existsSync(join(dir, '.complete'))) {
    rmSync(dir, { recursive: true, force: true });
    const t0 = performance.now();
    const demo = demoSession(o);
    writeSessionFolder(dir, demo.setup, demo.index, demo.runs(), { digits: 6 });
    writeFileSync(join(dir, '.complete'), new Date().toISOString() + '\n');
    console.log(`  wrote the ${runs}-run session in ${((performance.now() - t0) / 1000).toFixed(0)} s (not timed)`);
  }
  return dir;
}

interface Timed { s: number; rssMiB: number | null; stderr: string; stdout: string }

/** One whole process, wall time from spawn to exit; peak RSS from GNU time when it is there
 *  (for the baseline's --jobs 2 the largest of its processes). */
function timed(cmd: string, args: string[], what: string): Timed {
  const hasTime = existsSync(TIME);
  const rssFile = join(tmpdir(), `rakeline-bench-rss-${process.pid}`);
  const argv = hasTime ? ['-f', '%M', '-o', rssFile, cmd, ...args] : args;
  const t0 = performance.now();
  const r = spawnSync(hasTime ? TIME : cmd, argv, { cwd: REPO, encoding: 'utf8', maxBuffer: 64 << 20 });
  const s = (performance.now() - t0) / 1000;
  if (r.status !== 0) throw new Error(`${what} failed (exit ${r.status}):\n${r.stderr || r.stdout}`);
  let rssMiB: number | null = null;
  if (hasTime) {
    const kb = Number(spawnSync('tail', ['-n', '1', rssFile], { encoding: 'utf8' }).stdout.trim());
    rssMiB = Number.isFinite(kb) ? kb / 1024 : null;
    rmSync(rssFile, { force: true });
  }
  return { s, rssMiB, stderr: r.stderr, stdout: r.stdout };
}

type Variant = 'rakeline' | 'pandas' | 'numpy-j2';
const VARIANTS: Variant[] = ['rakeline', 'pandas', 'numpy-j2'];
const LABEL: Record<Variant, string> = {
  rakeline: 'Rakeline ingest (import + reduce)',
  pandas: 'baseline, pandas parser',
  'numpy-j2': 'baseline, --parser numpy --jobs 2',
};

function runVariant(v: Variant, folder: string, db: string): Timed {
  if (v === 'rakeline') return timed(process.execPath, [BIN, '--db', db, 'ingest', folder], `rakeline ingest ${folder}`);
  const extra = v === 'numpy-j2' ? ['--parser', 'numpy', '--jobs', '2'] : [];
  return timed(PYTHON, ['-s', BASELINE, folder, db, ...extra], `baseline ${extra.join(' ')} on ${folder}`);
}

function dropDb(db: string): void {
  for (const f of [db, `${db}-wal`, `${db}-shm`, `${db}-journal`]) rmSync(f, { force: true });
}

const fmt = (s: number) => `${s.toFixed(2)} s`;
const mib = (x: number | null) => (x === null ? '-' : `${x.toFixed(0)} MiB`);

export async function benchVsNumpy(argv: string[]): Promise<number> {
  const opt = (name: string) => (argv.includes(name) ? argv[argv.indexOf(name) + 1] : undefined);
  const sizes = (opt('--sizes') ?? '30,100,300').split(',').map(Number);
  const rounds = Number(opt('--rounds') ?? 3);
  if (sizes.some((n) => !Number.isInteger(n) || n < 2) || !Number.isInteger(rounds) || rounds < 1) {
    console.error('--sizes expects run counts like 30,100,300; --rounds a whole number ≥ 1');
    return 2;
  }
  BASELINE = baselinePath(argv);
  console.log(`Rakeline against the numpy/pandas baseline — ${availableParallelism()} cores, load ${load()} (1, 5, 15 min)`);
  if (!existsSync(BASELINE)) {
    console.log(`baseline not found at ${BASELINE} (expected at ../shared/bench/baseline_numpy.py beside the repository); nothing compared.`);
    return 0;
  }
  const probe = spawnSync(PYTHON, ['-s', '-c', 'import numpy, pandas; print(numpy.__version__, pandas.__version__)'], { encoding: 'utf8' });
  if (probe.status !== 0) {
    console.log(`the baseline needs ${PYTHON} with numpy and pandas: apt-get install -y python3-numpy python3-pandas (Debian); nothing compared.`);
    return 0;
  }
  const [npv, pdv] = probe.stdout.trim().split(' ');
  console.log(`baseline: ${BASELINE} with numpy ${npv}, pandas ${pdv}`);
  const build = await ensureCompiled({ quiet: true });
  console.log(`Rakeline: the compiled build ${build.replace(REPO + '/', '')} (node ${process.version})`);
  if (process.env.NODE_EXTRA_CA_CERTS) {
    console.log(`note: NODE_EXTRA_CA_CERTS is set here, which makes every node start read the certificates (start-up figures below with and without it)`);
  }
  const work = mkdtempSync(join(tmpdir(), 'rakeline-vs-numpy-'));
  try {
    startup(work);
    if (argv.includes('--startup')) return 0;
    const folders = new Map<number, string>();
    for (const n of sizes) folders.set(n, session(n));
    const whole = new Map<string, Timed[]>();
    const key = (n: number, v: Variant) => `${n}:${v}`;
    const keepDb = new Map<string, string>();
    for (let round = 0; round < rounds; round++) {
      for (const n of sizes) {
        const order = VARIANTS.map((_, i) => VARIANTS[(i + round + n) % VARIANTS.length]);
        const parts: string[] = [];
        for (const v of order) {
          const db = join(work, `${v}-${n}-${round}.sqlite`);
          const r = runVariant(v, folders.get(n)!, db);
          (whole.get(key(n, v)) ?? whole.set(key(n, v), []).get(key(n, v))!).push(r);
          parts.push(`${v} ${fmt(r.s)}`);
          if (round === rounds - 1 && v !== 'numpy-j2') keepDb.set(key(n, v), db);
          else dropDb(db);
        }
        console.log(`  round ${round + 1}, ${String(n).padStart(3)} runs: ${parts.join(', ')}   (load ${load()})`);
      }
    }
    console.log(`\nwhole ingest, median of ${rounds} (wall time of the whole process; peak RSS, median):`);
    console.log(`${'session'.padEnd(24)} ${VARIANTS.map((v) => v.padStart(20)).join('')} ${'vs pandas'.padStart(10)} ${'vs numpy-j2'.padStart(12)}`);
    for (const n of sizes) {
      const m = (v: Variant) => median(whole.get(key(n, v))!.map((r) => r.s));
      const rss = (v: Variant) => {
        const xs = whole.get(key(n, v))!.map((r) => r.rssMiB).filter((x): x is number => x !== null);
        return xs.length ? median(xs) : null;
      };
      const bytes = folderBytes(folders.get(n)!);
      console.log(`${`${n} runs (${(bytes / 1e6).toFixed(0)} MB)`.padEnd(24)} ${VARIANTS.map((v) => `${fmt(m(v))} ${mib(rss(v))}`.padStart(20)).join('')} ${(m('rakeline') / m('pandas')).toFixed(2).padStart(10)} ${(m('rakeline') / m('numpy-j2')).toFixed(2).padStart(12)}`);
    }
    console.log(`targets: ratio ≤ 0.5 against both baselines at every size; Rakeline peak RSS ≤ 250 MiB at 300 runs. ${Object.values(LABEL).join('; ')}.`);

    // reduce only, each on its own database of the last round
    console.log(`\nreduce only, median of ${rounds}, interleaved (whole process; in-process figure as each prints it):`);
    for (const n of sizes) {
      const rk: number[] = [], rkIn: number[] = [], py: number[] = [], pyIn: number[] = [];
      for (let round = 0; round < rounds; round++) {
        const pair: (() => void)[] = [
          () => {
            const r = timed(process.execPath, [BIN, '--db', keepDb.get(key(n, 'rakeline'))!, 'reduce'], 'rakeline reduce');
            rk.push(r.s);
            const m = /reduced (\d+) run\(s\) in ([\d.]+) s/.exec(r.stdout);
            if (m) rkIn.push(Number(m[2]));
          },
          () => {
            const r = timed(PYTHON, ['-s', BASELINE, folders.get(n)!, keepDb.get(key(n, 'pandas'))!, '--reduce-only'], 'baseline --reduce-only');
            py.push(r.s);
            const m = /reduce: (\d+) data runs.*?: ([\d.]+) s/.exec(r.stderr);
            if (m) pyIn.push(Number(m[2]));
          },
        ];
        if (round % 2) pair.reverse();
        for (const f of pair) f();
      }
      const inTxt = rkIn.length && pyIn.length
        ? `; in-process ${fmt(median(rkIn))} vs ${fmt(median(pyIn))}, ratio ${(median(rkIn) / median(pyIn)).toFixed(2)}`
        : '';
      console.log(`  ${String(n).padStart(3)} runs: Rakeline ${fmt(median(rk))}, baseline ${fmt(median(py))}, ratio ${(median(rk) / median(py)).toFixed(2)}${inTxt}   (load ${load()})`);
    }
    console.log('target: reduce-only ratio ≤ 0.7');
  } finally {
    rmSync(work, { recursive: true, force: true });
  }
  return 0;
}

/** Start-up: `rakeline --version` and `rakeline runs` on the demo day, median of 7 each. */
function startup(work: string): void {
  const demo = join(REPO, 'resources', 'demo', 'session');
  if (!existsSync(join(demo, 'setup.json'))) {
    console.log('start-up: no demo session (npm run demo); skipped');
    return;
  }
  const db = join(work, 'demo.sqlite');
  timed(process.execPath, [BIN, '--db', db, 'ingest', demo], 'rakeline ingest demo');
  const envs: [string, NodeJS.ProcessEnv][] = [['as set here', process.env]];
  if (process.env.NODE_EXTRA_CA_CERTS) {
    const { NODE_EXTRA_CA_CERTS: _c, ...rest } = process.env;
    envs.push(['without NODE_EXTRA_CA_CERTS', rest]);
  }
  const cmds: [string, string[], string][] = [
    ['rakeline --version', [BIN, '--version'], 'target ≤ 120 ms'],
    ['rakeline runs (demo day)', [BIN, '--db', db, 'runs'], 'target ≤ 250 ms'],
    ['node -e 0 (for scale)', ['-e', '0'], ''],
  ];
  for (const [label, args, target] of cmds) {
    const byEnv = envs.map(() => [] as number[]);
    for (let k = 0; k < 7; k++) {
      envs.forEach(([, env], i) => {
        const t0 = performance.now();
        const r = spawnSync(process.execPath, args, { cwd: REPO, env, stdio: 'ignore' });
        if (r.status !== 0) throw new Error(`${label} failed (exit ${r.status})`);
        byEnv[i].push(performance.now() - t0);
      });
    }
    const txt = envs.map(([name], i) => `${median(byEnv[i]).toFixed(0)} ms ${name}`).join(', ');
    console.log(`start-up: ${label.padEnd(26)} ${txt}   ${target} (median of 7, load ${load()})`);
  }
}
