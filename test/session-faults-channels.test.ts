// Dead and saturated channels found across the session (issue 9 part 4; app/sessionFaults.ts
// channelFindings; the rules are common practice, no source). Planted on the tiny invented
// Harrowgate demo day (16 taps, 8 rake probes, 6 wall taps a wall): a tap whose transducer output
// is frozen, a tap whose tube is blocked (it reads its wind-off value with the wind on, with live
// scatter), a rake probe clipped at its full scale. Each is one finding on its channel and nothing
// else is; the clean day, a day without wind-off zeros and a channel that is only quiet wind-off
// give no channel finding.
import { describe, expect, it } from 'vitest';
import { demoSession } from '../resources/demo/scenario';
import { reduceRawSession } from '../app/reduce';
import { channelFindings, NO_RESPONSE_Q } from '../app/sessionFaults';
import { averageRun } from '../app/samples';
import { PA_PER_UNIT } from '../app/units';
import type { RawRun, Setup } from '../app/types';
import { TINY } from './helpers/cliSession';
import { rng } from './helpers/mini-session';
import { join } from 'node:path';
import { Window } from 'happy-dom';
import { Store } from '../main/store';
import { importSessionFolder } from '../main/import';
import { reduceStoredSession, sessionSummary } from '../main/reduceService';
import { storedDaySheet } from '../main/daysheetData';
import { writeSessionFolder } from '../main/logwriter';
import { cleanupTempDirs, tempDir } from './helpers/store-fixtures';

const demo = demoSession(TINY);
const setup = demo.setup;
const clean = () => [...demo.runs()].map((r) => ({ info: r.info, channels: Object.fromEntries(Object.entries(r.channels).map(([k, v]) => [k, Float64Array.from(v)])) }) as RawRun);
const chOf = (s: Setup, id: string) => s.channels.find((c) => c.target.kind !== 'reference' && c.target.id === id)!;
const stats = (runs: RawRun[]) => runs.map((r) => averageRun(r, 5));
const channelCodes = (runs: RawRun[]) => channelFindings(setup, stats(runs)).map((f) => [f.code, f.channel]);

const FROZEN = 'C07';
const BLOCKED = 'C11';
const rakeProbe = setup.rake.probes.find((p) => p.kind === 'total')!.id;

function planted(): RawRun[] {
  const runs = clean();
  const frozen = chOf(setup, FROZEN).name;
  const blocked = chOf(setup, BLOCKED).name;
  const rake = chOf(setup, rakeProbe);
  const rail = rake.uncertainty.fullScale * PA_PER_UNIT[rake.unit as keyof typeof PA_PER_UNIT];
  const zeroMeans = runs.filter((r) => r.info.kind === 'zero').map((r) => r.channels[blocked].reduce((a, b) => a + b, 0) / r.channels[blocked].length);
  const zero = zeroMeans.sort((a, b) => a - b)[zeroMeans.length >> 1];
  const rand = rng(99);
  for (const r of runs) {
    r.channels[frozen].fill(-41.25); // a frozen output: the same number in every sample of every run
    if (r.info.kind === 'data') {
      // blocked tube: its wind-off value with the wind on, with live scatter of ±1.5 Pa
      const a = r.channels[blocked];
      for (let i = 0; i < a.length; i++) a[i] = zero + 3 * (rand() - 0.5);
      r.channels[rake.name].fill(rail); // clipped at its full scale
    }
  }
  return runs;
}

