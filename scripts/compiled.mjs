// The compiled JavaScript the command line, the browser-mode server and their worker threads run
// (dist/node/<build>/*.mjs, built by esbuild: scripts/build.mjs buildNode). Built by `npm install`'s
// postinstall; before each start the launchers (bin/rakeline.mjs, scripts/serve.mjs) check it
// against the sources it was built from and rebuild it first when any of them changed. Otherwise
// nothing is compiled at run time: no tsx, no esbuild, only `node dist/node/…`.
//
// The check: dist/node/current.json names the build and lists every source esbuild read and the build scripts, each with
// its size and modification time; any difference, or a missing file, means rebuild. The bundled npm
// packages are stood for by node_modules/.package-lock.json, which npm rewrites at every install.
// About 60 stat() calls, well under a millisecond.
// Keep this file free of static imports beyond Node's own modules: it runs at every start.
import { existsSync, mkdirSync, readdirSync, readFileSync, renameSync, rmSync, statSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

export const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
/** Where the builds live: one folder per build, and current.json naming the one to run. */
export const NODE_DIST = path.join(root, 'dist', 'node');
const CURRENT = 'current.json';
/** Files that change the output without being esbuild inputs. */
const EXTRA_INPUTS = ['scripts/build.mjs', 'scripts/compiled.mjs', 'package.json', 'package-lock.json', 'node_modules/.package-lock.json'];
/** Builds older than this are removed by the next build (a long-running server may still be
 *  loading chunks or starting worker threads from the one before). */
const KEEP_OLD_MS = 24 * 3600 * 1000;

function sig(file) {
  const s = statSync(file);
  return [s.size, s.mtimeMs];
}

/** The current build's record ({ format, build, builtAt, node, inputs }), or null. */
export function currentBuild(dist = NODE_DIST) {
  try {
    return JSON.parse(readFileSync(path.join(dist, CURRENT), 'utf8'));
  } catch {
    return null;
  }
}

/** Why the build must be made again (a sentence), or null when it matches its sources. */
export function staleReason(dist = NODE_DIST, base = root) {
  const stamp = currentBuild(dist);
  if (!stamp) return 'no compiled build yet';
  if (stamp.format !== 1 || typeof stamp.build !== 'string' || !stamp.inputs || typeof stamp.inputs !== 'object') {
    return 'the build record is of another format';
  }
  if (stamp.node !== process.versions.modules) return 'built for another Node version';
  if (!existsSync(path.join(dist, stamp.build))) return 'the build folder is gone';
  for (const [rel, [size, mtime]] of Object.entries(stamp.inputs)) {
    let now;
    try {
      now = sig(path.join(base, rel));
    } catch {
      return `${rel} is gone`;
    }
    if (now[0] !== size || now[1] !== mtime) return `${rel} changed`;
  }
  return null;
}

/** Build the Node programs from the sources into a new folder of `dist` and make it the current
 *  one (current.json replaced by a rename, so a process starting meanwhile sees either build,
 *  whole). Processes already running keep the folder they started from. Returns that folder. */
export async function compileNode({ quiet = false, dist = NODE_DIST } = {}) {
  const { buildNode } = await import(pathToFileURL(path.join(root, 'scripts', 'build.mjs')).href);
  const id = `b-${Date.now().toString(36)}-${process.pid}`;
  const dir = path.join(dist, id);
  mkdirSync(dist, { recursive: true });
  let meta;
  try {
    meta = await buildNode({ quiet: true, outdir: dir });
  } catch (e) {
    rmSync(dir, { recursive: true, force: true });
    throw e;
  }
  const inputs = {};
  const sources = Object.keys(meta.inputs).filter((rel) => !rel.split(/[\\/]/).includes('node_modules'));
  for (const rel of [...sources, ...EXTRA_INPUTS]) {
    const file = path.resolve(root, rel);
    if (!existsSync(file)) continue; // the lock files are optional
    inputs[path.relative(root, file).split(path.sep).join('/')] = sig(file);
  }
  const previous = currentBuild(dist)?.build;
  const tmp = path.join(dist, `${CURRENT}.${id}`);
  writeFileSync(tmp, JSON.stringify({ format: 1, build: id, builtAt: new Date().toISOString(), node: process.versions.modules, inputs }, null, 1));
  renameSync(tmp, path.join(dist, CURRENT));
  for (const name of readdirSync(dist)) {
    if (name === id || name === previous || !name.startsWith('b-')) continue;
    try {
      if (Date.now() - statSync(path.join(dist, name)).mtimeMs > KEEP_OLD_MS) rmSync(path.join(dist, name), { recursive: true, force: true });
    } catch { /* another process removed it */ }
  }
  if (!quiet) console.error(`rakeline: compiled the command line, server and worker threads into ${path.relative(root, dir)}`);
  return dir;
}

/** The folder of the current build, rebuilt first when stale (one line on stderr says why).
 *  Throws when it cannot build. */
export async function ensureCompiled({ quiet = false, dist = NODE_DIST } = {}) {
  const why = staleReason(dist);
  if (why) {
    if (!quiet) console.error(`rakeline: compiling the sources (${why})…`);
    return compileNode({ quiet: true, dist });
  }
  return path.join(dist, currentBuild(dist).build);
}

/** The current build's folder, or null when running from the sources (RAKELINE_FROM_SOURCES=1)
 *  or when the build cannot be made (one line on stderr says so). */
async function buildFolder(dist = NODE_DIST) {
  if (process.env.RAKELINE_FROM_SOURCES === '1') return null;
  try {
    return await ensureCompiled({ dist });
  } catch (e) {
    console.error(`rakeline: cannot compile the sources (${e instanceof Error ? e.message : String(e)}); running them through tsx instead.`);
    return null;
  }
}

async function fromSources(source) {
  const { register } = await import('tsx/esm/api');
  register();
  return import(pathToFileURL(path.join(root, source)).href);
}

/** Load one compiled entry (cli, serve) — or, with RAKELINE_FROM_SOURCES=1, or when the build
 *  cannot be made (a read-only install with changed sources, esbuild missing), its TypeScript
 *  source through tsx, with one line on stderr saying so. Resolves to the module. */
export async function loadEntry(name, source) {
  const dir = await buildFolder();
  if (dir) return import(pathToFileURL(path.join(dir, `${name}.mjs`)).href);
  return fromSources(source);
}

/** V8's code cache of the command line's CommonJS build, beside it in the build's folder. */
export const CLI_CACHE = 'cli.cjs.cache';

/**
 * The command line (main/cli.ts) for bin/rakeline.mjs: the build's cli.cjs compiled through
 * node:vm with V8's code cache (CLI_CACHE), so a start reads the compiled code instead of parsing
 * and compiling ~1.6 MB of JavaScript again (measured on the demo day, 2 cores, idle:
 * `rakeline runs` 293 → 205 ms, median of 11 interleaved starts). Node 20 has no code cache for ES modules, hence the CommonJS
 * build. Resolves to { cli, cache, keep }: the module; 'used', 'rejected' (V8 refused it: another
 * Node or other V8 flags) or 'none'; and keep(), which writes the cache when there was none or it
 * was refused, once the command has loaded its working modules (cli.commandModulesLoaded(); the
 * cache then holds the functions that command compiled, not only the argument parser of
 * `--version`). Written to a temporary name and renamed, so a start meanwhile reads a whole cache
 * or none; a cache that cannot be written (a read-only install) is left out silently. V8 checks a
 * cache against its own version, flags and the source's length before using it, and the cache
 * lives in the folder of the build it was made from, which a rebuild replaces. For `--version`
 * and `--help` alone, without cli.cjs (a build of before) or from the sources: as loadEntry,
 * with keep() doing nothing. `argv`: the arguments after the script; `dist`: the builds' folder.
 */
export async function loadCli({ argv = process.argv.slice(2), dist = NODE_DIST } = {}) {
  const dir = await buildFolder(dist);
  const none = () => {};
  if (!dir) return { cli: await fromSources('main/cli.ts'), cache: 'none', keep: none };
  const file = path.join(dir, 'cli.cjs');
  // `--version` and `--help` need the argument parser only, which the split ES-module build
  // loads alone (cli.mjs, its command modules in chunks of their own): faster than reading the
  // whole command line's cache (measured, idle: 97 against 113 ms).
  const parserOnly = argv.length > 0 && argv.every((a) => /^(-V|--version|-h|--help)$/.test(a));
  if (parserOnly || !existsSync(file)) return { cli: await import(pathToFileURL(path.join(dir, 'cli.mjs')).href), cache: 'none', keep: none };
  const [{ default: vm }, { default: Module }] = await Promise.all([import('node:vm'), import('node:module')]);
  const cacheFile = path.join(dir, CLI_CACHE);
  let cachedData;
  try {
    cachedData = readFileSync(cacheFile);
  } catch { /* none yet */ }
  const script = new vm.Script(Module.wrap(readFileSync(file, 'utf8')), { filename: file, cachedData });
  const cache = cachedData ? (script.cachedDataRejected ? 'rejected' : 'used') : 'none';
  const module = { exports: {} };
  script.runInThisContext()(module.exports, Module.createRequire(file), module, file, dir);
  const cli = module.exports;
  const keep = () => {
    if (cache === 'used' || typeof cli.commandModulesLoaded !== 'function' || !cli.commandModulesLoaded()) return;
    const tmp = `${cacheFile}.${process.pid}`;
    try {
      writeFileSync(tmp, script.createCachedData());
      renameSync(tmp, cacheFile);
    } catch {
      try {
        rmSync(tmp, { force: true });
      } catch { /* read-only: nothing was written */ }
    }
  };
  return { cli, cache, keep };
}
