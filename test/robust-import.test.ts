// Issue 12, failures 1, 5 and 8, on real files and a real SQLite database:
// (5) a run log that is a symbolic link loop, or a link out of the session folder, is refused
//     naming runs.csv, the line and the column; a link inside the folder is followed;
// (1) a malformed run log read on import threads fails with the very message (and fields: file,
//     line, channel, reason) it gives on the calling thread — the reason survives the trip;
// (8) ignored extra columns (run logs and the index) and values too small for a double are
//     warnings in the import report, the CLI and the audit trail; a header-only runs.csv is an
//     error (file and line) and a failed first ingest leaves no database file.
// Each refused import leaves the database as it was; once the file is mended, the same import
// gives what an undisturbed one gives.
import { copyFileSync, existsSync, mkdirSync, readdirSync, renameSync, rmSync, symlinkSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Store } from '../main/store';
import { importSessionFolder } from '../main/import';
import { LogError } from '../app/log/errors';
import { makeTinySession, runCli } from './helpers/cliSession';
import { cleanupTempDirs, copyFolder, dbContents, editFile, miniFolder, tempDir, type MiniFolder } from './helpers/store-fixtures';
import { dbHolds } from './helpers/robust';

let dir: string;
let base: MiniFolder;
afterAll(() => cleanupTempDirs());
beforeAll(() => {
  dir = tempDir('rk-robimp-');
  base = miniFolder(join(dir, 'good'), { runs: { dataRuns: 5, samples: 30 } });
});

const col = (name: string) => 1 + base.setup.channels.findIndex((c) => c.name === name);
const editLine = (line: number, f: (cells: string[]) => string[]) => (text: string) => {
  const lines = text.split('\n');
  lines[line - 1] = f(lines[line - 1].split(',')).join(',');
  return lines.join('\n');
};

/** The LogError an import of `folder` into a fresh database throws, with that many threads. */
async function refusal(folder: string, workers: number): Promise<{ fields: Record<string, unknown>; holds: unknown }> {
  const file = join(tempDir('rk-robimp-db-'), `w${workers}.sqlite`);
  const store = Store.open(file);
  const before = dbContents(store);
  try {
    const e = await importSessionFolder(store, folder, { workers }).then(() => null, (x: unknown) => x);
    expect(e).toBeInstanceOf(LogError);
    const le = e as LogError;
    expect(dbContents(store)).toEqual(before);
    return { fields: { message: le.message, file: le.file, line: le.line, column: le.column, columnKind: le.columnKind, expected: le.expected, found: le.found, reason: le.reason }, holds: before };
  } finally {
    await store.settled();
    store.close();
  }
}

describe('(1) an input error read on import threads keeps its reason', () => {
  const cases: [string, (f: string) => void, RegExp][] = [
    ['truncated line', (f) => editFile(join(f, 'runs/run-0003.csv'), (t) => t.slice(0, t.trimEnd().lastIndexOf(',') - 3)), /truncated line\?/],
    ['missing cell', (f) => editFile(join(f, 'runs/run-0004.csv'), editLine(9, (c) => c.slice(0, -2))), /the line ends after .* cells \(truncated line\?\)/],
    ['empty cell', (f) => editFile(join(f, 'runs/run-0002.csv'), editLine(7, (c) => { c[col('R_T03')] = ''; return c; })), /expected a number, found an empty cell/],
    ['semicolon delimiter', (f) => editFile(join(f, 'runs/run-0003.csv'), (t) => t.replace(/,/g, ';')), /semicolon/i],
    ['header only', (f) => editFile(join(f, 'runs/run-0005.csv'), (t) => `${t.split('\n')[0]}\n`), /a header but no samples/],
    ['not a number', (f) => editFile(join(f, 'runs/run-0002.csv'), editLine(5, (c) => { c[col('W_F01')] = '1.2.3'; return c; })), /expected a number, found "1\.2\.3"/],
  ];
  for (const [name, mutate, reason] of cases) {
    it(`${name}: the same message and fields with two import threads as on the calling thread`, async () => {
      const folder = copyFolder(base.dir, join(dir, `bad-${name.replace(/\W+/g, '-')}`));
      mutate(folder);
      const [here, threads] = [await refusal(folder, 0), await refusal(folder, 2)];
      expect(here.fields.message).toMatch(reason);
      expect(here.fields.message).toMatch(/^runs\/run-\d{4}\.csv line \d+/);
      expect(threads.fields).toEqual(here.fields);
    }, 60_000);
  }
});

