// Build Rakeline.
//   node scripts/build.mjs              renderer (vite, renderer/vite.config.ts → dist/renderer)
//                                        + Electron main and preload (esbuild → dist/main/*.cjs)
//   node scripts/build.mjs --renderer   the renderer only (browser mode)
//   node scripts/build.mjs --node       the command line, browser-mode server and worker threads
//                                        (esbuild → dist/node/<build>/*.mjs; scripts/compiled.mjs rebuilds
//                                        them on first run when a source changed)
//   --quiet                             only warnings and errors
// The full build also makes sure the demo session and the icons exist (electron-builder packs them).
import { build as esbuild } from 'esbuild';
import { existsSync } from 'node:fs';
import { spawnSync } from 'node:child_process';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

export const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const r = (...p) => path.join(root, ...p);

export async function buildRenderer({ quiet = false } = {}) {
  const { build } = await import('vite');
  await build({
    configFile: r('renderer', 'vite.config.ts'),
    logLevel: quiet ? 'warn' : 'info',
    build: { outDir: r('dist', 'renderer'), emptyOutDir: true },
  });
  if (!existsSync(r('dist', 'renderer', 'index.html'))) {
    throw new Error('the renderer build wrote no dist/renderer/index.html');
  }
}

const sqliteShim = {
  name: 'rakeline-sqlite-shim',
  setup(b) {
    const shim = r('scripts', 'sqlite-shim.cjs');
    b.onResolve({ filter: /^better-sqlite3$/ }, (args) =>
      args.importer === shim ? { path: 'better-sqlite3', external: true } : { path: shim },
    );
  },
};

export async function buildMain({ quiet = false, outdir = r('dist', 'main') } = {}) {
  await esbuild({
    absWorkingDir: root,
    entryPoints: { electron: r('main', 'electron.ts'), preload: r('main', 'preload.ts'), importWorker: r('main', 'importWorker.ts') },
    outdir,
    outExtension: { '.js': '.cjs' },
    bundle: true,
    platform: 'node',
    format: 'cjs',
    target: 'node22',
    external: ['electron'],
    plugins: [sqliteShim],
    sourcemap: true,
    logLevel: quiet ? 'warning' : 'info',
    logOverride: { 'empty-import-meta': 'silent' },
  });
}

/** zod's namespace of locales pulls in every language's messages; the app uses English only. */
const zodEnglishOnly = {
  name: 'rakeline-zod-english-only',
  setup(b) {
    const shim = r('scripts', 'zod-locales-en.mjs');
    b.onResolve({ filter: /[\\/]locales[\\/]index\.js$/ }, (args) =>
      /[\\/]node_modules[\\/]zod[\\/]/.test(args.importer) ? { path: shim } : undefined,
    );
  },
};

/** The Node programs as compiled JavaScript (ES modules): the command line (main/cli.ts), the
 *  browser-mode server (main/serve.ts) and the import/reduction worker thread (main/importWorker.ts).
 *  The npm packages are bundled in (fewer files
 *  to resolve at start-up) except better-sqlite3, whose native addon is loaded from node_modules.
 *  Returns esbuild's metafile (the inputs: scripts/compiled.mjs records them to tell when to rebuild). */
export async function buildNode({ quiet = false, outdir = r('dist', 'node', 'manual') } = {}) {
  const res = await esbuild({
    absWorkingDir: root,
    entryPoints: {
      cli: r('main', 'cli.ts'),
      serve: r('main', 'serve.ts'),
      importWorker: r('main', 'importWorker.ts'),
    },
    outdir,
    outExtension: { '.js': '.mjs' },
    // what the entries share, and what they load only on demand (main/cliDeps.ts), in chunks of
    // their own: `rakeline --version` compiles the command-line parser, not the reduction core
    splitting: true,
    chunkNames: '[name]-[hash]', // beside the entries: importWorker.mjs is ./ from every chunk
    bundle: true,
    platform: 'node',
    format: 'esm',
    target: 'node20',
    external: ['better-sqlite3', 'fsevents', 'electron'],
    // the CommonJS packages bundled in call require() for Node's own modules
    plugins: [zodEnglishOnly],
    banner: { js: "import { createRequire as __rakelineRequire } from 'node:module'; const require = __rakelineRequire(import.meta.url);" },
    sourcemap: true,
    metafile: true,
    logLevel: quiet ? 'warning' : 'info',
  });
  // The command line once more, as one CommonJS file (cli.cjs): the launcher compiles it through
  // node:vm with V8's code cache kept beside it (scripts/compiled.mjs loadCli), which Node 20 offers
  // for scripts but not for ES modules. import.meta.url is the file's own URL, so the worker
  // threads are found next to it (dist/node/<build>/importWorker.mjs) as from cli.mjs.
  const cjs = await esbuild({
    absWorkingDir: root,
    entryPoints: { cli: r('main', 'cli.ts') },
    outdir,
    outExtension: { '.js': '.cjs' },
    bundle: true,
    platform: 'node',
    format: 'cjs',
    target: 'node20',
    external: ['better-sqlite3', 'fsevents', 'electron'],
    plugins: [zodEnglishOnly],
    define: { 'import.meta.url': '__rakelineFileUrl' },
    banner: { js: "const __rakelineFileUrl = require('node:url').pathToFileURL(__filename).href;" },
    sourcemap: true,
    metafile: true,
    logLevel: quiet ? 'warning' : 'info',
    logOverride: { 'empty-import-meta': 'silent' },
  });
  return { ...res.metafile, inputs: { ...res.metafile.inputs, ...cjs.metafile.inputs } };
}

function runTs(file) {
  const tsx = r('node_modules', 'tsx', 'dist', 'cli.mjs');
  const res = spawnSync(process.execPath, [tsx, file], { cwd: root, stdio: 'inherit' });
  if (res.status !== 0) throw new Error(`${path.relative(root, file)} failed`);
}

export function ensureDemoSession() {
  if (existsSync(r('resources', 'demo', 'session', 'setup.json'))) return;
  const gen = r('resources', 'demo', 'generate.ts');
  if (!existsSync(gen)) {
    console.warn('rakeline: resources/demo/generate.ts is missing; no demo session is bundled.');
    return;
  }
  runTs(gen);
}

export async function ensureIcons() {
  if (existsSync(r('resources', 'icons', 'icon.png'))) return;
  const { writeIcons } = await import(pathToFileURL(r('scripts', 'icons.mjs')).href);
  writeIcons();
}

export async function buildAll({ rendererOnly = false, quiet = false } = {}) {
  await buildRenderer({ quiet });
  if (rendererOnly) return;
  await buildMain({ quiet });
  ensureDemoSession();
  await ensureIcons();
}

if (process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  const args = new Set(process.argv.slice(2));
  if (args.has('--node')) {
    import('./compiled.mjs')
      .then(({ compileNode }) => compileNode({ quiet: args.has('--quiet') }))
      .catch((e) => {
        console.error(`rakeline build: ${e instanceof Error ? e.message : String(e)}`);
        process.exit(1);
      });
  } else buildAll({ rendererOnly: args.has('--renderer'), quiet: args.has('--quiet') }).catch((e) => {
    console.error(`rakeline build: ${e instanceof Error ? e.message : String(e)}`);
    process.exit(1);
  });
}
