// The `rakeline` command line run as a child process (node bin/rakeline.mjs …) on a tiny session:
// exit codes 0 / 1 / 2, --help everywhere, the machine-readable outputs, the files it writes.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cpSync, existsSync, mkdtempSync, readFileSync, readdirSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir, userInfo } from 'node:os';
import { join, relative } from 'node:path';
import { parse } from 'csv-parse/sync';
import { makeTinySession, runCli, TINY, TINY_RUNS } from './helpers/cliSession';
import { METHOD_COLUMN } from '../main/cli';

let dir: string;
let folder: string;
let db: string;
const cli = (...args: string[]) => runCli(['--db', db, ...args]);

/** All files under a folder, relative paths. */
function filesOf(root: string, sub = ''): string[] {
  return readdirSync(join(root, sub)).flatMap((n) => {
    const rel = join(sub, n);
    return statSync(join(root, rel)).isDirectory() ? filesOf(root, rel) : [rel];
  });
}

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'rakeline-cli-'));
  folder = makeTinySession(join(dir, 'session'));
  db = join(dir, 'test.sqlite');
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('help and usage errors', () => {
  const commands = ['sessions', 'ingest', 'reduce', 'tap', 'review', 'runs', 'settings', 'export', 'sheet', 'follow'];

  it('--help works for the program and every subcommand (exit 0)', async () => {
    const top = await runCli(['--help']);
    expect(top.code).toBe(0);
    expect(top.stdout).toContain('Usage: rakeline');
    expect(top.stdout).toContain('--db <file>');
    for (const c of commands) expect(top.stdout).toContain(c);
    const each = await Promise.all(commands.map((c) => runCli([c, '--help'])));
    each.forEach((r, i) => {
      expect(r.code, `${commands[i]} --help: ${r.stderr}`).toBe(0);
      expect(r.stdout).toContain(`Usage: rakeline ${commands[i]}`);
    });
    const viaHelp = await runCli(['help', 'runs']);
    expect(viaHelp.code).toBe(0);
    expect(viaHelp.stdout).toContain('Usage: rakeline runs');
  });

  it('maps usage errors to exit 2', async () => {
    const cases: string[][] = [
      ['no-such-command'],
      ['runs', '--format', 'xml'],
      ['runs', '--no-such-option'],
      ['reduce', '--runs', '5-x'],
      ['reduce', '--set', 'noSuchSetting=1'],
      ['reduce', '--set', 'liftTolAbs=abc'],
      ['reduce', '--set', 'mcDraws=-3'],
      ['ingest'],
      ['sheet', '--paper', 'A3'],
      [],
    ];
    const results = await Promise.all(cases.map((c) => cli(...c)));
    results.forEach((r, i) => {
      expect(r.code, `rakeline ${cases[i].join(' ')} → ${r.code}: ${r.stderr}`).toBe(2);
      expect(r.stderr.length).toBeGreaterThan(0);
    });
    expect(results[4].stderr).toContain('noSuchSetting');
  });
});

