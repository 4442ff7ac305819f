// What the command line's commands run on — the store, the importer, the reduction, the sheet, the
// exports, the progress bar and the folder watcher — loaded by main/cli.ts on first need
// (`loadCliDeps`), so that `rakeline --version` and `--help` start without compiling the store,
// the reduction core and zod (about half of the command line's start-up time).
export { Store, StoreFullError, isDiskFull } from './store';
export { runsNeedingReduction } from './repair';
export { importSessionFolder } from './import';
export { reduceStoredSession, reduceStoredSessionAsync, SAVE_BATCH, sessionSummary, sessionsWithDecisions } from './reduceService';
export { storedDaySheet } from './daysheetData';
export { exportResultsCsv, exportResultsJson } from './export';
export { listRunsMarked, staleRuns } from './stale';
export { runRanges } from './daysheet';
export { settingsPatchSchema } from '../app/log/schema';
export { correctedMomentumCl } from '../app/reduce';
export { SingleBar, Presets } from 'cli-progress';

/** What only `follow` needs (the IPC handlers' module brings the whole contract with it). */
export async function followDeps() {
  const [{ runsAffectedBy, readySource }, { importSession }, { watch }] = await Promise.all([import('./handlers'), import('./import'), import('chokidar')]);
  return { runsAffectedBy, readySource, importSession, watch };
}
