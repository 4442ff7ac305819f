// Live mode in either order (issue 12, failure 6): acquisition writes the run-index line before or
// after the run log, and a log may still be growing when live mode first sees it. Each case runs the
// real watcher (chokidar) on a real folder and a real SQLite file and asserts that, at the end, the
// database holds exactly what an undisturbed import of the final files holds (runs, samples,
// statistics, latest results), and that a half-read run was replaced with an audit entry saying so.
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { appendFileSync, mkdtempSync, readFileSync, rmSync, statSync, utimesSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';

vi.mock('electron', () => {
  throw new Error('the handlers must not import electron');
});

import { Store } from '../main/store';
import { disposeHandlers, readySource } from '../main/handlers';
import type { Events } from '../main/contract';
import { writeSessionFolder } from '../main/logwriter';
import { miniRuns, miniSetup } from './helpers/mini-session';
import { openHandlers } from './helpers/handlerHarness';

let dir: string;
const setup = miniSetup();
// 24 samples a run, so that a log can be cut at a line boundary with samples on both sides.
const mini = miniRuns(setup, { dataRuns: 4, samples: 24 });
const STABLE_MS = 100;

beforeAll(() => {
  dir = mkdtempSync(path.join(tmpdir(), 'rakeline-live-'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function open(name: string) {
  const { store, handlers, call, events } = openHandlers(path.join(dir, `${name}.sqlite`), { watchStabilityMs: STABLE_MS, actor: 'test' });
  const live = () => events.filter((e) => e.event === 'watch.run').map((e) => e.data as Events['watch.run']);
  const until = (pred: (ev: Events['watch.run'][]) => boolean, what: string) =>
    new Promise<Events['watch.run'][]>((resolve, reject) => {
      const guard = setTimeout(() => reject(new Error(`no ${what} within 30 s: ${JSON.stringify(live())}`)), 30_000);
      const tick = setInterval(() => {
        if (pred(live())) {
          clearTimeout(guard);
          clearInterval(tick);
          resolve(live());
        }
      }, 20);
    });
  return { store, handlers, call, live, until };
}

/** What the session holds, with ids, times, hashes of superseded files and history left out:
 *  the runs of the index, every sample, the channel statistics and each data run's latest result. */
function essence(store: Store): unknown {
  const db = store.db;
  return {
    runs: db.prepare('SELECT run, kind, time, alpha_deg, baro, temperature_c, humidity, file, samples, index_pos FROM runs ORDER BY run').all(),
    samples: db.prepare('SELECT run, channel, dtype, n, hex(data) AS data, dec_exp, unit_factor FROM samples ORDER BY run, channel').all(),
    stats: db.prepare('SELECT run, channel, spike_k, mean, std, n, std_err, rejected FROM channel_stats ORDER BY run, channel').all(),
    results: db.prepare('SELECT run, core_version, settings_json, q, re, v, cl, cl_mom, cl_wall, cd, cdp, cmc4, gamma_pressure, gamma_momentum, alpha_corr_deg, flag_count FROM latest_reductions ORDER BY run').all(),
    flags: db.prepare('SELECT r.run, f.seq, f.code, f.severity, f.reason FROM latest_reductions r JOIN flags f ON f.reduction_id = r.id ORDER BY r.run, f.seq').all(),
    latestFiles: db.prepare('SELECT name, sha256, bytes FROM source_files s WHERE id = (SELECT MAX(id) FROM source_files x WHERE x.name = s.name) ORDER BY name').all(),
  };
}

/** The final files (every run) written once, to copy from. */
function finalFolder(name: string): string {
  const f = path.join(dir, `${name}-final`);
  writeSessionFolder(f, setup, mini.index, mini.runs);
  return f;
}

/** The essence of an undisturbed import of the final files (folder import + its reduction). */
async function undisturbed(name: string, folder: string): Promise<unknown> {
  const h = open(`${name}-undisturbed`);
  await h.call('sessions.importFolder', { folder });
  const got = essence(h.store);
  await disposeHandlers(h.handlers);
  h.store.close();
  return got;
}

/** The folder as it stands after the first `k` runs (index and logs). */
function startFolder(name: string, k: number): string {
  const f = path.join(dir, name);
  writeSessionFolder(f, setup, mini.index.slice(0, k), mini.runs.slice(0, k));
  return f;
}

/** Bytes of a run log cut after sample line `lines` (header is line 1): a line boundary. */
function cutAtLine(text: string, lines: number): [string, string] {
  const parts = text.split('\n');
  const head = parts.slice(0, lines + 1).join('\n') + '\n';
  return [head, text.slice(head.length)];
}

const pause = (ms: number) => new Promise((r) => setTimeout(r, ms)); // pacing only, never a result

describe('live mode in either order', () => {
  const k = mini.runs.length - 2; // a data run (k) and the closing zero (k + 1) arrive live
  const late = mini.runs[k];

  it('index line first, the log paused at a line boundary long enough to be imported, then the rest: the run is replaced, audited, re-reduced', async () => {
    expect(late.info.kind).toBe('data');
    const final = finalFolder('idx-first');
    const liveDir = startFolder('idx-first', k);
    const h = open('idx-first');
    await h.call('watch.start', { folder: liveDir });
    await h.until((ev) => ev.length >= k, 'the initial runs');

    const logName = late.info.file!;
    const [head, rest] = cutAtLine(readFileSync(path.join(final, logName), 'utf8'), 10);
    // The index as it is at the end, the data run's line first…
    writeFileSync(path.join(liveDir, 'runs.csv'), cutAtLine(readFileSync(path.join(final, 'runs.csv'), 'utf8'), k + 1)[0]);
    await pause(3 * STABLE_MS);
    // …then half the log (10 of 24 samples), standing still for longer than the settle time.
    writeFileSync(path.join(liveDir, logName), head);
    const half = await h.until((ev) => ev.some((e) => e.run === late.info.run), `half of run ${late.info.run}`);
    const sid = half.find((e) => e.run === late.info.run)!.sessionId!;
    expect(h.store.getRun(sid, late.info.run)).toBeTruthy();
    expect((h.store.db.prepare('SELECT samples FROM runs WHERE session_id = ? AND run = ?').get(sid, late.info.run) as { samples: number }).samples).toBe(10);

    // The rest of the log: the stored run is replaced by the whole log's samples.
    appendFileSync(path.join(liveDir, logName), rest);
    const after = await h.until((ev) => ev.some((e) => e.run === late.info.run && /grew after it was imported/.test(e.message)), 'the replacement');
    expect(after.filter((e) => !e.ok)).toEqual([]);
    // The closing zero, log then index line.
    writeFileSync(path.join(liveDir, mini.runs[k + 1].info.file!), readFileSync(path.join(final, mini.runs[k + 1].info.file!)));
    await pause(3 * STABLE_MS);
    writeFileSync(path.join(liveDir, 'runs.csv'), readFileSync(path.join(final, 'runs.csv')));
    const end = await h.until((ev) => ev.some((e) => e.run === mini.runs[k + 1].info.run), 'the closing zero');
    expect(end.filter((e) => !e.ok)).toEqual([]);
    await h.call('watch.stop', {});

    const audit = h.store.auditTrail(sid).filter((a) => a.action === 'import');
    const replacing = audit.filter((a) => (a.detail as { replacedRuns?: number[] }).replacedRuns?.includes(late.info.run));
    expect(replacing).toHaveLength(1);
    expect(essence(h.store)).toEqual(await undisturbed('idx-first', final));
    await disposeHandlers(h.handlers);
    h.store.close();
  });

  it('log first, then the index line: the run is taken once, whole', async () => {
    const final = finalFolder('log-first');
    const liveDir = startFolder('log-first', k);
    const h = open('log-first');
    await h.call('watch.start', { folder: liveDir });
    await h.until((ev) => ev.length >= k, 'the initial runs');
    const logName = late.info.file!;
    const [head, rest] = cutAtLine(readFileSync(path.join(final, logName), 'utf8'), 7);
    writeFileSync(path.join(liveDir, logName), head);
    await pause(3 * STABLE_MS);
    appendFileSync(path.join(liveDir, logName), rest);
    await pause(3 * STABLE_MS);
    expect(h.live()).toHaveLength(k); // no index line yet: nothing taken
    writeFileSync(path.join(liveDir, mini.runs[k + 1].info.file!), readFileSync(path.join(final, mini.runs[k + 1].info.file!)));
    writeFileSync(path.join(liveDir, 'runs.csv'), readFileSync(path.join(final, 'runs.csv')));
    const end = await h.until((ev) => ev.some((e) => e.run === mini.runs[k + 1].info.run), 'the closing zero');
    expect(end.filter((e) => !e.ok)).toEqual([]);
    expect(end.filter((e) => /grew after/.test(e.message))).toEqual([]);
    await h.call('watch.stop', {});
    expect(essence(h.store)).toEqual(await undisturbed('log-first', final));
    await disposeHandlers(h.handlers);
    h.store.close();
  });

  it('a log that grows after a folder import (no watcher): importing again replaces the run, audited, and reduces it again', async () => {
    const final = finalFolder('grows');
    const liveDir = startFolder('grows', mini.runs.length);
    const logName = late.info.file!;
    const [head] = cutAtLine(readFileSync(path.join(final, logName), 'utf8'), 5);
    writeFileSync(path.join(liveDir, logName), head);
    const h = open('grows');
    const first = await h.call('sessions.importFolder', { folder: liveDir });
    expect(first.report.replacedRuns ?? []).toEqual([]);
    writeFileSync(path.join(liveDir, logName), readFileSync(path.join(final, logName)));
    const second = await h.call('sessions.importFolder', { folder: liveDir });
    expect(second.report.replacedRuns).toEqual([late.info.run]);
    expect(second.report.changedFiles).toEqual([]);
    expect(second.reduced).toBeGreaterThanOrEqual(1);
    const audit = h.store.auditTrail(first.report.sessionId).filter((a) => a.action === 'import').at(-1)!;
    expect(audit.detail).toMatchObject({ replacedRuns: [late.info.run] });
    expect(essence(h.store)).toEqual(await undisturbed('grows', final));
    await disposeHandlers(h.handlers);
    h.store.close();
  });

  it('a log whose stored bytes are not the start of the new file is still refused as changed (not merged)', async () => {
    const liveDir = startFolder('edited', mini.runs.length);
    const h = open('edited');
    const first = await h.call('sessions.importFolder', { folder: liveDir });
    const before = essence(h.store);
    const logName = late.info.file!;
    const text = readFileSync(path.join(liveDir, logName), 'utf8');
    const lines = text.split('\n');
    lines[3] = lines[3].replace(/,([-0-9.]+)/, ',9$1'); // an edited sample, then more lines
    writeFileSync(path.join(liveDir, logName), lines.join('\n') + lines.slice(1, 4).join('\n') + '\n');
    const second = await h.call('sessions.importFolder', { folder: liveDir });
    expect(second.report.changedFiles).toEqual([logName]);
    expect(second.report.replacedRuns ?? []).toEqual([]);
    expect(essence(h.store)).toEqual(before);
    expect(first.report.sessionId).toBe(second.report.sessionId);
    await disposeHandlers(h.handlers);
    h.store.close();
  });

  it('readySource holds a run whose log was modified less than the settle time ago, and says when to look again', async () => {
    const f = startFolder('settle', 3);
    const last = mini.runs[2].info.file!;
    const old = Date.now() / 1000 - 3600;
    for (const r of mini.runs.slice(0, 2)) utimesSync(path.join(f, r.info.file!), old, old);
    const mtime = statSync(path.join(f, last)).mtimeMs;
    const early = await readySource(f, { settleMs: 1000, now: mtime + 100 });
    expect(early?.waiting).toEqual([last]);
    expect(early?.retryInMs).toBeGreaterThan(850);
    expect(early?.retryInMs).toBeLessThanOrEqual(900);
    const later = await readySource(f, { settleMs: 1000, now: mtime + 1500 });
    expect(later?.waiting).toEqual([]);
    expect(later?.retryInMs).toBeNull();
    // Every log just written: nothing to import yet, but a time to look again.
    const t = Date.now() / 1000;
    for (const r of mini.runs.slice(0, 3)) utimesSync(path.join(f, r.info.file!), t, t);
    const none = await readySource(f, { settleMs: 60_000 });
    expect(none?.source).toBeNull();
    expect(none?.retryInMs).toBeGreaterThan(0);
  });
});
