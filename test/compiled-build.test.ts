// The compiled build the command line, the browser-mode server and their worker threads run
// (scripts/compiled.mjs, scripts/build.mjs buildNode): made from the sources, rebuilt when any of
// them changes, and run with no compiler at all — a module hook (helpers/no-compiler-loader.mjs)
// makes loading tsx, esbuild, typescript or any .ts file an error, in worker threads too.
// What it computes must be what the sources compute.
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, rmSync, utimesSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Store } from '../main/store';
import { importSessionFolder } from '../main/import';
import { cleanupTempDirs, comparableContents, miniFolder, tempDir } from './helpers/store-fixtures';
import { REPO, BIN } from './helpers/cliSession';
// @ts-expect-error: an untyped JavaScript module of ours
import { CLI_CACHE, compileNode, currentBuild, ensureCompiled, staleReason } from '../scripts/compiled.mjs';

const GUARD = join(REPO, 'test', 'helpers', 'no-compiler.mjs');
const DRIVER = join(REPO, 'test', 'helpers', 'compiled-import.mjs');
const LAUNCH = join(REPO, 'test', 'helpers', 'compiled-cli.mjs');
const version = (JSON.parse(readFileSync(join(REPO, 'package.json'), 'utf8')) as { version: string }).version;
// Inside the repository, so that the build resolves better-sqlite3 from node_modules.
const dist = join(REPO, 'dist', `node-test-${process.pid}`);
let build = '';

