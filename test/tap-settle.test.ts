// Issue 9 part 3: automatic tap drops are suggestions the engineer settles (docs/TAP-JUDGEMENT.md
// §5) — through the contract handlers on a real temporary SQLite file with the tiny invented
// Harrowgate demo day (16 taps; tap C05 leaks in every wind-off zero, so the reduction drops it
// automatically in every data run). Keep: recorded for that tap and run, only that run goes stale,
// re-reduced it keeps the tap; confirm: a session bad tap, every run stale, re-reduced dropped by
// hand. Each decision is in the audit trail with its actor, on the day sheet's bad-tap list and in
// the JSON export. These are our own rules (no source); no physics is checked here.
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { Window } from 'happy-dom';

vi.mock('electron', () => {
  throw new Error('the handlers must not import electron');
});

import { Store } from '../main/store';
import { disposeHandlers, type Handlers } from '../main/handlers';
import { cleanupTempDirs, tempDir } from './helpers/store-fixtures';
import { makeTinySession } from './helpers/cliSession';
import { openHandlers, type HandlerHarness } from './helpers/handlerHarness';

let dir: string;
let store: Store;
let handlers: Handlers;
let sessionId: number;
let data: number[];
const LEAK = 'C05';

let call: HandlerHarness['call'];
let failure: HandlerHarness['failure'];
const sheetText = async (selector: string) => {
  const { html } = await call('daysheet.html', { sessionId, paper: 'A4' });
  const win = new Window();
  win.document.write(html);
  return [...win.document.querySelectorAll(selector)].map((e) => e.textContent ?? '').join('\n');
};

beforeAll(async () => {
  dir = tempDir();
  const folder = makeTinySession(join(dir, 'hal-day'));
  ({ store, handlers, call, failure } = openHandlers(join(dir, 'rakeline.sqlite')));
  await call('reviewer.set', { name: 'T. Lindqvist' });
  const imp = await call('sessions.importFolder', { folder });
  sessionId = imp.report.sessionId;
  data = store.listRuns(sessionId).filter((r) => r.kind === 'data').map((r) => r.run);
}, 120_000);
afterAll(async () => {
  await disposeHandlers(handlers);
  store.close();
  cleanupTempDirs();
});

const dropOf = async (run: number, tap: string) => (await call('runs.get', { sessionId, run })).result!.dropped?.find((d) => d.id === tap);