describe('(8) what is read with a reservation is said so', () => {
  it('extra columns in a run log and the index, and 1e-400 in a cell: warnings in the report and the audit trail; samples otherwise as without them', async () => {
    const folder = copyFolder(base.dir, join(dir, 'extras'));
    editFile(join(folder, 'runs.csv'), (t) => t.split('\n').map((l, i) => (l === '' ? l : `${l},${i === 0 ? 'operator_note' : 'ok'}`)).join('\n'));
    editFile(join(folder, 'runs/run-0002.csv'), (t) => t.split('\n').map((l, i) => (l === '' ? l : `${l},${i === 0 ? 'SPARE_7' : '0.5'}`)).join('\n'));
    const tiny = col('S_CU01');
    editFile(join(folder, 'runs/run-0003.csv'), editLine(4, (c) => { c[tiny] = '1e-400'; return c; }));
    editFile(join(folder, 'runs/run-0003.csv'), editLine(6, (c) => { c[tiny] = '-3e-390'; return c; }));
    const store = Store.open(join(tempDir('rk-extras-'), 'x.sqlite'));
    try {
      const rep = await importSessionFolder(store, folder);
      expect(rep.warnings).toEqual([
        'runs.csv: column "operator_note" is not an index column; ignored',
        'runs/run-0002.csv: column "SPARE_7" is not in the setup\'s channel map; ignored',
        'runs/run-0003.csv line 4, channel S_CU01: "1e-400" is smaller than the smallest double and was read as 0 (2 such values in this column)',
      ]);
      const audit = store.auditTrail(rep.sessionId).find((a) => a.action === 'import')!.detail as { warnings: string[] };
      expect(audit.warnings).toEqual(rep.warnings);
      // Stored as read: 0 for the underflowed cells (line 4 is the 3rd sample: header is line 1).
      const s = store.getSamples(rep.sessionId, 3, 'S_CU01');
      expect([s[2], s[4]]).toEqual([0, -0]);
    } finally {
      store.close();
    }
  });

  it('1e-400 in the run index: a warning (underflow) in the report, the audit trail and the CLI; in the run column an error', async () => {
    const folder = copyFolder(base.dir, join(dir, 'index-underflow'));
    const cellOf = (name: string) => (text: string) => text.split('\n')[0].split(',').indexOf(name);
    const setCell = (t: string, line: number, name: string, v: string) => {
      const k = cellOf(name)(t);
      expect(k).toBeGreaterThanOrEqual(0);
      return editLine(line, (c) => { c[k] = v; return c; })(t);
    };
    // Line 3 (the second run) and line 5: alpha_deg underflows to 0 (a plausible α, so only a
    // warning can tell); line 4: humidity as a subnormal (fewer significant digits).
    editFile(join(folder, 'runs.csv'), (t) => setCell(setCell(setCell(t, 3, 'alpha_deg', '1e-400'), 5, 'alpha_deg', '-7e-999'), 4, 'rh_pct', '4.9e-320'));
    const store = Store.open(join(tempDir('rk-idx-uf-'), 'x.sqlite'));
    try {
      const rep = await importSessionFolder(store, folder);
      expect(rep.warnings).toEqual([
        'runs.csv line 3, column alpha_deg: "1e-400" is smaller than the smallest double and was read as 0 (2 such values in this column)',
        'runs.csv line 4, column rh_pct: "4.9e-320" is smaller than the smallest double and was read as a subnormal number with fewer significant digits',
      ]);
      const audit = store.auditTrail(rep.sessionId).find((a) => a.action === 'import')!.detail as { warnings: string[] };
      expect(audit.warnings).toEqual(rep.warnings);
    } finally {
      store.close();
    }
    const db = join(tempDir('rk-idx-uf-cli-'), 'day.sqlite');
    const cli = await runCli(['--db', db, 'ingest', '--no-reduce', folder]);
    expect(cli.code, cli.stderr).toBe(0);
    expect(cli.stderr).toContain('warning: runs.csv line 3, column alpha_deg: "1e-400" is smaller than the smallest double and was read as 0');

    const badRun = copyFolder(base.dir, join(dir, 'index-underflow-run'));
    editFile(join(badRun, 'runs.csv'), (t) => setCell(t, 3, 'run', '1e-400'));
    const s2 = Store.open(join(tempDir('rk-idx-uf2-'), 'x.sqlite'));
    try {
      const before = dbContents(s2);
      const e = await importSessionFolder(s2, badRun).then(() => null, (x: unknown) => x);
      expect(e).toBeInstanceOf(LogError);
      expect((e as LogError).message).toBe('runs.csv line 3, column run: expected a run number (a whole number ≥ 0), found "1e-400", too small for a double');
      expect(dbContents(s2)).toEqual(before);
    } finally {
      s2.close();
    }
  });

  it('the CLI prints each warning; a header-only runs.csv is an error with file and line and leaves no database file', async () => {
    const cdir = tempDir('rk-extras-cli-');
    const folder = makeTinySession(join(cdir, 'session'));
    editFile(join(folder, 'runs.csv'), (t) => t.split('\n').map((l, i) => (l === '' ? l : `${l},${i === 0 ? 'tunnel_mode' : 'normal'}`)).join('\n'));
    const db = join(cdir, 'db', 'day.sqlite');
    const ok = await runCli(['--db', db, 'ingest', '--no-reduce', folder]);
    expect(ok.code, ok.stderr).toBe(0);
    expect(ok.stderr).toContain('warning: runs.csv: column "tunnel_mode" is not an index column; ignored');

    const empty = copyFolder(folder, join(cdir, 'header-only'));
    editFile(join(empty, 'runs.csv'), (t) => `${t.split('\n')[0]}\n`);
    const fresh = join(cdir, 'db2', 'first.sqlite');
    const r = await runCli(['--db', fresh, 'ingest', empty]);
    expect(r.code).toBe(1);
    expect(r.stderr).toContain('rakeline: input error: runs.csv line 2: the index has a header but no runs; expected at least one run line');
    expect(existsSync(fresh)).toBe(false);
    expect(readdirSync(join(cdir, 'db2'))).toEqual([]);
    // Against the database already holding the session: refused, nothing changed.
    const before = dbHolds(db);
    const again = await runCli(['--db', db, 'ingest', empty]);
    expect(again.code).toBe(1);
    expect(dbHolds(db)).toEqual(before);
  }, 120_000);
});


