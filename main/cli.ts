// The `rakeline` command line: a thin layer over the store, the importer, the reduction service,
// the day sheet and the exports. Exit codes: 0 ok, 1 bad input (log errors name file, line and
// channel), 2 usage errors (unknown command or option, bad option value, ambiguous session).
import { existsSync, rmSync, writeFileSync } from 'node:fs';
import { relative, resolve } from 'node:path';
import { userInfo } from 'node:os';
import { pathToFileURL } from 'node:url';
import { Command, CommanderError, InvalidArgumentError, Option } from 'commander';
import type { Store, RunRow, ImportProgress } from './store';
import type * as CliDeps from './cliDeps';
import pkg from '../package.json';
import { isLogError } from '../app/log/errors';
import { flagShort, flagsLine } from '../app/flags';
import { explainedByFindings, notesByRun, splitFlags } from '../app/sessionFaults';
import { staleRunNumbers } from '../app/stale';
import { DEFAULT_SETTINGS, type Flag, type ResultDigest, type RunResult, type SessionFinding, type SessionSummary, type Settings } from '../app/types';

export const DEFAULT_DB = 'rakeline.sqlite';

let deps: typeof CliDeps | undefined;
/** The modules the commands run on (main/cliDeps.ts), loaded once; main() loads them before it
 *  parses any command line other than a request for help or the version. */
export async function loadCliDeps(): Promise<typeof CliDeps> {
  return (deps ??= await import('./cliDeps'));
}
/** Whether the command modules have been loaded (scripts/compiled.mjs keeps the code cache of a
 *  command that ran on them, not of `--version`). */
export function commandModulesLoaded(): boolean {
  return deps !== undefined;
}
/** The loaded command modules (main() has loaded them before any command runs). */
function D(): typeof CliDeps {
  if (!deps) throw new Error('internal: the command modules were not loaded');
  return deps;
}

/** Bad use of the command line (exit 2). */
export class UsageError extends Error { override name = 'UsageError'; }
/** Bad input: missing database or session, unreadable folder (exit 1). */
export class InputError extends Error { override name = 'InputError'; }

interface GlobalOpts { db?: string; session?: string; actor?: string; reviewer?: string }

// ---------------------------------------------------------------------------------------------
// Option parsers (throwing InvalidArgumentError makes commander report a usage error).

/** "3,5-9,12" → [3, 5, 6, 7, 8, 9, 12]. */
export function parseRunList(text: string): number[] {
  const out = new Set<number>();
  for (const part of text.split(',').map((s) => s.trim()).filter(Boolean)) {
    const m = /^(\d+)(?:\s*-\s*(\d+))?$/.exec(part);
    if (!m) throw new InvalidArgumentError(`"${part}" is not a run number or range like 5-9`);
    const a = Number(m[1]);
    const b = m[2] !== undefined ? Number(m[2]) : a;
    if (b < a) throw new InvalidArgumentError(`range "${part}" runs backwards`);
    if (b - a > 100000) throw new InvalidArgumentError(`range "${part}" is too long`);
    for (let r = a; r <= b; r++) out.add(r);
  }
  if (!out.size) throw new InvalidArgumentError('no run numbers given');
  return [...out].sort((x, y) => x - y);
}

/** Collects repeated `--set key=value` into a settings patch, checked against the settings schema. */
export function parseSetting(text: string, prev: Partial<Settings> = {}): Partial<Settings> {
  const m = /^([A-Za-z]+)=(.*)$/.exec(text);
  if (!m) throw new InvalidArgumentError(`"${text}" is not key=value`);
  const [, key, raw] = m;
  if (!(key in DEFAULT_SETTINGS)) {
    throw new InvalidArgumentError(`unknown setting "${key}" (known: ${Object.keys(DEFAULT_SETTINGS).join(', ')})`);
  }
  const def = DEFAULT_SETTINGS[key as keyof Settings];
  let value: unknown = raw;
  if (typeof def === 'number') {
    value = raw.trim() === '' ? NaN : Number(raw);
  } else if (Array.isArray(def)) {
    value = raw.split(',').map((s) => s.trim()).filter(Boolean);
  }
  const patch = { ...prev, [key]: value };
  // Not loaded only when the command line also asks for help or the version: nothing runs then.
  const check = deps ? deps.settingsPatchSchema.safeParse({ [key]: value }) : { success: true as const };
  if (!check.success) {
    const issue = check.error.issues[0];
    throw new InvalidArgumentError(`setting ${key}=${raw}: ${issue?.message ?? 'invalid value'}`);
  }
  return patch as Partial<Settings>;
}

function parsePositiveInt(text: string): number {
  if (!/^\d+$/.test(text) || Number(text) < 1) throw new InvalidArgumentError(`"${text}" is not a positive whole number`);
  return Number(text);
}

// ---------------------------------------------------------------------------------------------
// Store and session helpers.