describe('settling automatic tap drops', () => {
  it('the leaking tap is dropped automatically in every data run to begin with', async () => {
    expect(data.length).toBeGreaterThanOrEqual(4);
    for (const r of data) expect(await dropOf(r, LEAK), `run ${r}`).toMatchObject({ by: 'auto', reason: 'leak' });
  });

  it('refuses to settle a tap that was not dropped automatically, a zero run or an unknown tap, and leaves the store as it was', async () => {
    const auditBefore = store.auditTrail(sessionId).length;
    const settingsBefore = store.getSettings(sessionId);
    const good = (await call('runs.get', { sessionId, run: data[0] })).result!.taps.find((t) => !t.bad)!.id;
    let err = await failure('taps.settle', { sessionId, run: data[0], tapId: good, decision: 'keep' });
    expect(err.kind).toBe('validation');
    expect(err.message).toContain(`tap ${good} was not dropped automatically in the latest result of run ${data[0]}`);
    const zero = store.listRuns(sessionId).find((r) => r.kind === 'zero')!.run;
    err = await failure('taps.settle', { sessionId, run: zero, tapId: LEAK, decision: 'confirm' });
    expect(err.message).toMatch(new RegExp(`run: run ${zero} is a wind-off zero`));
    err = await failure('taps.settle', { sessionId, run: data[0], tapId: 'Z99', decision: 'keep' });
    expect(err.message).toContain('tapId: "Z99" is not a tap of session');
    err = await failure('taps.settle', { sessionId, run: data[0], tapId: LEAK, decision: 'release' });
    expect(err.message).toContain(`tap ${LEAK} is not kept in run ${data[0]}`);
    expect(store.auditTrail(sessionId)).toHaveLength(auditBefore);
    expect(store.getSettings(sessionId)).toEqual(settingsBefore);
  });

  it('keep: recorded for that tap and run, audited with the actor; only that run is stale and, re-reduced, keeps the tap', async () => {
    const run = data[1];
    const { settings, stale } = await call('taps.settle', { sessionId, run, tapId: LEAK, decision: 'keep', comment: 'zero offset only; the wind-on reading is sound' });
    expect(settings.keptTaps).toEqual([`${LEAK}@${run}`]);
    expect(settings.badTaps).not.toContain(LEAK);
    expect(stale).toEqual([run]);
    const a = store.auditTrail(sessionId).at(-1)!;
    expect(a).toMatchObject({ action: 'tap.keep', actor: 'T. Lindqvist', run });
    expect(a.detail).toMatchObject({ tapId: LEAK, run, decision: 'keep', suggestion: { id: LEAK, by: 'auto', reason: 'leak' } });
    const marked = (await call('runs.list', { sessionId })).filter((r) => r.stale).map((r) => r.run);
    expect(marked).toEqual([run]);
    expect((await call('runs.list', { sessionId })).find((r) => r.run === run)!.stale!.reasons.join()).toContain(`tap ${LEAK} kept in this run against the automatic test since`);

    const { reduced } = await call('runs.reduce', { sessionId, stale: true });
    expect(reduced).toBe(1);
    const kept = (await call('runs.get', { sessionId, run })).result!;
    expect(kept.dropped?.some((d) => d.id === LEAK)).toBe(false);
    expect(kept.kept).toEqual([LEAK]);
    expect(kept.taps.find((t) => t.id === LEAK)!.bad).toBeFalsy();
    for (const r of data.filter((x) => x !== run)) expect(await dropOf(r, LEAK), `run ${r}`).toMatchObject({ by: 'auto', reason: 'leak' });
    expect((await call('runs.list', { sessionId })).filter((r) => r.stale)).toEqual([]);

    const taps = await sheetText('ul.taps li');
    expect(taps).toContain(`${LEAK}, kept in run ${run} by the engineer against the reduction's automatic drop (leak at wind-off): zero offset only; the wind-on reading is sound — T. Lindqvist`);
    const json = JSON.parse((await call('export.results', { sessionId, format: 'json' })).text);
    expect(json.settings.keptTaps).toEqual([`${LEAK}@${run}`]);
    expect(json.runs.find((r: { run: number }) => r.run === run).result.kept).toEqual([LEAK]);
    expect(json.audit.some((x: { action: string; run: number }) => x.action === 'tap.keep' && x.run === run)).toBe(true);
  });

  it('release: the keep is taken back, the run goes stale and the test drops the tap again', async () => {
    const run = data[1];
    const { settings, stale } = await call('taps.settle', { sessionId, run, tapId: LEAK, decision: 'release' });
    expect(settings.keptTaps).toEqual([]);
    expect(stale).toEqual([run]);
    expect(store.auditTrail(sessionId).at(-1)).toMatchObject({ action: 'tap.release', actor: 'T. Lindqvist', run });
    await call('runs.reduce', { sessionId, stale: true });
    expect(await dropOf(run, LEAK)).toMatchObject({ by: 'auto', reason: 'leak' });
    expect(await sheetText('ul.taps li')).not.toContain('kept in run');
  });

  it('confirm: the tap becomes a session bad tap, audited; every data run is stale and, re-reduced, drops it by hand', async () => {
    const run = data[2];
    const { settings, stale } = await call('taps.settle', { sessionId, run, tapId: LEAK, decision: 'confirm', comment: 'tube cracked at the model root' });
    expect(settings.badTaps).toContain(LEAK);
    expect(stale).toEqual(data);
    const a = store.auditTrail(sessionId).at(-1)!;
    expect(a).toMatchObject({ action: 'tap.confirm', actor: 'T. Lindqvist', run });
    expect(a.detail).toMatchObject({ tapId: LEAK, decision: 'confirm', comment: 'tube cracked at the model root', suggestion: { reason: 'leak', by: 'auto' } });
    const { reduced } = await call('runs.reduce', { sessionId, stale: true });
    expect(reduced).toBe(data.length);
    for (const r of data) expect(await dropOf(r, LEAK), `run ${r}`).toMatchObject({ by: 'hand', reason: 'marked' });
    const taps = await sheetText('ul.taps li');
    expect(taps).toContain(`${LEAK}, marked bad by the engineer, confirming the reduction's automatic drop in run ${run} (leak at wind-off): tube cracked at the model root — T. Lindqvist`);
    // once confirmed there is no automatic drop of it left to settle
    const err = await failure('taps.settle', { sessionId, run, tapId: LEAK, decision: 'keep' });
    expect(err.message).toContain('was not dropped automatically');
  });
});