describe('(5) symbolic links', () => {
  const lineOf = (run: number) => 2 + base.index.findIndex((i) => i.run === run);
  const fileOf = (run: number) => base.index.find((i) => i.run === run)!.file!;

  async function refusedThenMended(folder: string, expected: string, mend: () => void): Promise<void> {
    const file = join(tempDir('rk-link-db-'), 'l.sqlite');
    const store = Store.open(file);
    try {
      const before = dbContents(store);
      for (const workers of [0, 2]) {
        const e = await importSessionFolder(store, folder, { workers }).then(() => null, (x: unknown) => x);
        expect(e).toBeInstanceOf(LogError);
        expect((e as LogError).message).toBe(expected);
        expect(dbContents(store)).toEqual(before);
      }
      mend();
      await importSessionFolder(store, folder, { actor: 'import' });
      await store.settled();
    } finally {
      store.close();
    }
    const ref = join(tempDir('rk-link-ref-'), 'r.sqlite');
    const r = Store.open(ref);
    try {
      await importSessionFolder(r, folder, { actor: 'import' });
    } finally {
      r.close();
    }
    expect(dbHolds(file)).toEqual(dbHolds(ref));
  }

  it('a run log that is a symbolic link loop: runs.csv line and column named, nothing stored; mended, the import is as undisturbed', async () => {
    const folder = copyFolder(base.dir, join(dir, 'loop'));
    const name = fileOf(3);
    const real = join(dir, 'loop-saved.csv');
    renameSync(join(folder, name), real);
    symlinkSync(join(folder, name), join(folder, name)); // a link to itself
    await refusedThenMended(
      folder,
      `runs.csv line ${lineOf(3)}, column file: the file "${name}" is a symbolic link loop (a link that leads back to itself); expected a file inside the session folder`,
      () => {
        rmSync(join(folder, name));
        renameSync(real, join(folder, name));
      },
    );
  }, 60_000);

  it('a run log linked to a file outside the session folder is refused even when its content is right; a link inside the folder is followed', async () => {
    const folder = copyFolder(base.dir, join(dir, 'escape'));
    const name = fileOf(4);
    const outside = join(dir, 'elsewhere');
    mkdirSync(outside, { recursive: true });
    copyFileSync(join(folder, name), join(outside, 'same-bytes.csv')); // the very bytes: only the path can stop it
    rmSync(join(folder, name));
    symlinkSync(join(outside, 'same-bytes.csv'), join(folder, name));
    await refusedThenMended(
      folder,
      `runs.csv line ${lineOf(4)}, column file: the file "${name}" is a link to ${join(outside, 'same-bytes.csv')}, outside the session folder; expected a file inside the session folder`,
      () => {
        rmSync(join(folder, name));
        // inside the folder: kept under another name, linked (relative link) — followed
        mkdirSync(join(folder, 'kept'), { recursive: true });
        copyFileSync(join(outside, 'same-bytes.csv'), join(folder, 'kept', 'r4.csv'));
        symlinkSync(join('..', 'kept', 'r4.csv'), join(folder, name));
      },
    );
  }, 60_000);
});