function dbPath(g: GlobalOpts): string {
  return resolve(g.db ?? process.env.RAKELINE_DB ?? DEFAULT_DB);
}

/** How a command uses the database: 'read' opens it read-only (nothing written, also on a
 *  read-only disk), 'write' needs it to exist and be writable, 'create' may make it. */
type Access = 'read' | 'write' | 'create';

function openStore(g: GlobalOpts, access: Access): Store {
  const file = dbPath(g);
  if (access !== 'create' && !existsSync(file)) {
    throw new InputError(`no database at ${file} (import a session first with: rakeline ingest <folder>, or pass --db)`);
  }
  return D().Store.open(file, { readOnly: access === 'read' });
}

/** The session named by --session, or the only one in the database. */
export function pickSession(store: Store, g: GlobalOpts): number {
  if (g.session !== undefined) {
    const id = Number(g.session);
    if (!Number.isInteger(id) || id < 1) throw new UsageError(`--session expects a session id (a positive whole number), got "${g.session}"`);
    try {
      return store.getSession(id).id;
    } catch {
      throw new InputError(`no session ${id} in ${store.file} (list them with: rakeline sessions)`);
    }
  }
  const all = store.listSessions();
  if (!all.length) throw new InputError(`no sessions in ${store.file} (import one with: rakeline ingest <folder>)`);
  if (all.length > 1) {
    throw new UsageError(`${store.file} holds ${all.length} sessions; choose one with --session <id> (ids: ${all.map((s) => s.id).join(', ')})`);
  }
  return all[0].id;
}

/** The operating-system user's login name, without any prefix ('' when it cannot be told). */
function osUserName(): string {
  try {
    return userInfo().username;
  } catch {
    return process.env.USER ?? process.env.USERNAME ?? '';
  }
}

/** Who is acting, as a name (recorded with every review, tap override and setting change, and
 *  printed on the day sheet — what browser mode asks for once per launch): --reviewer, --actor,
 *  $RAKELINE_REVIEWER, $RAKELINE_ACTOR, else the OS user's name. `given` is false for the last. */
export function reviewerOf(g: GlobalOpts, env: NodeJS.ProcessEnv = process.env): { name: string; given: boolean } {
  const given = [g.reviewer, g.actor, env.RAKELINE_REVIEWER, env.RAKELINE_ACTOR].map((x) => x?.trim()).find((x) => x);
  if (given) return { name: given, given: true };
  return { name: osUserName() || 'unnamed command-line user', given: false };
}

function actorOf(g: GlobalOpts): string {
  return reviewerOf(g).name;
}

async function withStore<T>(g: GlobalOpts, access: Access, fn: (store: Store) => Promise<T> | T): Promise<T> {
  const store = openStore(g, access);
  try {
    return await fn(store);
  } finally {
    store.close();
  }
}

// ---------------------------------------------------------------------------------------------
// Output helpers.

function out(text: string): void {
  process.stdout.write(text.endsWith('\n') ? text : `${text}\n`);
}
function note(text: string): void {
  process.stderr.write(`${text}\n`);
}

/** A progress bar on stderr, only when stderr is a terminal. */
function progress(): { onProgress?: (p: ImportProgress) => void; stop(): void } {
  if (!process.stderr.isTTY) return { stop() {} };
  const { SingleBar, Presets } = D();
  const bar = new SingleBar(
    { stream: process.stderr, format: '{phase} [{bar}] {percentage}% {detail}', hideCursor: true, clearOnComplete: true, etaBuffer: 50 },
    Presets.shades_classic,
  );
  let started = false;
  let phase = '';
  return {
    onProgress(p) {
      const byBytes = p.phase === 'parse' || p.phase === 'scan';
      const total = byBytes ? Math.max(1, p.bytesTotal) : Math.max(1, p.runsTotal);
      const done = byBytes ? p.bytesDone : p.runsDone;
      const detail = byBytes
        ? `${(p.bytesDone / 1e6).toFixed(1)}/${(p.bytesTotal / 1e6).toFixed(1)} MB`
        : `${p.runsDone}/${p.runsTotal} runs`;
      if (!started || phase !== p.phase) {
        if (started) bar.stop();
        bar.start(total, done, { phase: p.phase.padEnd(6), detail });
        started = true;
        phase = p.phase;
      } else {
        bar.setTotal(total);
        bar.update(done, { detail });
      }
    },
    stop() {
      if (started) bar.stop();
    },
  };
}


const n = (v: number | undefined | null, d: number, w: number) =>
  (v === undefined || v === null || !Number.isFinite(v) ? '-' : v.toFixed(d)).padStart(w);

/** Short names of the wall-correction methods for the `runs` table's `wall` column (the method a
 *  run was corrected with, 'auto' resolved; docs/WALL-CORRECTIONS.md). */