describe('session-level dead and saturated channels', () => {
  it('the clean tiny day and the clean full demo day have no channel finding', () => {
    expect(channelCodes(clean())).toEqual([]);
    const full = demoSession();
    expect(channelFindings(full.setup, [...full.runs()].map((r) => averageRun(r, 5)))).toEqual([]);
  }, 120_000);

  it('each planted channel fault is one finding on its channel, and nothing else is', () => {
    const f = channelFindings(setup, stats(planted()));
    expect(f.map((x) => [x.code, x.tap])).toEqual([
      ['dead-channel', FROZEN],
      ['dead-channel', BLOCKED],
      ['saturated-channel', rakeProbe],
    ].sort((a, b) => setup.channels.findIndex((c) => c.name === chOf(setup, a[1]).name) - setup.channels.findIndex((c) => c.name === chOf(setup, b[1]).name)));
    const byTap = new Map(f.map((x) => [x.tap, x]));
    const allRuns = demo.index.map((i) => i.run);
    const dataRuns = demo.index.filter((i) => i.kind === 'data').map((i) => i.run);
    expect(byTap.get(FROZEN)!.runs).toEqual(allRuns);
    expect(byTap.get(FROZEN)!.text).toMatch(new RegExp(`^Tap ${FROZEN} \\(channel ${chOf(setup, FROZEN).name}\\) reads the same value \\(-41\\.25 Pa\\) without any scatter in every run, runs `));
    expect(byTap.get(BLOCKED)!.runs).toEqual(dataRuns);
    expect(byTap.get(BLOCKED)!.text).toContain(`reads with the wind on what it reads in the wind-off zeros (within ${NO_RESPONSE_Q * 100} % of q) in every data run`);
    expect(byTap.get(rakeProbe)!.runs).toEqual(dataRuns);
    expect(byTap.get(rakeProbe)!.text).toMatch(/sits at its full scale .* in every data run, runs .*: the transducer is over range/);
  });

  it('the session summary reports them once beside the leaking tap; the frozen tap, also dropped as leaking in every run, is reported once, as the dead channel', () => {
    const a = reduceRawSession(setup, clean(), { mcDraws: 0 }).summary;
    const b = reduceRawSession(setup, planted(), { mcDraws: 0 }).summary;
    expect(a.findings!.map((f) => f.code)).toEqual(['leaking-tap']);
    expect(b.findings!.map((f) => f.code).sort()).toEqual(['dead-channel', 'dead-channel', 'leaking-tap', 'saturated-channel']);
    expect(b.findings!.filter((f) => f.code === 'leaking-tap')).toEqual(a.findings);
    expect(b.findings!.filter((f) => f.tap === FROZEN).map((f) => f.code)).toEqual(['dead-channel']);
  });

  it('a fault in fewer than 80 % of the runs, a channel quiet only wind-off, and a day without zeros give no channel finding', () => {
    const runs = clean();
    const data = runs.filter((r) => r.info.kind === 'data');
    const name = chOf(setup, FROZEN).name;
    // frozen in 2 data runs only
    data.slice(0, 2).forEach((r) => r.channels[name].fill(10));
    // quiet in every wind-off zero (a coarse converter), live with the wind on
    const quiet = chOf(setup, BLOCKED).name;
    for (const r of runs) if (r.info.kind === 'zero') r.channels[quiet].fill(2);
    expect(channelCodes(runs)).toEqual([]);
    // no wind-off zeros at all: the response check cannot run, nothing is claimed
    expect(channelCodes(clean().filter((r) => r.info.kind === 'data'))).toEqual([]);
  });
});

describe('dead and saturated channels of a stored session', () => {
  it('the store\'s summary and the day sheet\'s findings section report each once', async () => {
    const dir = tempDir();
    try {
      const folder = join(dir, 'hal-day');
      writeSessionFolder(folder, setup, demo.index, planted());
      const store = Store.open(join(dir, 'rakeline.sqlite'));
      try {
        await importSessionFolder(store, folder, { actor: 'cli:mokonkwo' });
        reduceStoredSession(store, 1, { actor: 'cli:mokonkwo' });
        const found = sessionSummary(store, 1).findings!;
        expect(found.map((f) => [f.code, f.tap]).sort()).toEqual([
          ['dead-channel', FROZEN], ['dead-channel', BLOCKED], ['leaking-tap', 'C05'], ['saturated-channel', rakeProbe],
        ].sort());
        const win = new Window();
        win.document.write(storedDaySheet(store, 1, { paper: 'A4', timeZone: 'UTC' }));
        const items = [...win.document.querySelectorAll('ul.findings li')].map((li) => li.textContent ?? '');
        expect(items).toHaveLength(4);
        expect(items.filter((t) => t.includes(`Dead channel ${chOf(setup, FROZEN).name}:`))).toHaveLength(1);
        expect(items.filter((t) => t.includes(`Dead channel ${chOf(setup, BLOCKED).name}:`))).toHaveLength(1);
        expect(items.filter((t) => t.includes(`Saturated channel ${chOf(setup, rakeProbe).name}:`))).toHaveLength(1);
      } finally {
        store.close();
      }
    } finally {
      cleanupTempDirs();
    }
  }, 120_000);
});