describe('a session from import to sheet', () => {
  it('reports a missing database as an input error (exit 1) without creating it', async () => {
    const missing = join(dir, 'missing.sqlite');
    const r = await runCli(['--db', missing, 'runs']);
    expect(r.code).toBe(1);
    expect(r.stderr).toContain(missing);
    expect(existsSync(missing)).toBe(false);
  });

  it('ingest imports and reduces; a second ingest imports nothing', async () => {
    const first = await cli('ingest', folder);
    expect(first.code, first.stderr).toBe(0);
    expect(first.stdout).toMatch(/session 1 \(new\): 8 run\(s\) imported/);
    expect(first.stdout).toMatch(/reduced \d+ run\(s\)/);
    const again = await cli('ingest', folder);
    expect(again.code, again.stderr).toBe(0);
    expect(again.stdout).toMatch(/session 1 \(existing\): 0 run\(s\) imported/);
    expect(again.stdout).not.toMatch(/reduced/);
  });

  it('sessions lists it; runs --format json parses and has every run of the index', async () => {
    const s = await cli('sessions', '--format', 'json');
    expect(s.code).toBe(0);
    const sessions = JSON.parse(s.stdout);
    expect(sessions).toHaveLength(1);
    expect(sessions[0].runCount).toBe(TINY_RUNS);

    const r = await cli('runs', '--format', 'json');
    expect(r.code, r.stderr).toBe(0);
    const rows = JSON.parse(r.stdout) as { run: number; kind: string; result: null | { cl: number; flags: unknown[] } }[];
    expect(rows.map((x) => x.run)).toEqual(Array.from({ length: TINY_RUNS }, (_, i) => i + 1));
    const data = rows.filter((x) => x.kind === 'data');
    expect(data.length).toBeGreaterThan(0);
    for (const d of data) {
      expect(d.result).not.toBeNull();
      expect(typeof d.result!.cl).toBe('number');
      expect(Array.isArray(d.result!.flags)).toBe(true);
    }
    for (const z of rows.filter((x) => x.kind === 'zero')) expect(z.result).toBeNull();

    const table = await cli('runs');
    expect(table.code).toBe(0);
    expect(table.stdout.split('\n')[0]).toMatch(/run\s+kind\s+time.*cl_p\s+cl_mom\s+cd_wake\s+cm_c4\s+wall\s+flags/);
    expect(table.stdout).toContain('wind-off zero');
    // the wall column: each run's applied method, as the full result in the CSV export names it
    const exported = parse((await cli('export', '--format', 'csv')).stdout, { columns: true }) as Record<string, string>[];
    const lines = table.stdout.split('\n');
    const wallAt = lines[0].indexOf('wall');
    for (const e of exported) {
      const line = lines.find((l) => l.startsWith(String(e.run).padStart(4)))!;
      const cell = line.slice(wallAt, wallAt + 9).trim();
      expect(cell, `run ${e.run}`).toBe(e.correction_method ? METHOD_COLUMN[e.correction_method] : '-');
    }
    expect(exported.some((e) => e.correction_method)).toBe(true);
    expect(table.stdout).toContain('wall: the wall-correction method of each run');

    const csv = await cli('runs', '--format', 'csv');
    expect(csv.code).toBe(0);
    const recs = parse(csv.stdout, { columns: true }) as Record<string, string>[];
    expect(recs).toHaveLength(TINY_RUNS);
    expect(Object.keys(recs[0])).toContain('q_Pa');
  });

  it('reduce with --runs and --set reduces just those runs; a bad run number is an input error', async () => {
    const runs = JSON.parse((await cli('runs', '--format', 'json')).stdout) as { run: number; kind: string }[];
    const two = runs.filter((r) => r.kind === 'data').slice(0, 2).map((r) => r.run);
    const r = await cli('reduce', '--runs', two.join(','), '--set', 'mcDraws=20', '--set', 'liftTolAbs=0.03', '--set', 'correction=maskell');
    expect(r.code, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/reduced 2 run\(s\)/);
    // the runs table says which runs were corrected by Maskell's method now
    const lines = (await cli('runs')).stdout.split('\n');
    const wallAt = lines[0].indexOf('wall');
    const wallOf = (run: number) => lines.find((l) => l.startsWith(String(run).padStart(4)))!.slice(wallAt, wallAt + 9).trim();
    for (const run of two) expect(wallOf(run)).toBe('Maskell');
    const other = runs.find((x) => x.kind === 'data' && !two.includes(x.run))!.run;
    expect(wallOf(other)).not.toBe('Maskell');
    const missing = await cli('reduce', '--runs', '900');
    expect(missing.code).toBe(1);
    expect(missing.stderr).toContain('900');
  });

  it('reduce --set … --save keeps the setting (shown by `settings`)', async () => {
    const r = await cli('reduce', '--set', 'liftTolAbs=0.035', '--set', 'mcDraws=25', '--save');
    expect(r.code, r.stderr).toBe(0);
    const s = JSON.parse((await cli('settings')).stdout);
    expect(s.liftTolAbs).toBe(0.035);
    expect(s.mcDraws).toBe(25);
  });

  it('tap --bad marks a tap and re-reduces; tap --good undoes it; unknown taps and missing mode fail', async () => {
    const setup = JSON.parse(readFileSync(join(folder, 'setup.json'), 'utf8'));
    const tap = setup.taps[2].id as string;
    const bad = await cli('tap', tap, '--bad', '--note', 'tube pinched');
    expect(bad.code, bad.stderr).toBe(0);
    expect(bad.stdout).toContain(`tap ${tap} marked bad`);
    expect(bad.stdout).toMatch(/reduced \d+ run\(s\)/);
    expect(JSON.parse((await cli('settings')).stdout).badTaps).toContain(tap);
    // the session id may be given as the first argument
    const good = await cli('tap', '1', tap, '--good');
    expect(good.code, good.stderr).toBe(0);
    expect(JSON.parse((await cli('settings')).stdout).badTaps).not.toContain(tap);
    expect((await cli('tap', 'NO-SUCH-TAP', '--bad')).code).toBe(1);
    expect((await cli('tap', tap)).code).toBe(2);
    expect((await cli('tap', tap, '--bad', '--good')).code).toBe(2);
  });

  it('review records a decision that the runs table shows', async () => {
    const runs = JSON.parse((await cli('runs', '--format', 'json')).stdout) as { run: number; kind: string }[];
    const run = runs.find((r) => r.kind === 'data')!.run;
    const r = await cli('--actor', 'T. Lindqvist', 'review', String(run), '--reject', '--note', 'tufts show a stall cell');
    expect(r.code, r.stderr).toBe(0);
    const after = JSON.parse((await cli('runs', '--format', 'json')).stdout) as { run: number; review: { verdict: string; actor: string } | null }[];
    expect(after.find((x) => x.run === run)!.review).toMatchObject({ verdict: 'rejected', actor: 'T. Lindqvist' });
    expect((await cli('review', String(run))).code).toBe(2);
  });

  it('the reviewer is a name: --reviewer NAME, else the OS user name without any prefix (with a note saying so); the sheet prints it', async () => {
    const runs = JSON.parse((await cli('runs', '--format', 'json')).stdout) as { run: number; kind: string }[];
    const [a, b] = runs.filter((r) => r.kind === 'data').slice(1, 3).map((r) => r.run);
    const noName = { RAKELINE_ACTOR: '', RAKELINE_REVIEWER: '' };
    const named = await runCli(['--db', db, '--reviewer', 'A. Farrow', 'review', String(a), '--accept'], { env: noName });
    expect(named.code, named.stderr).toBe(0);
    expect(named.stdout).toContain(`run ${a} accepted by A. Farrow`);
    expect(named.stderr).not.toContain('note:');
    const os = userInfo().username;
    const plain = await runCli(['--db', db, 'review', String(b), '--accept'], { env: noName });
    expect(plain.code, plain.stderr).toBe(0);
    expect(plain.stderr).toContain(`recorded as reviewer "${os}" (the OS user name); give --reviewer`);
    const after = JSON.parse((await cli('runs', '--format', 'json')).stdout) as { run: number; review: { actor: string } | null }[];
    expect(after.find((x) => x.run === a)!.review!.actor).toBe('A. Farrow');
    expect(after.find((x) => x.run === b)!.review!.actor).toBe(os);
    const sheet = (await cli('sheet')).stdout;
    expect(sheet).toContain('accepted</b> by A. Farrow');
    expect(sheet).not.toContain('cli:');
  });

  it('export writes CSV and JSON files; sheet writes the day sheet for the chosen paper', async () => {
    const csvFile = join(dir, 'out.csv');
    const jsonFile = join(dir, 'out.json');
    const sheetFile = join(dir, 'day.html');
    const [c, j, s] = await Promise.all([
      cli('export', '--format', 'csv', '--out', csvFile),
      cli('export', '--format', 'json', '--out', jsonFile),
      cli('sheet', '--out', sheetFile, '--paper', 'Letter'),
    ]);
    for (const r of [c, j, s]) expect(r.code, r.stderr).toBe(0);
    expect((parse(readFileSync(csvFile, 'utf8'), { columns: true }) as unknown[]).length).toBe(TINY_RUNS);
    const doc = JSON.parse(readFileSync(jsonFile, 'utf8'));
    expect(doc.runs).toHaveLength(TINY_RUNS);
    expect(JSON.stringify(doc.audit)).toContain('tufts show a stall cell');
    const html = readFileSync(sheetFile, 'utf8');
    expect(html).toMatch(/@page\s*{[^}]*size:\s*letter/);
    expect(html).toContain('<table class="runs">');
    expect(html).toContain('Review and sign-off');
    expect(html).not.toContain('<script');
    // stdout variant
    const out = await cli('export', '--format', 'json');
    expect(JSON.parse(out.stdout).session.id).toBe(1);
  });

  it('with several sessions, a command needs --session (exit 2) and accepts it', async () => {
    const other = makeTinySession(join(dir, 'session-b'), { ...TINY, seed: 99 });
    const imp = await cli('ingest', '--no-reduce', other);
    expect(imp.code, imp.stderr).toBe(0);
    const amb = await cli('runs');
    expect(amb.code).toBe(2);
    expect(amb.stderr).toContain('--session');
    const ok = await cli('--session', '2', 'runs', '--format', 'json');
    expect(ok.code, ok.stderr).toBe(0);
    const rows = JSON.parse(ok.stdout) as { sessionId: number; result: unknown }[];
    expect(rows.every((r) => r.sessionId === 2 && r.result === null)).toBe(true); // imported with --no-reduce
    const unknown = await cli('--session', '7', 'runs');
    expect(unknown.code).toBe(1);
  });
});

