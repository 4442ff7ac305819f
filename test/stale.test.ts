// @vitest-environment happy-dom
// Stale results (app/stale.ts rule, main/stale.ts on the store): a result computed with other
// settings, bad taps or zeros than the session's current ones is marked, in every view, and
// re-reducing the stale runs clears the marks. The rule is common practice, no source.
// Data: the invented Harrowgate demo day (resources/demo), written through the log writer.
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { staleGroups, staleLine, staleMark, staleRunNumbers } from '../app/stale';
import { DEFAULT_SETTINGS, type RunInfo, type Settings } from '../app/types';
import { Store } from '../main/store';
import { importSessionFolder } from '../main/import';
import { reduceStoredSession } from '../main/reduceService';
import { listRunsMarked, staleMarks, staleRuns } from '../main/stale';
import { writeSessionFolder } from '../main/logwriter';
import { exportResultsCsv, exportResultsJson } from '../main/export';
import { runsTable } from '../main/cli';
import { daySheetHtml, runRanges as runRangesOf } from '../main/daysheet';
import { sessionSummary } from '../main/reduceService';
import { demoSession } from '../resources/demo/scenario';
import { cleanupTempDirs, tempDir } from './helpers/store-fixtures';

const S: Settings = { ...DEFAULT_SETTINGS, badTaps: ['U03'] };

/** The day sheet of a stored session, parsed: the status cell of a run and the settings section's
 *  stale list (the sheet names each run's own cause: settings, bad taps or zeros). */
function sheetOf(store: Store, sid: number) {
  const html = daySheetHtml({
    session: store.getSession(sid), setup: store.getSetup(sid), runs: listRunsMarked(store, sid), summary: sessionSummary(store, sid), paper: 'A4',
    generatedAt: '2026-11-18T18:00:00Z', settings: store.getSettings(sid), results: store.latestResults(sid),
  });
  const doc = new DOMParser().parseFromString(html, 'text/html');
  return {
    html,
    status: (run: number) => doc.querySelector(`table.runs tr[data-run="${run}"] .status`)!.textContent!,
    staleList: () => [...doc.querySelectorAll('ul.stale li')].map((li) => li.textContent!),
  };
}
const at = '2026-11-18T10:00:00.000Z';

describe('the stale rule', () => {
  it('a result with the current settings and no later zero is current', () => {
    expect(staleMark({ used: { ...S }, current: S, reducedAt: at, zeros: [{ run: 1, storedAt: '2026-11-18T09:59:59.999Z' }] })).toBeNull();
    // the order of the bad taps does not matter
    const two = { ...S, badTaps: ['U03', 'L07'] };
    expect(staleMark({ used: { ...two, badTaps: ['L07', 'U03'] }, current: two, reducedAt: at, zeros: [] })).toBeNull();
  });

  it('a changed setting names the key, the value used and the value now', () => {
    const m = staleMark({ used: { ...S, liftTolAbs: 0.03 }, current: S, reducedAt: at, zeros: [] })!;
    expect(m.settings).toEqual(['liftTolAbs']);
    expect(m.reasons).toEqual([`liftTolAbs was 0.03, now ${DEFAULT_SETTINGS.liftTolAbs}`]);
    expect(staleLine(m)).toBe(`stale: liftTolAbs was 0.03, now ${DEFAULT_SETTINGS.liftTolAbs}`);
  });

  it('a setting the result does not know (an older reduction) is stale too', () => {
    const { mcDraws: _drop, ...older } = S;
    const m = staleMark({ used: older, current: S, reducedAt: at, zeros: [] })!;
    expect(m.settings).toEqual(['mcDraws']);
    expect(m.reasons[0]).toContain('(not set)');
  });

  it('taps marked bad since, or no longer bad, are named', () => {
    const m = staleMark({ used: { ...S, badTaps: ['U03', 'L11'] }, current: { ...S, badTaps: ['U03', 'U09', 'L02'] }, reducedAt: at, zeros: [] })!;
    expect(m.taps).toEqual({ nowBad: ['L02', 'U09'], nowGood: ['L11'] });
    expect(m.settings).toEqual([]);
    expect(m.reasons).toEqual(['taps L02, U09 marked bad since', 'tap L11 no longer marked bad']);
  });

  it('a bracketing wind-off zero stored after the reduction makes it stale; one stored before does not', () => {
    const m = staleMark({
      used: S, current: S, reducedAt: at,
      zeros: [{ run: 1, storedAt: '2026-11-18T09:00:00.000Z' }, { run: 9, storedAt: '2026-11-18T10:00:00.001Z' }, { run: 8, storedAt: null }],
    })!;
    expect(m.zeros).toEqual([9]);
    expect(m.reasons).toEqual(['wind-off zero run 9 stored after this reduction']);
  });

  it('groups the stale runs by their reasons', () => {
    const a = staleMark({ used: { ...S, liftTolAbs: 0.03 }, current: S, reducedAt: at, zeros: [] });
    const b = staleMark({ used: { ...S, badTaps: [] }, current: S, reducedAt: at, zeros: [] });
    const rows = [{ run: 5, stale: a }, { run: 3, stale: a }, { run: 4, stale: null }, { run: 7, stale: b }];
    expect(staleRunNumbers(rows)).toEqual([3, 5, 7]);
    expect(staleGroups(rows)).toEqual([{ runs: [3, 5], reasons: a!.reasons }, { runs: [7], reasons: b!.reasons }]);
  });
});