export const METHOD_COLUMN: Record<string, string> = {
  'wall-signature': 'signature', maskell: 'Maskell', 'barlow-rae-pope': 'BRP', 'allen-vincenti': 'A&V', none: 'none',
};

/** What the session summary (the day log's and the sheet's: main/reduceService.ts sessionSummary)
 *  says of the run list: its findings and the runs still needing a decision, with each run's
 *  automatic drops to tell which of its flags the findings explain. */
export interface FindingsView {
  findings: SessionFinding[];
  dropped: ReadonlyMap<number, Pick<ResultDigest, 'dropped'>>;
  needsDecision: number[];
  dataRuns: number;
}

export function findingsView(summary: SessionSummary, runs: Iterable<Pick<ResultDigest, 'run' | 'dropped'>>): FindingsView {
  return {
    findings: summary.findings ?? [],
    dropped: new Map([...runs].map((r) => [r.run, r])),
    needsDecision: summary.needsDecision ?? [],
    dataRuns: summary.polar.length,
  };
}

/** A run's flags for the text outputs: the flags a session finding explains become a note after
 *  the rest ("note: leaking tap (session finding)"), since they are not a decision on this run. */
export function flagsText(run: number, flags: readonly Flag[], view?: FindingsView): string {
  const d = view?.dropped.get(run);
  if (!view || !d || !view.findings.length) return flagsLine(flags, 'short');
  const own = flags.filter((f) => !explainedByFindings(d, f, view.findings));
  const noted = flags.filter((f) => explainedByFindings(d, f, view.findings));
  const notes = noted.map((f) => `note: ${flagShort(f.code)} (session finding)`);
  return own.length ? [flagsLine(own, 'short'), ...notes].join('; ') : notes.join('; ') || 'ok';
}

/** The lines under a run list or a reduction report that state the findings once. */
export function findingsLines(view: FindingsView): string[] {
  if (!view.findings.length) return [];
  return [
    'Session findings (reported once; on each run a note, not a decision):',
    ...view.findings.map((f) => `  ${f.text}`),
    `${view.needsDecision.length} of ${view.dataRuns} data run(s) need a decision${view.needsDecision.length ? `: runs ${view.needsDecision.join(', ')}` : ''}`,
  ];
}

/** The run list as a fixed-width text table; `methods` (run → applied wall-correction method)
 *  fills the `wall` column ('-' where a run has no result); with `view` the flags that session
 *  findings explain are shown as notes and the findings are stated once under the table. */
export function runsTable(rows: RunRow[], methods: ReadonlyMap<number, string> = new Map(), view?: FindingsView): string {
  const head = `${'run'.padStart(4)} ${'kind'.padEnd(4)} ${'time'.padEnd(8)} ${'a_geo'.padStart(6)} ${'a_cor'.padStart(6)} ${'q_Pa'.padStart(7)} ${'Re_1e6'.padStart(6)} ${'cl_p'.padStart(7)} ${'cl_mom'.padStart(7)} ${'cd_wake'.padStart(8)} ${'cm_c4'.padStart(7)} ${'wall'.padEnd(9)}  flags`;
  const lines = rows.map((r) => {
    const x = r.result;
    const t = (/T(\d{2}:\d{2}:\d{2})/.exec(r.time)?.[1] ?? r.time).padEnd(8);
    const status = r.kind === 'zero' ? 'wind-off zero' : x ? flagsText(r.run, x.flags, view) : 'not reduced';
    const review = `${r.review ? ` [${r.review.verdict} by ${r.review.actor}]` : ''}${r.stale ? ' [stale]' : ''}`;
    const m = x ? methods.get(r.run) : undefined;
    const wall = (m ? METHOD_COLUMN[m] ?? m : '-').padEnd(9);
    return `${String(r.run).padStart(4)} ${r.kind.padEnd(4)} ${t} ${n(r.alphaDeg, 2, 6)} ${n(x?.alphaCorrDeg, 2, 6)} ${n(x?.q, 1, 7)} ${n(x ? x.Re / 1e6 : undefined, 3, 6)} ${n(x?.cl, 4, 7)} ${n(x?.clMom, 4, 7)} ${n(x?.cd, 5, 8)} ${n(x?.cmc4, 4, 7)} ${wall}  ${status}${review}`;
  });
  const key = 'wall: the wall-correction method of each run (signature = wall-pressure signature, Maskell, BRP = Barlow, Rae & Pope, A&V = Allen & Vincenti, none = uncorrected); a_cor, q, Re, cl, cd and cm are on that corrected basis';
  const stale = staleRunNumbers(rows);
  const note = stale.length
    ? [`${stale.length} stale result(s), reduced with other settings, bad taps or zeros than the session's now: runs ${stale.join(", ")} (\`reduce --stale\` re-reduces them)`]
    : [];
  return [head, ...lines, ...note, ...(view ? findingsLines(view) : []), ...(rows.some((r) => r.result) ? [key] : [])].join('\n');
}

