// Driver for test/compiled-build.test.ts: imports a session folder through a compiled build's
// command-line modules with worker threads (so the compiled import worker runs), prints the report.
//   node [--import no-compiler.mjs] compiled-import.mjs BUILD_DIR FOLDER DB WORKERS
import path from 'node:path';
import { pathToFileURL } from 'node:url';

const [dir, folder, db, workers] = process.argv.slice(2);
const { loadCliDeps } = await import(pathToFileURL(path.join(dir, 'cli.mjs')).href);
const { Store, importSessionFolder } = await loadCliDeps();
const store = Store.open(db);
try {
  const rep = await importSessionFolder(store, folder, { actor: 'x', workers: Number(workers) });
  await store.settled();
  process.stdout.write(JSON.stringify(rep));
} finally {
  store.close();
}