describe('stale results in a stored session', () => {
  let dir: string;
  let store: Store;
  let index: RunInfo[];
  let dataRuns: number[];
  const sid = 1;

  beforeAll(async () => {
    dir = tempDir();
    const demo = demoSession({ runs: 10, taps: 16, rakeProbes: 8, wallTaps: 6, samples: 40, seed: 11 });
    index = demo.index;
    // Live mode: the folder first holds the runs up to the last data run before the final zero.
    const lastZero = index.map((i) => i.kind).lastIndexOf('zero');
    expect(lastZero).toBeGreaterThan(1);
    const firstPart = index.slice(0, lastZero);
    const keep = new Set(firstPart.map((i) => i.run));
    writeSessionFolder(join(dir, 'day'), demo.setup, firstPart, [...demo.runs()].filter((r) => keep.has(r.info.run)));
    store = Store.open(join(dir, 'rakeline.sqlite'));
    await importSessionFolder(store, join(dir, 'day'), { actor: 'M. Okonkwo' });
    reduceStoredSession(store, sid, { actor: 'M. Okonkwo' });
    dataRuns = firstPart.filter((i) => i.kind === 'data').map((i) => i.run);
    // … then the acquisition writes the rest of the day, ending with the last wind-off zero.
    writeSessionFolder(join(dir, 'day'), demo.setup, index, demo.runs());
  });
  afterAll(() => {
    store.close();
    cleanupTempDirs();
  });

  it('just reduced: nothing is stale', () => {
    expect(staleRuns(store, sid)).toEqual([]);
    expect(listRunsMarked(store, sid).every((r) => r.stale === null)).toBe(true);
  });

  it('a wind-off zero arriving after the reduction makes the runs it now brackets stale, and only those', async () => {
    await importSessionFolder(store, join(dir, 'day'), { actor: 'M. Okonkwo' });
    const stored = store.getIndex(sid);
    const zeroRun = index.filter((i) => i.kind === 'zero').at(-1)!.run;
    const lastZeroPos = index.findIndex((i) => i.run === zeroRun);
    // The data runs between the previous zero and the new one (they had only one zero before).
    const prevZeroPos = index.slice(0, lastZeroPos).map((i) => i.kind).lastIndexOf('zero');
    const bracketed = index.slice(prevZeroPos + 1, lastZeroPos).filter((i) => i.kind === 'data').map((i) => i.run);
    expect(bracketed.length).toBeGreaterThan(0);
    expect(stored.length).toBe(index.length);
    const marks = staleMarks(store, sid);
    expect([...marks.keys()].sort((a, b) => a - b)).toEqual(bracketed.filter((r) => dataRuns.includes(r)));
    for (const m of marks.values()) expect(m.zeros).toEqual([zeroRun]);
    // The sheet says the cause: the later zero, not other settings.
    const sheet = sheetOf(store, sid);
    for (const run of marks.keys()) {
      expect(sheet.status(run)).toContain(`stale: wind-off zero ${zeroRun} stored since`);
      expect(sheet.status(run)).not.toContain('other settings');
    }
    expect(sheet.status(dataRuns.find((r) => !marks.has(r))!)).not.toContain('stale');
    expect(sheet.staleList()).toEqual([`${marks.size > 1 ? 'runs' : 'run'} ${runRangesOf([...marks.keys()])}: wind-off zero run ${zeroRun} stored after this reduction`]);
    // Re-reducing the stale runs clears them.
    reduceStoredSession(store, sid, { runs: staleRuns(store, sid), actor: 'M. Okonkwo' });
    expect(staleRuns(store, sid)).toEqual([]);
    reduceStoredSession(store, sid, { actor: 'M. Okonkwo' }); // the new data runs too
    expect(staleRuns(store, sid)).toEqual([]);
  });

  it('a one-off setting (as `reduce --runs 3,5 --set liftTolAbs=0.03`) marks those runs, in the table, CSV, JSON and sheet', () => {
    const all = store.getIndex(sid).filter((i) => i.kind === 'data').map((i) => i.run);
    const some = all.slice(1, 3);
    reduceStoredSession(store, sid, { runs: some, settings: { liftTolAbs: 0.03 }, actor: 'cli' });
    expect(staleRuns(store, sid)).toEqual(some);
    const rows = listRunsMarked(store, sid);
    const want = `liftTolAbs was 0.03, now ${store.getSettings(sid).liftTolAbs}`;
    for (const r of rows) expect(r.stale?.reasons ?? null).toEqual(some.includes(r.run) ? [want] : null);

    const table = runsTable(rows).split('\n');
    for (const run of some) expect(table.find((l) => l.startsWith(String(run).padStart(4)))).toContain('[stale]');
    expect(table.find((l) => l.includes('stale result(s)'))).toContain('2 stale result(s)');

    const csv = exportResultsCsv(rows, store.getSetup(sid)).split('\r\n');
    const col = csv[0].split(',').indexOf('stale');
    expect(col).toBeGreaterThan(0);
    const cell = (run: number) => csv.find((l) => l.startsWith(`${run},`))!;
    expect(cell(some[0])).toContain(`stale: ${want}`);
    expect(cell(all[0])).not.toContain('stale:');

    const json = JSON.parse(exportResultsJson(store, sid)) as { runs: { run: number; stale: { reasons: string[] } | null }[] };
    expect(json.runs.find((r) => r.run === some[0])!.stale!.reasons).toEqual([want]);
    expect(json.runs.find((r) => r.run === all[0])!.stale).toBeNull();

    const html = daySheetHtml({
      session: store.getSession(sid), setup: store.getSetup(sid), runs: rows, summary: sessionSummary(store, sid), paper: 'A4',
      generatedAt: '2026-11-18T18:00:00Z', settings: store.getSettings(sid), results: store.latestResults(sid),
    });
    const doc = new DOMParser().parseFromString(html, 'text/html');
    const status = (run: number) => doc.querySelector(`table.runs tr[data-run="${run}"] .status`)!.textContent!;
    for (const run of some) expect(status(run)).toContain('stale: other settings');
    for (const run of some) expect(status(run)).not.toContain('bad taps');
    expect(status(all[0])).not.toContain('stale');
    expect(html).toContain('<b>Stale results</b>');
    expect(sheetOf(store, sid).staleList()).toEqual([`runs ${runRangesOf(some)}: Lift cross-check, absolute: 0.03 in cl (now ${store.getSettings(sid).liftTolAbs} in cl)`]);
  });

  it('saving a setting marks every reduced run stale; a tap override too; re-reducing the stale ones clears them', () => {
    reduceStoredSession(store, sid, { actor: 'M. Okonkwo' });
    expect(staleRuns(store, sid)).toEqual([]);
    const all = store.getIndex(sid).filter((i) => i.kind === 'data').map((i) => i.run);
    store.updateSettings(sid, { unsteadyThreshold: 0.05 }, 'M. Okonkwo');
    expect(staleRuns(store, sid)).toEqual(all);
    reduceStoredSession(store, sid, { runs: staleRuns(store, sid), actor: 'M. Okonkwo' });
    expect(staleRuns(store, sid)).toEqual([]);
    const tap = store.getSetup(sid).taps[4].id;
    store.setTapBad(sid, tap, true, 'M. Okonkwo', 'blocked');
    const m = staleMarks(store, sid);
    expect([...m.keys()]).toEqual(all);
    expect(m.get(all[0])!.reasons).toEqual([`tap ${tap} marked bad since`]);
    // The sheet says the cause: the bad tap, not other settings.
    const sheet = sheetOf(store, sid);
    for (const run of all) {
      expect(sheet.status(run)).toContain('stale: bad taps changed since');
      expect(sheet.status(run)).not.toContain('other settings');
    }
    expect(sheet.staleList()).toEqual([`runs ${runRangesOf(all)}: tap ${tap} marked bad since`]);
    reduceStoredSession(store, sid, { runs: staleRuns(store, sid), actor: 'M. Okonkwo' });
    expect(staleRuns(store, sid)).toEqual([]);
    // Saving the same value again changes nothing.
    store.updateSettings(sid, { unsteadyThreshold: 0.05 }, 'M. Okonkwo');
    expect(staleRuns(store, sid)).toEqual([]);
  });
});