/** One line for a reduced run (used by `reduce` and `follow`). */
export function resultLine(r: RunResult, prefix = 'run', view?: FindingsView): string {
  return `${resultHead(r, prefix)}, ${flagsText(r.run, r.flags, view)}`;
}

/** The coefficients part of resultLine. */
function resultHead(r: RunResult, prefix: string): string {
  const c = r.corrected;
  const f = (v: number, d: number) => (Number.isFinite(v) ? v.toFixed(d) : '-');
  return `${prefix} ${r.run}: alpha ${f(c.alphaDeg, 2)} deg, q ${f(c.q, 1)} Pa, cl ${f(c.cl, 4)} (momentum ${f(D().correctedMomentumCl(r), 4)}), cd ${f(c.cd, 5)}, cm ${f(c.cmc4, 4)}`;
}

function writeOut(text: string, file: string | undefined, what: string): void {
  if (!file) {
    process.stdout.write(text);
    return;
  }
  writeFileSync(resolve(file), text);
  note(`${what} written to ${resolve(file)}`);
}

function dataRunsOf(store: Store, sessionId: number): number[] {
  return store.listRuns(sessionId).filter((r) => r.kind === 'data').map((r) => r.run);
}

async function reduceAndTell(store: Store, sessionId: number, g: GlobalOpts, opts: { runs?: number[]; settings?: Partial<Settings> }): Promise<void> {
  const bar = progress();
  const t0 = performance.now();
  // Saved in bounded batches (main/reduceService.ts SaveInBatches): only the flagged runs' lines
  // are kept for the report, not every result of a large session.
  const flagged: { run: number; head: string; flags: Flag[]; dropped: RunResult['dropped'] }[] = [];
  let reduced = 0;
  let summary: SessionSummary;
  try {
    ({ reduced, summary } = await D().reduceStoredSessionAsync(store, sessionId, {
      ...opts, actor: actorOf(g), onProgress: bar.onProgress,
      batches: {
        size: D().SAVE_BATCH,
        // Only the report line's parts are kept of a flagged run, not the result.
        onSaved: (rs) => { for (const r of rs) if (r.flags.length) flagged.push({ run: r.run, head: resultHead(r, 'run'), flags: r.flags, dropped: r.dropped }); },
      },
    }));
  } finally {
    bar.stop();
  }
  const secs = ((performance.now() - t0) / 1000).toFixed(2);
  // The findings of the whole session's latest results (not only of the runs just reduced).
  const view = findingsView(summary, flagged);
  const deciding = flagged.filter((r) => view.needsDecision.includes(r.run));
  // A flag a session finding explains is a note, not a decision: it does not count the run as flagged.
  const notesOnly = flagged.length - deciding.length;
  out(`session ${sessionId}: reduced ${reduced} run(s) in ${secs} s, ${view.findings.length ? `${deciding.length} flagged (needing a decision)${notesOnly ? `, ${notesOnly} more with only notes of the session findings` : ''}` : `${flagged.length} flagged`}`);
  for (const r of deciding) out(`  ${r.head}, ${flagsText(r.run, r.flags, view)}`);
  for (const line of findingsLines(view)) out(line);
}

// ---------------------------------------------------------------------------------------------
// `follow`: watch a session folder; import and reduce each run file as it lands.

