// `npm start`: the desktop app when the Electron binary is installed, else browser mode.
// Electron needs better-sqlite3's addon built for its own ABI. The tests need the Node-ABI build in
// node_modules, so the Electron copy is built apart, in dist/native/, with @electron/rebuild, and
// handed to Electron through RAKELINE_SQLITE_BINDING (scripts/sqlite-shim.cjs). npm exports
// npm_config_* variables (npm_config_nodedir among them) that would silently make node-gyp build
// against Node's headers, so the rebuild runs with all of them removed.
import { spawn, spawnSync } from 'node:child_process';
import { cpSync, existsSync, mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';
import { buildAll, root } from './build.mjs';

const require = createRequire(import.meta.url);
const r = (...p) => path.join(root, ...p);

function electronBinary() {
  try {
    const p = require('electron'); // the binary's path, or throws when it was never downloaded
    return typeof p === 'string' && existsSync(p) ? p : null;
  } catch {
    return null;
  }
}

/** process.env without npm's configuration (and without ELECTRON_RUN_AS_NODE). */
function cleanEnv(extra = {}) {
  const env = {};
  for (const [k, v] of Object.entries(process.env)) {
    if (/^npm_config_/i.test(k) || k === 'ELECTRON_RUN_AS_NODE') continue;
    env[k] = v;
  }
  return { ...env, ...extra };
}

const nativeDir = r('dist', 'native');
const nativePkg = path.join(nativeDir, 'node_modules', 'better-sqlite3');
const bindingFile = path.join(nativePkg, 'build', 'Release', 'better_sqlite3.node');
const markerFile = path.join(nativeDir, 'abi.json');

/** Load the rebuilt addon inside Electron (as Node) and report Electron's ABI. */
function probe(electron) {
  const script = `
    const D = require(${JSON.stringify(r('node_modules', 'better-sqlite3'))});
    const db = new D(':memory:', { nativeBinding: ${JSON.stringify(bindingFile)} });
    const v = db.prepare('select sqlite_version() as v').get().v;
    db.close();
    process.stdout.write(JSON.stringify({ modules: process.versions.modules, electron: process.versions.electron, sqlite: v }));`;
  const res = spawnSync(electron, ['-e', script], {
    env: cleanEnv({ ELECTRON_RUN_AS_NODE: '1' }), encoding: 'utf8', timeout: 60_000,
  });
  if (res.status !== 0) return { ok: false, error: (res.stderr || res.stdout || `exit ${res.status}`).trim() };
  try {
    return { ok: true, ...JSON.parse(res.stdout.trim().split('\n').pop()) };
  } catch {
    return { ok: false, error: `unexpected output: ${res.stdout}` };
  }
}

function ensureElectronSqlite(electron) {
  const electronVersion = JSON.parse(readFileSync(require.resolve('electron/package.json'), 'utf8')).version;
  const sqliteVersion = JSON.parse(readFileSync(r('node_modules', 'better-sqlite3', 'package.json'), 'utf8')).version;
  if (existsSync(markerFile) && existsSync(bindingFile)) {
    const m = JSON.parse(readFileSync(markerFile, 'utf8'));
    if (m.electron === electronVersion && m.betterSqlite3 === sqliteVersion) {
      const p = probe(electron);
      if (p.ok && p.modules === m.modules) return;
    }
  }
  const rebuild = r('node_modules', '@electron', 'rebuild', 'lib', 'cli.js');
  if (!existsSync(rebuild)) {
    throw new Error('@electron/rebuild is not installed (it comes with electron-builder); run `npm install`.');
  }
  console.log(`rakeline: building better-sqlite3 ${sqliteVersion} for Electron ${electronVersion} in dist/native (once)…`);
  rmSync(nativeDir, { recursive: true, force: true });
  mkdirSync(path.dirname(nativePkg), { recursive: true });
  const builtDir = path.join(r('node_modules', 'better-sqlite3'), 'build');
  cpSync(r('node_modules', 'better-sqlite3'), nativePkg, {
    recursive: true,
    filter: (src) => src !== builtDir && !src.startsWith(builtDir + path.sep),
  });
  writeFileSync(path.join(nativeDir, 'package.json'), JSON.stringify({
    name: 'rakeline-native', private: true, version: '0.0.0', dependencies: { 'better-sqlite3': sqliteVersion },
  }, null, 2));
  const res = spawnSync(process.execPath, [
    rebuild, '--version', electronVersion, '--module-dir', nativeDir, '--only', 'better-sqlite3', '--force',
  ], { cwd: nativeDir, env: cleanEnv(), stdio: 'inherit' });
  if (res.status !== 0 || !existsSync(bindingFile)) {
    throw new Error('@electron/rebuild could not build better-sqlite3 for Electron (it needs the network once for Electron\'s headers).');
  }
  const p = probe(electron);
  if (!p.ok) throw new Error(`the rebuilt better-sqlite3 does not load in Electron: ${p.error}`);
  writeFileSync(markerFile, JSON.stringify({
    electron: electronVersion, betterSqlite3: sqliteVersion, modules: p.modules, sqlite: p.sqlite, builtAt: new Date().toISOString(),
  }, null, 2));
  console.log(`rakeline: better-sqlite3 loads in Electron ${p.electron} (ABI ${p.modules}, SQLite ${p.sqlite}).`);
}

function run(cmd, args, env) {
  const child = spawn(cmd, args, { cwd: root, stdio: 'inherit', env });
  const forward = (sig) => () => child.kill(sig);
  process.on('SIGINT', forward('SIGINT'));
  process.on('SIGTERM', forward('SIGTERM'));
  child.on('exit', (code, signal) => process.exit(code ?? (signal ? 1 : 0)));
}

async function main() {
  const electron = electronBinary();
  if (electron) {
    await buildAll({ quiet: true });
    ensureElectronSqlite(electron);
    run(electron, ['.'], cleanEnv({ RAKELINE_SQLITE_BINDING: bindingFile }));
    return;
  }
  await buildAll({ rendererOnly: true, quiet: true });
  run(process.execPath, [r('scripts', 'serve.mjs')], {
    ...process.env,
    RAKELINE_SERVE_BANNER: 'Electron binary not installed (offline install?) — starting browser mode instead:',
  });
}

main().catch((e) => {
  console.error(`rakeline start: ${e instanceof Error ? e.message : String(e)}`);
  process.exit(1);
});
