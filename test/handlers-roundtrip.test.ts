// The contract handlers on a real temporary SQLite file with a tiny session: import (folder and
// uploaded files), reduce, review, overrides, stored results from elsewhere, the day sheet and
// exports, error mapping, and live mode. Nothing here imports Electron.
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { mkdtempSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';

vi.mock('electron', () => {
  throw new Error('the handlers must not import electron');
});

import { disposeHandlers, runsAffectedBy, type HandlerContext } from '../main/handlers';
import type { Events } from '../main/contract';
import type { RunRow } from '../main/store';
import { appendRunToFolder, writeSessionFolder } from '../main/logwriter';
import { miniRuns, miniSetup } from './helpers/mini-session';
import { openHandlers } from './helpers/handlerHarness';

let dir: string;
let folder: string;
const setup = miniSetup();
const mini = miniRuns(setup, { dataRuns: 3, samples: 20 });

beforeAll(() => {
  dir = mkdtempSync(path.join(tmpdir(), 'rakeline-handlers-'));
  folder = path.join(dir, 'session');
  writeSessionFolder(folder, setup, mini.index, mini.runs);
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function open(name: string, extra: Partial<HandlerContext> = {}) {
  return openHandlers(path.join(dir, `${name}.sqlite`), extra);
}

/** Every file of a folder as { name: "<prefix>/<relative path>", text }. */
function filesOf(root: string, prefix: string): { name: string; text: string }[] {
  const out: { name: string; text: string }[] = [];
  const walk = (d: string) => {
    for (const e of readdirSync(d)) {
      const p = path.join(d, e);
      if (statSync(p).isDirectory()) walk(p);
      else out.push({ name: `${prefix}/${path.relative(root, p).split(path.sep).join('/')}`, text: readFileSync(p, 'utf8') });
    }
  };
  walk(root);
  return out;
}

const dataRuns = mini.index.filter((i) => i.kind === 'data').map((i) => i.run);
const zeroRuns = mini.index.filter((i) => i.kind === 'zero').map((i) => i.run);

describe('handlers on a real store', () => {
  let h: ReturnType<typeof open>;
  let sessionId: number;
  beforeAll(() => {
    h = open('main');
  });
  afterAll(async () => {
    await disposeHandlers(h.handlers);
    h.store.close();
  });

  it('imports a folder, reduces the new data runs and reports progress', async () => {
    const r = await h.call('sessions.importFolder', { folder, taskId: 'task-1' });
    sessionId = r.report.sessionId;
    expect(r.report.created).toBe(true);
    expect([...r.report.importedRuns].sort((a, b) => a - b)).toEqual(mini.index.map((i) => i.run));
    expect(r.reduced).toBe(dataRuns.length);
    const progress = h.events.filter((e) => e.event === 'progress').map((e) => e.data as Events['progress']);
    expect(progress.length).toBeGreaterThan(0);
    expect(progress.every((p) => p.taskId === 'task-1')).toBe(true);
    expect(new Set(progress.map((p) => p.phase))).toContain('parse');
    expect(progress.find((p) => p.phase === 'parse')?.label).toMatch(/run-000\d\.csv/);
  });

  it('a second import of the same folder stores and reduces nothing', async () => {
    const r = await h.call('sessions.importFolder', { folder });
    expect(r.report.sessionId).toBe(sessionId);
    expect(r.report.importedRuns).toEqual([]);
    expect(r.reduced).toBe(0);
  });

  it('lists and gets sessions and runs', async () => {
    const list = await h.call('sessions.list', {});
    expect(list.map((s) => s.id)).toEqual([sessionId]);
    const s = await h.call('sessions.get', { sessionId });
    expect(s.session.title).toBe(setup.session.title);
    expect(s.setup.taps.map((t) => t.id)).toEqual(setup.taps.map((t) => t.id));
    expect(s.settings.spikeK).toBe(5);
    const runs = await h.call('runs.list', { sessionId });
    expect(runs.filter((r) => r.kind === 'data').every((r) => r.result !== null)).toBe(true);
    expect(runs.filter((r) => r.kind === 'zero').every((r) => r.result === null)).toBe(true);
    const one = await h.call('runs.get', { sessionId, run: dataRuns[0] });
    expect(one.result?.run).toBe(dataRuns[0]);
    expect(one.history).toHaveLength(1);
  });

  it('gives the worker what it needs to reduce one data run, and refuses a zero run', async () => {
    const input = await h.call('runs.reductionInput', { sessionId, run: dataRuns[1] });
    expect(input.zeroed.info.run).toBe(dataRuns[1]);
    expect(input.zeroed.zeroRuns.length).toBeGreaterThan(0);
    expect(Object.keys(input.zeroed.values).sort()).toEqual(setup.channels.map((c) => c.name).sort());
    const err = await h.failure('runs.reductionInput', { sessionId, run: zeroRuns[0] });
    expect(err.kind).toBe('validation');
    expect(err.message).toContain('run');
  });

  it('re-reduces on request, keeping history', async () => {
    const r = await h.call('runs.reduce', { sessionId, runs: [dataRuns[0]], taskId: 'again' });
    expect(r.reduced).toBe(1);
    expect(r.summary.polar.length).toBe(dataRuns.length);
    const one = await h.call('runs.get', { sessionId, run: dataRuns[0] });
    expect(one.history).toHaveLength(2);
    const err = await h.failure('runs.reduce', { sessionId, runs: [zeroRuns[0]] });
    expect(err.kind).toBe('validation');
    expect(err.message).toContain('wind-off zero');
  });

  it('stores results computed elsewhere after checking they belong to the session and re-reducing them', async () => {
    const one = await h.call('runs.get', { sessionId, run: dataRuns[2] });
    const result = structuredClone(one.result!);
    const saved = await h.call('runs.saveResults', { sessionId, results: [result as unknown as Record<string, unknown>] });
    expect(saved.saved).toHaveLength(1);
    const after = await h.call('runs.get', { sessionId, run: dataRuns[2] });
    expect(after.history).toHaveLength(one.history.length + 1);
    expect(after.result!.corrected.cl).toBe(result.corrected.cl);
    // A result the reduction never gave (an altered flag reason, a dropped uncertainty bound):
    // refused, nothing stored (main/verify.ts).
    const altered = structuredClone(result);
    altered.uncertainty.cl!.hi += 1e-3;
    let refusal = await h.failure('runs.saveResults', { sessionId, results: [altered as unknown as Record<string, unknown>] });
    expect(refusal.kind).toBe('validation');
    expect(refusal.message).toContain(`run ${dataRuns[2]}: uncertainty.cl.hi: `);
    const badSettings = structuredClone(result);
    badSettings.settings.mcDraws = 10_000_000; // would make main work for minutes
    refusal = await h.failure('runs.saveResults', { sessionId, results: [badSettings as unknown as Record<string, unknown>] });
    expect(refusal.message).toContain('settings.mcDraws');
    expect((await h.call('runs.get', { sessionId, run: dataRuns[2] })).history).toHaveLength(after.history.length);

    const wrongRun = { ...result, run: 999 };
    let err = await h.failure('runs.saveResults', { sessionId, results: [wrongRun] });
    expect(err.kind).toBe('validation');
    expect(err.message).toContain('results.0.run');
    err = await h.failure('runs.saveResults', { sessionId, results: [{ ...result, run: zeroRuns[0] }] });
    expect(err.message).toMatch(/results\.0\.run: .*wind-off zero/);
    const noCl = structuredClone(result) as unknown as { corrected: Record<string, unknown> };
    delete noCl.corrected.cl;
    err = await h.failure('runs.saveResults', { sessionId, results: [noCl as unknown as Record<string, unknown>] });
    expect(err.message).toContain('results.0.corrected.cl');
    const foreignTap = structuredClone(result);
    foreignTap.taps[0].id = 'NOPE';
    err = await h.failure('runs.saveResults', { sessionId, results: [foreignTap as unknown as Record<string, unknown>] });
    expect(err.message).toContain('"NOPE"');
    err = await h.failure('runs.saveResults', { sessionId, results: [result, result] as unknown as Record<string, unknown>[] });
    expect(err.message).toContain('appears twice');
    const unchanged = await h.call('runs.get', { sessionId, run: dataRuns[2] });
    expect(unchanged.history).toHaveLength(after.history.length);
  });

  it('records reviews and overrides in the audit trail with the browser actor', async () => {
    await h.call('runs.review', { sessionId, run: dataRuns[0], verdict: 'rejected', comment: 'model vibrating' });
    const s1 = await h.call('taps.setBad', { sessionId, tapId: 'U02', bad: true, comment: 'blocked' });
    expect(s1.settings.badTaps).toContain('U02');
    const s2 = await h.call('settings.update', { sessionId, patch: { liftTolAbs: 0.05 }, note: 'wider' });
    expect(s2.liftTolAbs).toBe(0.05);
    expect((await h.call('settings.get', { sessionId })).badTaps).toContain('U02');
    const audit = await h.call('audit.list', { sessionId });
    expect(audit.length).toBeGreaterThanOrEqual(3);
    expect(audit.filter((a) => a.run === dataRuns[0]).every((a) => a.actor === 'browser')).toBe(true);
    expect(audit.some((a) => a.actor === 'browser' && a.run === null)).toBe(true);
    const runs = await h.call('runs.list', { sessionId });
    expect(runs.find((r) => r.run === dataRuns[0])?.review?.verdict).toBe('rejected');

    let err = await h.failure('taps.setBad', { sessionId, tapId: 'Z99', bad: true });
    expect(err.kind).toBe('validation');
    expect(err.message).toContain('Z99');
    err = await h.failure('settings.update', { sessionId, patch: { badTaps: ['Z98'] } });
    expect(err.message).toContain('patch.badTaps');
  });

  it('makes the day sheet and the exports', async () => {
    const sheet = await h.call('daysheet.html', { sessionId, paper: 'Letter' });
    expect(sheet.html).toMatch(/^<!doctype html>/i);
    expect(sheet.html).toContain(setup.session.title);
    const pdf = await h.call('daysheet.pdf', { sessionId, paper: 'A4' });
    expect(pdf).toEqual({ path: null, supported: false });
    const csv = await h.call('export.results', { sessionId, format: 'csv' });
    expect(csv.mime).toBe('text/csv');
    expect(csv.suggestedName).toMatch(/\.csv$/);
    expect(csv.text.split('\r\n')[0]).toMatch(/^run,kind,/);
    expect(csv.text.trim().split('\r\n')).toHaveLength(1 + mini.index.length);
    const json = await h.call('export.results', { sessionId, format: 'json' });
    expect(JSON.parse(json.text).format).toBe('rakeline-results');
    expect((await h.call('session.summary', { sessionId })).polar.length).toBeGreaterThan(0);
  });

  it('reports app info and unsupported native features in browser mode', async () => {
    const info = await h.call('app.info', {});
    expect(info.mode).toBe('browser');
    expect(info.dbFile).toBe(h.store.file);
    expect(await h.call('dialog.pickFolder', { purpose: 'import' })).toEqual({ folder: null, supported: false });
    expect(await h.call('file.save', { suggestedName: 'lift.svg', kind: 'svg', base64: 'PHN2Zy8+' })).toEqual({ path: null, supported: false });
  });

  it('browser mode records reviews under the name the page gives, not "browser"', async () => {
    const h2 = open('reviewer');
    expect((await h2.call('app.info', {})).reviewer).toBeNull();
    const { report } = await h2.call('sessions.importFolder', { folder });
    const run = mini.index.find((i) => i.kind === 'data')!.run;
    expect((await h2.call('reviewer.set', { name: '  T. Lindqvist ' })).reviewer).toBe('T. Lindqvist');
    expect((await h2.call('app.info', {})).reviewer).toBe('T. Lindqvist');
    await h2.call('runs.review', { sessionId: report.sessionId, run, verdict: 'rejected', comment: 'tufts' });
    expect((await h2.call('runs.get', { sessionId: report.sessionId, run })).row.review!.actor).toBe('T. Lindqvist');
    const trail = await h2.call('audit.list', { sessionId: report.sessionId });
    expect(trail.at(-1)).toMatchObject({ actor: 'T. Lindqvist', action: 'review.rejected' });
    expect(trail[0].actor).toBe('browser'); // the import came before the name was given
    await disposeHandlers(h2.handlers);
    h2.store.close();
  });

  it('the desktop app saves an exported plot through its save dialog', async () => {
    const saved: { name: string; kind: string; bytes: Buffer }[] = [];
    const h3 = open('save', { mode: 'electron', saveFile: async (name, kind, bytes) => { saved.push({ name, kind, bytes }); return `/home/mo/${name}`; } });
    const png = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
    expect(await h3.call('file.save', { suggestedName: 'drag-polar.png', kind: 'png', base64: png.toString('base64') }))
      .toEqual({ path: '/home/mo/drag-polar.png', supported: true });
    expect(saved[0].name).toBe('drag-polar.png');
    expect(saved[0].bytes.equals(png)).toBe(true);
    await disposeHandlers(h3.handlers);
    h3.store.close();
  });

  it('maps an unknown session to not-found and a missing folder to input', async () => {
    expect((await h.failure('sessions.get', { sessionId: 9999 })).kind).toBe('not-found');
    expect((await h.failure('runs.get', { sessionId, run: 9999 })).kind).toBe('not-found');
    const missing = await h.failure('sessions.importFolder', { folder: path.join(dir, 'nowhere') });
    expect(missing.kind).toBe('input');
    expect(missing.file).toBe(path.join(dir, 'nowhere'));
  });
});

describe('importFiles', () => {
  it('imports uploaded files through a temporary folder (same parser) and reduces them', async () => {
    const h = open('upload');
    const files = filesOf(folder, 'day-1');
    const r = await h.call('sessions.importFiles', { files, taskId: 'up' });
    expect(r.report.created).toBe(true);
    expect(r.reduced).toBe(dataRuns.length);
    const [s] = await h.call('sessions.list', {});
    expect(s.folder).toBeNull();
    expect(h.events.some((e) => e.event === 'progress' && (e.data as Events['progress']).taskId === 'up')).toBe(true);
    // the same files again: nothing new
    const again = await h.call('sessions.importFiles', { files });
    expect(again.report.sessionId).toBe(r.report.sessionId);
    expect(again.report.importedRuns).toEqual([]);
    h.store.close();
  });

  it('refuses names that climb out of the folder, and a missing setup.json', async () => {
    const h = open('upload-bad');
    const files = filesOf(folder, 'x');
    let err = await h.failure('sessions.importFiles', { files: [...files, { name: '../../evil.csv', text: 'a' }] });
    expect(err.kind).toBe('validation');
    expect(err.message).toContain('../../evil.csv');
    err = await h.failure('sessions.importFiles', { files: [...files, { name: '/etc/cron.d/x', text: 'a' }] });
    expect(err.message).toContain('absolute');
    err = await h.failure('sessions.importFiles', { files: files.filter((f) => !f.name.endsWith('setup.json')) });
    expect(err.kind).toBe('input');
    expect(err.message).toContain('setup.json');
    h.store.close();
  });

  it('turns a log error into an input error with file, line and channel', async () => {
    const h = open('upload-broken');
    const files = filesOf(folder, 's');
    const target = files.find((f) => f.name.endsWith(`run-${String(dataRuns[0]).padStart(4, '0')}.csv`))!;
    const lines = target.text.split('\n');
    const header = lines[0].split(',');
    const col = header.indexOf(setup.channels[2].name);
    const cells = lines[3].split(',');
    cells[col] = '1.2.3';
    lines[3] = cells.join(',');
    target.text = lines.join('\n');
    const err = await h.failure('sessions.importFiles', { files });
    expect(err.kind).toBe('input');
    expect(err.file).toBe(target.name.slice(2));
    expect(err.line).toBe(4);
    expect(err.column).toBe(setup.channels[2].name);
    expect(await h.call('sessions.list', {})).toEqual([]); // nothing stored
    h.store.close();
  });
});

describe('runsAffectedBy', () => {
  const row = (run: number, kind: 'zero' | 'data', minute: number): RunRow => ({
    sessionId: 1, run, kind, alphaDeg: 0, time: `2026-11-18T09:${String(minute).padStart(2, '0')}:00Z`, baro: 0,
    temperatureC: 0, humidity: 0, file: null, result: null, review: null,
  });
  const rows = [row(1, 'zero', 0), row(2, 'data', 1), row(3, 'data', 2), row(4, 'zero', 3), row(5, 'data', 4), row(6, 'data', 5), row(7, 'zero', 6)];
  it('a new data run affects itself only', () => {
    expect(runsAffectedBy(rows, [5])).toEqual([5]);
  });
  it('a new zero affects the data runs up to the neighbouring zeros on both sides', () => {
    expect(runsAffectedBy(rows, [4])).toEqual([2, 3, 5, 6]);
    expect(runsAffectedBy(rows, [7])).toEqual([5, 6]);
  });
});

describe('live mode', () => {
  it('imports and reduces each run as its file and index line land, one event per run', async () => {
    const liveDir = path.join(dir, 'live');
    const k = mini.runs.length - 2; // the last data run and the final zero arrive later
    writeSessionFolder(liveDir, setup, mini.index.slice(0, k), mini.runs.slice(0, k));
    const h = open('live', { watchStabilityMs: 100 });
    const waitForRuns = (n: number, what: string) =>
      new Promise<Events['watch.run'][]>((resolve, reject) => {
        const guard = setTimeout(() => reject(new Error(`no ${what} within 30 s: ${JSON.stringify(h.events)}`)), 30_000);
        const tick = setInterval(() => {
          const got = h.events.filter((e) => e.event === 'watch.run').map((e) => e.data as Events['watch.run']);
          if (got.length >= n) {
            clearTimeout(guard);
            clearInterval(tick);
            resolve(got);
          }
        }, 20);
      });

    const started = await h.call('watch.start', { folder: liveDir });
    expect(started).toEqual({ folder: path.resolve(liveDir), watching: true });
    expect(await h.call('watch.status', {})).toEqual({ folder: path.resolve(liveDir), watching: true });
    const first = await waitForRuns(k, 'initial runs');
    expect(first.every((e) => e.ok)).toBe(true);
    expect(first.map((e) => e.run)).toEqual(mini.index.slice(0, k).map((i) => i.run));

    // The index line arrives before its run log: no import (and no error) until the log lands.
    const late = mini.runs[k];
    const scratch = path.join(dir, 'scratch');
    writeSessionFolder(scratch, setup, mini.index.slice(0, k), mini.runs.slice(0, k));
    appendRunToFolder(scratch, setup, late);
    writeFileSync(path.join(liveDir, 'runs.csv'), readFileSync(path.join(scratch, 'runs.csv')));
    await new Promise((r) => setTimeout(r, 700)); // pacing only: let the watcher see runs.csv alone
    writeFileSync(path.join(liveDir, late.info.file!), readFileSync(path.join(scratch, late.info.file!)));
    const second = await waitForRuns(k + 1, `run ${late.info.run}`);
    const ev = second[k];
    expect(second.filter((e) => !e.ok)).toEqual([]);
    expect(ev.ok).toBe(true);
    expect(ev.run).toBe(late.info.run);
    expect(ev.message).toMatch(new RegExp(`^Run ${late.info.run} \\(α [-0-9.]+°\\) reduced: cl `));
    const rows = await h.call('runs.list', { sessionId: ev.sessionId! });
    expect(rows.find((r) => r.run === late.info.run)?.result).not.toBeNull();

    // The closing zero lands: the data runs since the previous zero are re-reduced with it.
    const before = (await h.call('runs.get', { sessionId: ev.sessionId!, run: late.info.run })).history.length;
    appendRunToFolder(liveDir, setup, mini.runs[k + 1]);
    const third = await waitForRuns(k + 2, 'the closing zero');
    expect(third[k + 1].message).toMatch(/^Wind-off zero run \d+ stored; \d+ data runs? re-reduced\.$/);
    expect((await h.call('runs.get', { sessionId: ev.sessionId!, run: late.info.run })).history.length).toBe(before + 1);

    expect(await h.call('watch.stop', {})).toEqual({ watching: false });
    expect(await h.call('watch.status', {})).toEqual({ folder: null, watching: false });
    h.store.close();
  });

  it('refuses to watch a folder that does not exist', async () => {
    const h = open('live-missing');
    const err = await h.failure('watch.start', { folder: path.join(dir, 'no-such-folder') });
    expect(err.kind).toBe('input');
    h.store.close();
  });
});

describe('native features through the context', () => {
  it('uses the given folder picker and PDF printer, and the given actor', async () => {
    const printed: { paper: string; path?: string; html: string }[] = [];
    const h = open('native', {
      mode: 'electron',
      actor: 'M. Okonkwo',
      pickFolder: async () => folder,
      printPdf: async (html, paper, p) => {
        printed.push({ html, paper, path: p });
        return p ?? '/tmp/chosen.pdf';
      },
    });
    expect(await h.call('dialog.pickFolder', { purpose: 'watch' })).toEqual({ folder, supported: true });
    const { report } = await h.call('sessions.importFolder', { folder });
    const out = await h.call('daysheet.pdf', { sessionId: report.sessionId, paper: 'Letter', path: path.join(dir, 'sheet.pdf') });
    expect(out).toEqual({ path: path.join(dir, 'sheet.pdf'), supported: true });
    expect(printed[0].paper).toBe('Letter');
    expect(printed[0].html).toContain(setup.session.title);
    const bad = await h.failure('daysheet.pdf', { sessionId: report.sessionId, paper: 'A4', path: 'relative.pdf' });
    expect(bad.kind).toBe('validation');
    expect(bad.message).toContain('path');
    const audit = await h.call('audit.list', { sessionId: report.sessionId });
    expect(audit.some((a) => a.actor === 'M. Okonkwo')).toBe(true);
    expect((await h.call('app.info', {})).mode).toBe('electron');
    h.store.close();
  });
});