async function follow(folder: string, g: GlobalOpts, settleMs: number, reduce: boolean): Promise<void> {
  const dir = resolve(folder);
  if (!existsSync(dir)) throw new InputError(`no folder ${dir}`);
  const { runsAffectedBy, readySource, importSession, watch } = await D().followDeps();
  const store = openStore(g, 'create');
  const actor = actorOf(g);
  let busy = false;
  let again = false;
  let lastError = '';
  const warnedChanged = new Set<string>();
  const saidFindings = new Set<string>();

  let retry: ReturnType<typeof setTimeout> | null = null;
  const step = async () => {
    try {
      // Runs whose log is missing or still being written (modified less than the settle time
      // ago) wait; a log that grew after it was imported replaces its runs (replacedRuns).
      const ready = await readySource(dir, { settleMs });
      if (retry) clearTimeout(retry);
      retry = ready?.retryInMs != null ? setTimeout(() => void cycle(), ready.retryInMs + 20) : null;
      if (!ready || ready.source === null) return;
      const rep = await importSession(store, ready.source, { actor });
      lastError = '';
      for (const run of rep.replacedRuns ?? []) note(`run ${run}: its log grew after it was imported; samples replaced`);
      for (const f of rep.changedFiles) {
        if (!warnedChanged.has(f)) note(`warning: ${f} differs from what session ${rep.sessionId} holds; not merged`);
        warnedChanged.add(f);
      }
      if (!rep.importedRuns.length) return;
      const rows = store.listRuns(rep.sessionId);
      const kind = new Map(rows.map((r) => [r.run, r.kind]));
      for (const run of rep.importedRuns) if (kind.get(run) === 'zero') out(`run ${run}: wind-off zero stored`);
      if (!reduce) {
        for (const run of rep.importedRuns) if (kind.get(run) === 'data') out(`run ${run}: stored (not reduced)`);
        return;
      }
      const todo = runsAffectedBy(rows, rep.importedRuns);
      if (!todo.length) return;
      const { results, summary } = D().reduceStoredSession(store, rep.sessionId, { runs: todo, actor });
      const freshSet = new Set(rep.importedRuns);
      // Faults that persist over the runs so far are said once, as they become session findings;
      // on each run's line they are then a note.
      const view = findingsView(summary, results);
      for (const f of view.findings) {
        const k = `${f.code}:${f.tap}`;
        if (!saidFindings.has(k)) note(`session finding: ${f.text}`);
        saidFindings.add(k);
      }
      for (const r of results) out(resultLine(r, freshSet.has(r.run) ? 'run' : 'updated run', view));
    } catch (e) {
      const msg = e instanceof Error ? e.message : String(e);
      // A half-written or not-yet-complete session is normal while acquisition runs: say it once.
      if (msg !== lastError) note(`${isLogError(e) ? 'waiting for valid input' : 'error'}: ${msg}`);
      lastError = msg;
    }
  };
  const cycle = async () => {
    if (busy) {
      again = true;
      return;
    }
    busy = true;
    try {
      do {
        again = false;
        await step();
      } while (again);
    } finally {
      busy = false;
    }
  };

  await cycle();
  const watcher = watch(dir, {
    ignoreInitial: true,
    depth: 3,
    // hidden files, partial downloads and databases inside the folder are not session files
    ignored: (p: string) => /(^|[\\/])\.|\.(sqlite|sqlite-wal|sqlite-shm|tmp|part)$/.test(relative(dir, p)),
    awaitWriteFinish: { stabilityThreshold: settleMs, pollInterval: Math.max(20, Math.min(100, settleMs / 4)) },
  });
  watcher.on('add', () => void cycle());
  watcher.on('change', () => void cycle());
  watcher.on('error', (e) => note(`watch error: ${e instanceof Error ? e.message : String(e)}`));
  await new Promise<void>((res) => watcher.on('ready', () => res()));
  note(`watching ${dir} (Ctrl-C to stop)`);
  await new Promise<void>((res) => {
    const stop = () => res();
    process.once('SIGINT', stop);
    process.once('SIGTERM', stop);
  });
  await watcher.close();
  if (retry) clearTimeout(retry);
  while (busy) await new Promise((r) => setTimeout(r, 20));
  store.close();
  note('stopped');
}

// ---------------------------------------------------------------------------------------------
// The program.

