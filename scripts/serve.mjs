// Browser mode (`npm run serve`, and `npm start` without the Electron binary): the compiled server
// dist/node/serve.mjs, rebuilt first when a source changed (scripts/compiled.mjs); with
// RAKELINE_FROM_SOURCES=1 the TypeScript source through tsx. Options as main/serve.ts.
import { loadEntry } from './compiled.mjs';

const { serveMain } = await loadEntry('serve', 'main/serve.ts');
await serveMain(process.argv);