describe('bad input', () => {
  it('a malformed run file: exit 1, the message names file, line and channel, nothing is stored', async () => {
    const broken = join(dir, 'broken');
    cpSync(folder, broken, { recursive: true });
    const setup = JSON.parse(readFileSync(join(broken, 'setup.json'), 'utf8'));
    const runFile = filesOf(broken).find((f) => /\.csv$/i.test(f) && !/runs\.csv$/i.test(f) && readFileSync(join(broken, f), 'utf8').split('\n').length > 6)!;
    const lines = readFileSync(join(broken, runFile), 'utf8').split('\n');
    const header = lines[0].replace(/\r$/, '').split(',');
    const col = 2; // a channel column (column 0 is the time)
    const cells = lines[4].split(',');
    cells[col] = '1.2.3';
    lines[4] = cells.join(',');
    writeFileSync(join(broken, runFile), lines.join('\n'));
    const freshDb = join(dir, 'broken.sqlite');
    const r = await runCli(['--db', freshDb, 'ingest', broken]);
    expect(r.code).toBe(1);
    expect(r.stderr).toContain(relative(broken, join(broken, runFile)).split(/[\\/]/).pop()!);
    expect(r.stderr).toMatch(/line 5\b/);
    expect(r.stderr).toContain(header[col]);
    expect(setup.channels.some((c: { name: string }) => c.name === header[col])).toBe(true);
    // the import was atomic: no session was stored
    const s = await runCli(['--db', freshDb, 'sessions', '--format', 'json']);
    if (s.code === 0) expect(JSON.parse(s.stdout)).toEqual([]);
  });

  it('a folder that does not exist is an input error', async () => {
    const r = await cli('ingest', join(dir, 'nowhere'));
    expect(r.code).toBe(1);
    expect(r.stderr).toContain('nowhere');
  });
});