export function buildProgram(): Command {
  const program = new Command();
  program
    .name('rakeline')
    .description('Reduce two-dimensional airfoil section tests: import session folders, reduce runs, review, print and export.')
    .version(pkg.version, '-V, --version', 'print the program version')
    .exitOverride()
    .showHelpAfterError('(add --help for usage)')
    .configureHelp({ subcommandTerm: (cmd) => `${cmd.name()} ${cmd.usage()}`.trim() })
    .option('--db <file>', `SQLite database file (default: ./${DEFAULT_DB} in the current directory, or $RAKELINE_DB)`)
    .option('--session <id>', 'session id, needed when the database holds several sessions')
    .option('--reviewer <name>', 'your name, recorded with every review, tap override and setting change and printed on the day sheet (default: $RAKELINE_REVIEWER, else the OS user name)')
    .option('--actor <name>', 'the same as --reviewer (kept for scripts; default $RAKELINE_ACTOR)')
    .addHelpText('after', `
Exit codes: 0 ok, 1 bad input (the message names file, line and channel), 2 usage error.
Examples:
  rakeline ingest ./2026-11-18
  rakeline runs --format csv > runs.csv
  rakeline reduce --runs 3,5-9 --set liftTolAbs=0.03 --set mcDraws=200
  rakeline tap C17 --bad --note "tube pinched"
  rakeline --reviewer "T. Lindqvist" review 31 --reject --note "stall cell on the tufts"
  rakeline sheet --out day.html --paper Letter
  rakeline follow ./live-session`);

  const g = () => program.opts<GlobalOpts>();

  program
    .command('sessions')
    .description('list the sessions in the database, each with its flagged data runs and those needing a decision')
    .addOption(new Option('--format <format>', 'output format').choices(['table', 'json']).default('table'))
    .action(async (o: { format: string }) => {
      await withStore(g(), 'read', (store) => {
        // With each session its data runs needing a decision (flags no session finding explains),
        // as the app's session list shows them.
        const all = D().sessionsWithDecisions(store);
        if (o.format === 'json') return out(JSON.stringify(all, null, 2));
        if (!all.length) return out('no sessions');
        out(`${'id'.padStart(3)}  ${'date'.padEnd(10)}  ${'runs'.padStart(4)}  ${'data'.padStart(4)}  ${'flag'.padStart(4)}  ${'decide'.padStart(6)}  title / model / facility`);
        for (const s of all) {
          out(`${String(s.id).padStart(3)}  ${s.date.padEnd(10)}  ${String(s.runCount).padStart(4)}  ${String(s.dataRunCount).padStart(4)}  ${String(s.flaggedCount).padStart(4)}  ${String(s.decisionCount).padStart(6)}  ${s.title} / ${s.model} / ${s.facility}`);
        }
        out('flag: data runs with any flag; decide: those with a flag no session finding explains (the others carry only notes)');
      });
    });

  program
    .command('ingest')
    .description('import a session folder (setup.json, runs.csv, run files); re-importing unchanged files does nothing')
    .argument('<folder>', 'session folder')
    .option('--no-reduce', 'store the runs without reducing them')
    .action(async (folder: string, o: { reduce: boolean }) => {
      const dir = resolve(folder);
      if (!existsSync(dir)) throw new InputError(`no folder ${dir}`);
      const file = dbPath(g());
      const existed = existsSync(file);
      let stored = false;
      try {
        await withStore(g(), 'create', async (store) => {
          const bar = progress();
          const t0 = performance.now();
          let rep;
          try {
            rep = await D().importSessionFolder(store, dir, { actor: actorOf(g()), onProgress: bar.onProgress });
          } finally {
            bar.stop();
          }
          stored = true;
          out(`session ${rep.sessionId} (${rep.created ? 'new' : 'existing'}): ${rep.importedRuns.length} run(s) imported, ${rep.changedFiles.length} changed file(s), ${rep.unchangedFiles.length} unchanged, ${rep.skippedRuns.length} skipped in ${((performance.now() - t0) / 1000).toFixed(2)} s`);
          for (const w of rep.warnings ?? []) note(`warning: ${w}`);
          if (o.reduce) {
            // Every data run without a current result, not only this import's: a reduction that an
            // earlier ingest could not finish (killed, disk full) is done now (main/repair.ts).
            const todo = D().runsNeedingReduction(store, rep.sessionId);
            const earlier = todo.filter((r) => !rep.importedRuns.includes(r)).length;
            if (earlier) note(`session ${rep.sessionId}: ${earlier} data run(s) stored earlier had no current result; reducing them now`);
            if (todo.length) await reduceAndTell(store, rep.sessionId, g(), { runs: todo });
          }
          if (rep.changedFiles.length) {
            throw new InputError(`${rep.changedFiles.length} file(s) differ from what session ${rep.sessionId} holds and were not merged: ${rep.changedFiles.join(', ')} (the stored data are kept; import a changed session from a new folder)`);
          }
        });
      } catch (e) {
        // A first ingest that stored nothing leaves no (empty) database behind.
        if (!existed && !stored) for (const f of [file, `${file}-wal`, `${file}-shm`, `${file}-journal`]) rmSync(f, { force: true });
        throw e;
      }
    });

  program
    .command('reduce')
    .description('reduce all data runs of the session, the listed ones or the stale ones, and store the results (history kept)')
    .option('--runs <list>', 'runs to reduce, e.g. 3,5-9', parseRunList)
    .option('--set <key=value>', 'reduction setting for this reduction, repeatable (e.g. liftTolAbs=0.03, mcDraws=200, badTaps=C3,C4)', parseSetting)
    .option('--save', 'keep the --set values as the session settings (audited)')
    .option('--stale', 'reduce only the stale runs (reduced with other settings, bad taps or zeros than the session\'s now)')
    .action(async (o: { runs?: number[]; set?: Partial<Settings>; save?: boolean; stale?: boolean }) => {
      await withStore(g(), 'write', async (store) => {
        const sid = pickSession(store, g());
        let settings = o.set;
        if (o.save && settings) {
          store.updateSettings(sid, settings, actorOf(g()), 'rakeline reduce --save');
          settings = undefined;
        }
        if (o.stale && o.runs) throw new UsageError('reduce: give either --runs or --stale, not both');
        if (o.runs) {
          const known = new Set(store.listRuns(sid).map((r) => r.run));
          const missing = o.runs.filter((r) => !known.has(r));
          if (missing.length) throw new InputError(`session ${sid} has no run(s) ${missing.join(', ')}`);
        }
        const runs = o.stale ? D().staleRuns(store, sid) : o.runs;
        if (o.stale && !runs?.length) return out(`session ${sid}: no stale results`);
        await reduceAndTell(store, sid, g(), { runs, settings });
        const nowStale = settings ? D().staleRuns(store, sid) : [];
        if (nowStale.length) {
          out(`note: ${nowStale.length} result(s) now differ from the session's settings and are marked stale (runs ${D().runRanges(nowStale)}); --save keeps --set values as the session's settings`);
        }
      });
    });

  program
    .command('tap')
    .description('mark a surface tap bad (dropped and bridged) or good again, then re-reduce every data run')
    .usage('[session] <tapId> --bad|--good [options]')
    .argument('<ids...>', 'the tap id, optionally preceded by the session id (else --session, or the only session)')
    .option('--bad', 'mark the tap bad')
    .option('--good', 'mark the tap good again')
    .option('--note <text>', 'why (kept in the audit trail)')
    .option('--no-reduce', 'do not re-reduce')
    .action(async (ids: string[], o: { bad?: boolean; good?: boolean; note?: string; reduce: boolean }) => {
      if (ids.length > 2) throw new UsageError(`tap: expected [session] <tapId>, got ${ids.length} arguments`);
      const [first, second] = ids;
      if (!!o.bad === !!o.good) throw new UsageError('tap: give exactly one of --bad or --good');
      const opts: GlobalOpts = { ...g() };
      let tapId = first;
      if (second !== undefined) {
        if (opts.session !== undefined && opts.session !== first) throw new UsageError(`tap: session ${first} and --session ${opts.session} disagree`);
        opts.session = first;
        tapId = second;
      }
      await withStore(opts, 'write', async (store) => {
        const sid = pickSession(store, opts);
        const setup = store.getSetup(sid);
        if (!setup.taps.some((t) => t.id === tapId)) {
          throw new InputError(`session ${sid} has no tap "${tapId}" (taps: ${setup.taps.slice(0, 12).map((t) => t.id).join(', ')}${setup.taps.length > 12 ? ', …' : ''})`);
        }
        const s = store.setTapBad(sid, tapId, !!o.bad, actorOf(opts), o.note);
        out(`session ${sid}: tap ${tapId} marked ${o.bad ? 'bad' : 'good'}; taps marked bad: ${s.badTaps.length ? s.badTaps.join(', ') : 'none'}`);
        if (o.reduce) await reduceAndTell(store, sid, opts, { runs: dataRunsOf(store, sid) });
      });
    });

  program
    .command('review')
    .description('record a reviewer decision on a run (audited)')
    .argument('<run>', 'run number', parsePositiveInt)
    .option('--accept', 'accept the run')
    .option('--reject', 'reject the run')
    .option('--clear', 'remove the decision')
    .option('--note <text>', 'comment', '')
    .action(async (run: number, o: { accept?: boolean; reject?: boolean; clear?: boolean; note: string }) => {
      const picked = [o.accept, o.reject, o.clear].filter(Boolean).length;
      if (picked !== 1) throw new UsageError('review: give exactly one of --accept, --reject or --clear');
      await withStore(g(), 'write', (store) => {
        const sid = pickSession(store, g());
        if (!store.listRuns(sid).some((r) => r.run === run)) throw new InputError(`session ${sid} has no run ${run}`);
        const who = reviewerOf(g());
        store.setReview(sid, run, o.accept ? 'accepted' : o.reject ? 'rejected' : null, o.note, who.name);
        out(`session ${sid}: run ${run} ${o.accept ? 'accepted' : o.reject ? 'rejected' : 'decision cleared'} by ${who.name}`);
        if (!who.given) note(`note: recorded as reviewer "${who.name}" (the OS user name); give --reviewer "Your Name" to record your name`);
      });
    });

  program
    .command('runs')
    .description('list the runs with their latest coefficients, wall-correction method, flags, verdicts and stale marks')
    .addOption(new Option('--format <format>', 'output format').choices(['table', 'csv', 'json']).default('table'))
    .option('--flagged', 'only runs with a flag of their own (a flag a session finding explains is a note, not counted)')
    .option('--stale', 'only runs whose result is stale')
    .action(async (o: { format: string; flagged?: boolean; stale?: boolean }) => {
      await withStore(g(), 'read', (store) => {
        const sid = pickSession(store, g());
        let rows = D().listRunsMarked(store, sid);
        const digests = store.latestDigests(sid);
        // The tap findings and the runs needing a decision, as the day log has them; its dead and
        // saturated channels are for `reduce`, the day log and the sheet (start-up: reading every
        // run's statistics would add a quarter to this command).
        const summary = D().sessionSummary(store, sid, { digests, channels: false });
        if (o.flagged) {
          const noted = notesByRun(summary);
          rows = rows.filter((r) => r.result && splitFlags(r.result.flags, noted.get(r.run)).decision.length);
        }
        if (o.stale) rows = rows.filter((r) => r.stale);
        if (o.format === 'json') return out(JSON.stringify(rows, (_k, v) => (typeof v === 'number' && !Number.isFinite(v) ? null : v), 2));
        if (o.format === 'csv') return void process.stdout.write(D().exportResultsCsv(rows, store.getSetup(sid), store.latestResults(sid)));
        out(runsTable(rows, new Map(digests.map((d) => [d.run, d.correction.method])), findingsView(summary, digests)));
      });
    });

  program
    .command('settings')
    .description('show the session reduction settings (change them with reduce --set … --save)')
    .action(async () => {
      await withStore(g(), 'read', (store) => out(JSON.stringify(store.getSettings(pickSession(store, g())), null, 2)));
    });

  program
    .command('export')
    .description('export the results: csv (one row per run) or json (everything, with the audit trail)')
    .addOption(new Option('--format <format>', 'file format').choices(['csv', 'json']).default('csv'))
    .option('--out <file>', 'output file (default: standard output)')
    .action(async (o: { format: string; out?: string }) => {
      await withStore(g(), 'read', (store) => {
        const sid = pickSession(store, g());
        const text = o.format === 'json'
          ? D().exportResultsJson(store, sid)
          : D().exportResultsCsv(D().listRunsMarked(store, sid), store.getSetup(sid), store.latestResults(sid));
        writeOut(text, o.out, `${o.format.toUpperCase()} export`);
      });
    });

  program
    .command('sheet')
    .description('write the printable test-day summary sheet (self-contained HTML; print it or save as PDF)')
    .option('--out <file>', 'output file (default: standard output)')
    .addOption(new Option('--paper <size>', 'paper size').choices(['A4', 'Letter']).default('A4'))
    .option('--cp-runs <list>', 'also plot the Cp distributions of these runs, e.g. 3,5-9 (flagged runs always are)', parseRunList)
    .action(async (o: { out?: string; paper: 'A4' | 'Letter'; cpRuns?: number[] }) => {
      await withStore(g(), 'read', (store) => {
        const sid = pickSession(store, g());
        const html = D().storedDaySheet(store, sid, { paper: o.paper, appVersion: pkg.version, ...(o.cpRuns ? { cpRuns: o.cpRuns } : {}) });
        writeOut(html, o.out, 'day sheet');
        const data = new Set(dataRunsOf(store, sid));
        const missing = (o.cpRuns ?? []).filter((r) => !data.has(r));
        if (missing.length) note(`note: --cp-runs: session ${sid} has no data run ${D().runRanges(missing)}; the sheet names ${missing.length > 1 ? 'them' : 'it'} as not plotted`);
      });
    });

  program
    .command('follow')
    .description('watch a session folder: import and reduce each run file as it lands, one line per run (Ctrl-C stops)')
    .argument('<folder>', 'session folder being written by the acquisition')
    .option('--settle <ms>', 'wait until a file has not changed for this long', parsePositiveInt, 300)
    .option('--no-reduce', 'store the runs without reducing them')
    .action(async (folder: string, o: { settle: number; reduce: boolean }) => {
      await follow(folder, g(), o.settle, o.reduce);
    });

  return program;
}