function node(args: string[], env: Record<string, string> = {}) {
  const r = spawnSync(process.execPath, args, { cwd: REPO, encoding: 'utf8', timeout: 120_000, maxBuffer: 64 << 20, env: { ...process.env, NO_COLOR: '1', ...env } });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

beforeAll(async () => {
  build = await compileNode({ quiet: true, dist });
}, 120_000);
afterAll(() => {
  rmSync(dist, { recursive: true, force: true });
  cleanupTempDirs();
});

describe('the compiled build', () => {
  it('is a folder of its own named by current.json, recording every source it was made from', () => {
    const rec = currentBuild(dist);
    expect(join(dist, rec.build)).toBe(build);
    for (const f of ['cli.mjs', 'cli.cjs', 'serve.mjs', 'importWorker.mjs']) expect(existsSync(join(build, f)), f).toBe(true);
    const inputs = Object.keys(rec.inputs);
    for (const src of ['main/cli.ts', 'main/cliDeps.ts', 'main/serve.ts', 'main/importWorker.ts', 'main/store.ts', 'app/reduce.ts', 'app/mcPlan.ts', 'scripts/build.mjs', 'package.json']) {
      expect(inputs, src).toContain(src);
    }
    // the bundled npm packages are stood for by npm's own record of the install
    expect(inputs.filter((p) => p.startsWith('node_modules/'))).toEqual(existsSync(join(REPO, 'node_modules', '.package-lock.json')) ? ['node_modules/.package-lock.json'] : []);
    expect(staleReason(dist)).toBeNull();
  });

  it('is stale when a recorded file changes size or time or is gone, or Node changed', () => {
    const base = tempDir('rk-stale-');
    const d = join(base, 'dist');
    mkdirSync(join(d, 'b-1'), { recursive: true });
    const src = join(base, 'a.ts');
    writeFileSync(src, 'export const a = 1;\n');
    utimesSync(src, 1_700_000_000, 1_700_000_000);
    const record = (node = process.versions.modules) => writeFileSync(join(d, 'current.json'), JSON.stringify({
      format: 1, build: 'b-1', node, inputs: { 'a.ts': [20, 1_700_000_000_000] },
    }));
    expect(staleReason(d, base)).toBe('no compiled build yet');
    record();
    expect(staleReason(d, base)).toBeNull();
    writeFileSync(src, 'export const a = 12;\n'); // one byte longer
    utimesSync(src, 1_700_000_000, 1_700_000_000);
    expect(staleReason(d, base)).toBe('a.ts changed');
    writeFileSync(src, 'export const a = 2;\n'); // same size, touched now
    expect(staleReason(d, base)).toBe('a.ts changed');
    utimesSync(src, 1_700_000_000, 1_700_000_000);
    expect(staleReason(d, base)).toBeNull();
    record('1');
    expect(staleReason(d, base)).toBe('built for another Node version');
    record();
    rmSync(src);
    expect(staleReason(d, base)).toBe('a.ts is gone');
    writeFileSync(src, 'export const a = 2;\n');
    utimesSync(src, 1_700_000_000, 1_700_000_000);
    rmSync(join(d, 'b-1'), { recursive: true });
    expect(staleReason(d, base)).toBe('the build folder is gone');
  });

  it('the no-compiler guard does fail a run from the sources (so its silence below means something)', () => {
    const r = node(['--import', GUARD, BIN, '--version'], { RAKELINE_FROM_SOURCES: '1' });
    expect(r.code).not.toBe(0);
    expect(r.stderr).toMatch(/a compiler or TypeScript source was loaded at run time: (tsx|.*\.ts)/);
  });

  it('runs --version, ingest, runs and sheet with no compiler; the demo day\'s results are bit for bit the sources\'', () => {
    const dir = tempDir('rk-compiled-');
    // the whole demo day (52 runs, the planted faults), reduced with its 400 Monte Carlo draws
    const folder = join(REPO, 'resources', 'demo', 'session');
    const cli = (db: string, ...args: string[]) => node(['--import', GUARD, join(build, 'cli.mjs'), '--db', db, ...args]);
    const v = cli(join(dir, 'x.sqlite'), '--version');
    expect(v.code, v.stderr).toBe(0);
    expect(v.stdout.trim()).toBe(version);
    const compiled = join(dir, 'compiled.sqlite');
    const ing = cli(compiled, 'ingest', folder);
    expect(ing.code, ing.stderr).toBe(0);
    expect(ing.stdout).toMatch(/run\(s\) imported/);
    const runs = cli(compiled, 'runs', '--format', 'json');
    expect(runs.code, runs.stderr).toBe(0);
    // the same through the sources (tsx), into another database
    const fromSources = join(dir, 'sources.sqlite');
    const ing2 = node([BIN, '--db', fromSources, 'ingest', folder], { RAKELINE_FROM_SOURCES: '1' });
    expect(ing2.code, ing2.stderr).toBe(0);
    const runs2 = node([BIN, '--db', fromSources, 'runs', '--format', 'json'], { RAKELINE_FROM_SOURCES: '1' });
    const pick = (text: string) => (JSON.parse(text) as { run: number; result: Record<string, unknown> | null }[]).map((r) => {
      if (!r.result) return { run: r.run, result: null };
      const { reducedAt: _at, ...rest } = r.result; // the clock differs
      return { run: r.run, result: rest };
    });
    const a = pick(runs.stdout);
    expect(a.filter((r) => r.result).length).toBeGreaterThan(40);
    // JSON numbers print the shortest text that reads back as the same double: equal texts, equal bits
    expect(JSON.stringify(a)).toBe(JSON.stringify(pick(runs2.stdout)));
    // and everything the reduction stored (coefficients, uncertainty intervals, flags, audit),
    // bar the clock readings
    const clockless = (text: string) => JSON.stringify(JSON.parse(text), (k, v) => (/^(at|\w+At)$/.test(k) ? undefined : v));
    const everything = cli(compiled, 'export', '--format', 'json');
    expect(everything.code, everything.stderr).toBe(0);
    expect(everything.stdout).toMatch(/"uncertainty"/);
    const everything2 = node([BIN, '--db', fromSources, 'export', '--format', 'json'], { RAKELINE_FROM_SOURCES: '1' });
    expect(clockless(everything.stdout)).toBe(clockless(everything2.stdout));
    const sheet = cli(compiled, 'sheet');
    expect(sheet.code, sheet.stderr).toBe(0);
    expect(sheet.stdout).toMatch(/^<!doctype html>/i);
  }, 120_000);

  it('the launcher\'s CommonJS build through the code cache prints what the ES-module build prints; a refused cache is made again', () => {
    const dir = tempDir('rk-cache-');
    const db = join(dir, 'c.sqlite');
    const folder = join(REPO, 'resources', 'demo', 'session');
    const cacheFile = join(build, CLI_CACHE);
    rmSync(cacheFile, { force: true });
    const launch = (...args: string[]) => {
      const r = node(['--import', GUARD, LAUNCH, dist, '--db', db, ...args]);
      expect(r.code, r.stderr).toBe(0);
      return { out: r.stdout, cache: /cache: (\w+)\s*$/.exec(r.stderr)?.[1] };
    };
    // --version alone runs the split ES-module build and keeps no cache
    const v = node(['--import', GUARD, LAUNCH, dist, '--version']);
    expect(v.stdout.trim()).toBe(version);
    expect(existsSync(cacheFile)).toBe(false);
    // the first command that loads the command modules writes the cache, the next one uses it
    expect(launch('ingest', folder).cache).toBe('none');
    expect(existsSync(cacheFile)).toBe(true);
    const first = launch('runs', '--format', 'json');
    expect(first.cache).toBe('used');
    const esm = node(['--import', GUARD, join(build, 'cli.mjs'), '--db', db, 'runs', '--format', 'json']);
    expect(esm.code, esm.stderr).toBe(0);
    expect(first.out).toBe(esm.stdout);
    expect(JSON.parse(first.out).length).toBeGreaterThan(40);
    // a damaged cache is refused by V8, the command still right, and the cache made again
    writeFileSync(cacheFile, readFileSync(cacheFile).subarray(0, 4096));
    const damaged = launch('runs', '--format', 'json');
    expect(damaged.cache).toBe('rejected');
    expect(damaged.out).toBe(esm.stdout);
    expect(launch('runs', '--format', 'json').cache).toBe('used');
  }, 120_000);

  it('its import worker threads store exactly what the sources store on the calling thread', async () => {
    const dir = tempDir('rk-compiled-');
    const f = miniFolder(join(dir, 's'), { runs: { dataRuns: 8, samples: 300 }, write: { digits: 6 } });
    const r = node(['--import', GUARD, DRIVER, build, f.dir, join(dir, 'threads.sqlite'), '2']);
    expect(r.code, r.stderr).toBe(0);
    const here = Store.open(join(dir, 'here.sqlite'));
    const rep = await importSessionFolder(here, f.dir, { actor: 'x', workers: 0 });
    expect(JSON.parse(r.stdout)).toEqual(JSON.parse(JSON.stringify(rep)));
    const there = Store.open(join(dir, 'threads.sqlite'));
    expect(comparableContents(there)).toEqual(comparableContents(here));
    here.close();
    there.close();
  }, 120_000);

  it('the launcher runs the current build once it is fresh, without compiling', async () => {
    await ensureCompiled({ quiet: true });
    const r = node(['--import', GUARD, BIN, '--version']);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stdout.trim()).toBe(version);
    expect(r.stderr).toBe('');
  }, 120_000);
});
