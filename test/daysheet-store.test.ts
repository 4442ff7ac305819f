// The day sheet of a stored, reduced session (the tiny invented Harrowgate demo day: 16 taps, an
// 8-probe rake, 6 wall taps a wall): what a reviewer's actions do to it. No physics is checked
// here; these are the sheet's rules (our own, no source).
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Window } from 'happy-dom';
import { Store } from '../main/store';
import { importSessionFolder } from '../main/import';
import { reduceStoredSession, sessionSummary } from '../main/reduceService';
import { storedDaySheet, tapNotes } from '../main/daysheetData';
import { cleanupTempDirs, tempDir } from './helpers/store-fixtures';
import { makeTinySession } from './helpers/cliSession';

let dir: string;
let store: Store;
let data: number[];
const sheet = (o: { cpRuns?: number[] } = {}) => {
  const html = storedDaySheet(store, 1, { paper: 'A4', timeZone: 'Europe/Berlin', ...o });
  const win = new Window();
  win.document.write(html);
  return { html, doc: win.document };
};

beforeAll(async () => {
  dir = tempDir();
  const folder = makeTinySession(join(dir, 'hal-day'));
  store = Store.open(join(dir, 'rakeline.sqlite'));
  await importSessionFolder(store, folder, { actor: 'cli:mokonkwo' });
  reduceStoredSession(store, 1, { actor: 'cli:mokonkwo' });
  data = store.listRuns(1).filter((r) => r.kind === 'data').map((r) => r.run);
});
afterAll(() => {
  store.close();
  cleanupTempDirs();
});