/** True when the command line asks for help or the version (commander answers those without
 *  running any command, so the command modules need not load). */
function asksOnlyForHelp(argv: string[]): boolean {
  const args = argv.slice(2);
  return args[0] === 'help' || args.some((a) => a === '-h' || a === '--help' || a === '-V' || a === '--version');
}

/** Run the command line; resolves to the exit code. */
export async function main(argv: string[] = process.argv): Promise<number> {
  // `rakeline runs | head`: a closed pipe ends the output quietly
  process.stdout.on('error', (e: NodeJS.ErrnoException) => {
    if (e.code === 'EPIPE') process.exit(0);
    throw e;
  });
  const program = buildProgram();
  try {
    if (!asksOnlyForHelp(argv)) await loadCliDeps();
    await program.parseAsync(argv);
    return 0;
  } catch (e) {
    if (e instanceof CommanderError) return e.exitCode === 0 ? 0 : 2; // commander printed the message
    if (e instanceof UsageError) {
      note(`rakeline: ${e.message}`);
      return 2;
    }
    if (isLogError(e)) {
      note(`rakeline: input error: ${e.message}`);
      return 1;
    }
    let msg = e instanceof Error ? e.message : String(e);
    if (deps && deps.isDiskFull(e, dbPath(program.opts<GlobalOpts>())) && !(e instanceof deps.StoreFullError)) msg = new deps.StoreFullError(dbPath(program.opts<GlobalOpts>()), msg).message;
    note(`rakeline: ${msg}`);
    if (process.env.RAKELINE_DEBUG && e instanceof Error && e.stack) note(e.stack);
    return 1;
  }
}

if (process.argv[1] && import.meta.url === pathToFileURL(resolve(process.argv[1])).href) {
  void main().then((code) => {
    process.exitCode = code;
  });
}
