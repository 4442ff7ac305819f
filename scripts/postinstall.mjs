// 1. Compile the command line, the browser-mode server and their worker threads to JavaScript
//    (dist/node, scripts/compiled.mjs), so that no compiler runs when they start. A failure here
//    only costs the first start a compile (the launchers rebuild what is missing or stale).
// 2. Fetch the Electron binary when the network allows it; never fail the install.
// npm 11's allowScripts keeps electron's own install script from running, so we run it here
// with a time limit. Offline (as on CI) this prints one line and carries on: tests and the
// browser mode do not need the binary.
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { createRequire } from 'node:module';

const require = createRequire(import.meta.url);
try {
  const { compileNode } = await import('./compiled.mjs');
  await compileNode({ quiet: true });
  console.log('rakeline: compiled the command line and the browser-mode server into dist/node.');
} catch (e) {
  console.log(`rakeline: could not compile dist/node now (${e instanceof Error ? e.message : String(e)}); the first start will.`);
}
let installer;
try {
  installer = require.resolve('electron/install.js');
} catch {
  console.log('rakeline: electron package not installed (production install?), skipping desktop binary.');
  process.exit(0);
}
if (process.env.RAKELINE_SKIP_ELECTRON === '1' || process.env.CI === 'true') {
  console.log('rakeline: skipping the Electron binary download (CI or RAKELINE_SKIP_ELECTRON=1); browser mode still works.');
  process.exit(0);
}
const r = spawnSync(process.execPath, [installer], { stdio: ['ignore', 'pipe', 'pipe'], timeout: 180_000 });
const pathTxt = installer.replace(/install\.js$/, 'path.txt');
if (r.status === 0 && existsSync(pathTxt)) {
  console.log('rakeline: Electron binary installed.');
} else {
  console.log('rakeline: Electron binary not downloaded (offline?); `npm start` will fall back to browser mode.');
}
process.exit(0);
