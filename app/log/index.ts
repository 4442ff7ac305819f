// The Rakeline log format (docs/LOG-FORMAT.md): setup.json, runs.csv and the run logs.
// Pure modules: strings in, typed data or a LogError (file, line, channel, expected) out.
export { LogError, isLogError, type LogErrorDetail } from './errors';
export { parseSetup } from './setup';
export { parseRunIndex, parseRunIndexDetailed, type RunIndexResult, INDEX_COLUMNS } from './runIndex';
export { createRunParser, TIME_COLUMN, RUN_COLUMN, type RunParser, type RunParserOptions, type RunChannels } from './runParser';
export {
  SETUP_FILE, INDEX_FILE, LONG_LOG_DEFAULT, planRunFiles, runParserFor, collectRuns, missingFileError,
  parseSessionTexts, type RunFilePlan, type ParsedTexts,
} from './session';
export { setupSchema, settingsSchema, settingsPatchSchema, setupJsonSchema } from './schema';
