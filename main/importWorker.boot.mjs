// Entry of an import worker thread when Rakeline runs from its TypeScript sources (tsx: the command
// line, browser mode, tests): registers tsx in the thread, then loads the worker. The packaged
// desktop app starts the bundled dist/main/importWorker.cjs instead.
import { register } from 'tsx/esm/api';

register();
await import('./importWorker.ts');