describe('day sheet of a stored session', () => {
  it('a flag the session findings explain is listed as a note, apart from the flags to decide on', () => {
    const summary = sessionSummary(store, 1);
    const leak = summary.findings?.find((f) => f.code === 'leaking-tap');
    expect(leak, 'the tiny demo day has its leaking tap as a session finding').toBeDefined();
    const { doc } = sheet();
    const lists = [...doc.querySelectorAll('ul.common')];
    const noteList = lists.find((ul) => /Notes of the session findings/.test(ul.previousElementSibling?.textContent ?? ''));
    expect(noteList, 'a list of the notes').toBeDefined();
    const noteItems = [...noteList!.querySelectorAll('li')].map((li) => li.textContent ?? '');
    expect(noteItems.some((t) => t.startsWith('note') && t.includes(leak!.tap))).toBe(true);
    // nowhere among the flags to decide on
    for (const ul of lists.filter((x) => x !== noteList)) expect(ul.textContent).not.toContain(`Leaking tap ${leak!.tap}`);
    expect(doc.querySelector('dl.facts')!.textContent).toMatch(/\d+ flagged \(needing a decision\)/);
  });

  it('a rejected run keeps its flags beside the verdict; one run is "run N"', () => {
    const run = data[1];
    // give the run a flag of its own by reducing it with a lift tolerance nothing meets
    reduceStoredSession(store, 1, { runs: [run], settings: { liftTolAbs: 0, liftTolRel: 0 }, actor: 'cli:mokonkwo' });
    const flags = store.getRun(1, run).result!.flags;
    expect(flags.map((f) => f.code)).toContain('lift-mismatch');
    store.setReview(1, run, 'rejected', 'tufts show a stall cell', 'T. Lindqvist');
    const { doc } = sheet();
    const item = [...doc.querySelectorAll('ol.flagged > li')].find((li) => li.querySelector('b')!.textContent === `Run ${run}`);
    expect(item, 'the rejected run is listed').toBeDefined();
    const text = item!.textContent!;
    expect(text.toLowerCase()).toContain('lift methods disagree');
    expect(text).toContain('Reviewer T. Lindqvist rejected this run: tufts show a stall cell');
    expect(text).not.toContain('no flags');
    const row = doc.querySelector(`table.runs tr[data-run="${run}"]`)!.textContent!;
    expect(row).toContain('hold: lift mismatch');
    expect(row).toContain('rejected by T. Lindqvist');
    // reduced with other settings than those in force: said once, as "run N"
    const stale = doc.querySelector('ul.stale')!.textContent!;
    expect(stale).toContain(`run ${run}:`);
    expect(stale).not.toContain(`runs ${run}:`);
    expect(stale).toContain('Lift cross-check, absolute: 0 in cl (now 0.02 in cl)');
    expect(row).toContain('other settings');
    // the run is counted as flagged and as rejected in the facts
    expect(doc.querySelector('dl.facts')!.textContent).toMatch(/\d+ flagged \(needing a decision\)(, \d+ with only notes of the session findings)?, 1 rejected by the reviewer/);
  });

  it('every bad tap with the reason the engineer gave, by name; taps the reduction dropped with its reason', () => {
    const tap = store.getSetup(1).taps.find((t) => t.surface === 'upper' && t.x > 0.2)!.id;
    store.setTapBad(1, tap, true, 'cli:mokonkwo', 'tube pinched at the model root');
    expect(tapNotes(store, 1).at(-1)).toMatchObject({ tapId: tap, bad: true, comment: 'tube pinched at the model root' });
    const { doc } = sheet();
    const taps = doc.querySelector('ul.taps')!.textContent!;
    expect(taps).toContain(`${tap}, marked bad by the engineer: tube pinched at the model root — mokonkwo`);
    expect(taps).not.toContain('cli:');
    expect(taps).toMatch(/C05, dropped by the reduction: leak at wind-off \(runs? /);
  });

  it('local times to the second, no milliseconds, no ISO stamps, no local paths, no cli: actors', () => {
    const { html, doc } = sheet();
    const text = doc.body.textContent!;
    expect(text).not.toMatch(/\d{2}:\d{2}:\d{2}\.\d/);
    expect(text).not.toMatch(/\d{4}-\d{2}-\d{2}T\d{2}:/);
    expect(html).not.toContain(dir);
    expect(html).not.toContain('hal-day');
    expect(text).not.toContain('cli:');
    expect(text).toMatch(/Times on this sheet are local \(UTC\+01:00\)/); // Europe/Berlin in November
    // the first run of the demo index at 09:05 UTC is printed as 10:05:00 local
    const first = store.listRuns(1)[0];
    expect(first.time).toMatch(/T09:05:00/);
    expect(doc.querySelector(`table.runs tr[data-run="${first.run}"]`)!.textContent).toContain('10:05:00');
  });

  it('running header text in the page-margin boxes; plots in points with tick labels of 8 pt or more', () => {
    const { html, doc } = sheet();
    const style = doc.querySelector('style')!.textContent!;
    const setup = store.getSetup(1);
    expect(style).toMatch(/@top-left\s*{\s*content:\s*"Test-day summary · [^"]*· model [^"]*· 2026-11-18"/);
    expect(style).toContain(setup.model.name);
    expect(style).toMatch(/@top-right\s*{\s*content:\s*"page " counter\(page\) " of " counter\(pages\)/);
    const svgs = [...doc.querySelectorAll('svg')];
    expect(svgs.length).toBeGreaterThanOrEqual(4);
    for (const svg of svgs) {
      const vb = svg.getAttribute('viewBox')!.split(' ').map(Number);
      expect(svg.getAttribute('width')).toBe(`${vb[2]}pt`);
      for (const t of svg.querySelectorAll('text')) expect(Number(t.getAttribute('font-size'))).toBeGreaterThanOrEqual(8);
    }
    void html;
  });

  it('a Cp plot for each flagged or rejected run and for each run the engineer picks', () => {
    const titles = (d: Document) => [...d.querySelectorAll('svg title')].map((t) => t.textContent!).filter((t) => t.startsWith('Run '));
    const without = titles(sheet().doc as unknown as Document);
    const shown = (list: string[], run: number) => list.some((t) => t.startsWith(`Run ${run}:`));
    // the demo's leaking tap flags every run alike (a common flag): those runs get no Cp plot of
    // their own; the lift-mismatch run (a hold flag) and the rejected run do
    const held = store.listRuns(1).filter((r) => r.result?.flags.some((f) => f.severity === 'reject')).map((r) => r.run);
    expect(held.length).toBeGreaterThan(0);
    for (const r of held) expect(shown(without, r)).toBe(true);
    const picked = data.find((r) => !shown(without, r))!;
    expect(picked).toBeDefined();
    const withPick = titles(sheet({ cpRuns: [picked] }).doc as unknown as Document);
    expect(withPick.some((t) => t.startsWith(`Run ${picked}:`))).toBe(true);
    expect(withPick.length).toBe(without.length + 1);
    // a picked run that cannot be plotted (no such run; a wind-off zero) is named, not dropped silently
    const zero = store.listRuns(1).find((r) => r.kind === 'zero')!.run;
    const { doc } = sheet({ cpRuns: [picked, zero, 999] });
    expect(doc.body.textContent).toContain(`Picked but not plotted (no such data run, or not reduced): runs ${zero}, 999.`);
    expect(titles(doc as unknown as Document).some((t) => t.startsWith(`Run ${picked}:`))).toBe(true);
  });

  it('the session-level findings: the leaking tap of every wind-off zero reported once, as the summary words it', () => {
    const { doc } = sheet();
    const h = [...doc.querySelectorAll('h2')].find((x) => x.textContent === 'Session-level findings');
    expect(h).toBeDefined();
    const text = h!.parentElement!.textContent!;
    const findings = sessionSummary(store, 1).findings ?? [];
    expect(findings.map((f) => [f.code, f.tap])).toEqual([['leaking-tap', 'C05']]);
    expect(text).toContain(findings[0].text);
    expect(text).not.toContain('None reported for this session.');
  });
});
