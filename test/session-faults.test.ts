// Session-level persistent faults (issue 9; app/sessionFaults.ts, common practice, no source):
// on the demo day (invented scenario, resources/demo/scenario.ts) the leaking tap is one session
// finding, the planted per-run faults are still flagged on exactly their runs, and the runs
// needing a decision are the runs of the planted faults only.
import { beforeAll, describe, expect, it } from 'vitest';
import { demoSession, type DemoSession } from '../resources/demo/scenario';
import { reduceRawSession, summariseSession } from '../app/reduce';
import { notedFlags, notesByRun, sessionFindings, splitFlags } from '../app/sessionFaults';
import type { ResultDigest, RunResult, SessionSummary } from '../app/types';

let demo: DemoSession;
let results: RunResult[];
let summary: SessionSummary;

beforeAll(() => {
  demo = demoSession();
  ({ results, summary } = reduceRawSession(demo.setup, [...demo.runs()], { mcDraws: 0 }));
});

describe('demo day: persistent faults', () => {
  it('the leaking tap is one session finding, on every data run', () => {
    const leak = demo.faults.find((f) => f.code === 'leaking-tap')!;
    expect(summary.findings).toHaveLength(1);
    const f = summary.findings![0];
    expect(f.code).toBe('leaking-tap');
    expect(f.tap).toBe(leak.tap);
    expect(f.runs).toEqual(results.map((r) => r.run));
    expect(f.text).toContain(leak.tap!);
    expect(f.text).toMatch(/every data run/);
  });

  it('the runs needing a decision are exactly the runs of the planted per-run faults', () => {
    const perRun = new Set(demo.faults.filter((f) => f.code !== 'leaking-tap').flatMap((f) => f.runs));
    expect(summary.needsDecision).toEqual(results.map((r) => r.run).filter((r) => perRun.has(r)));
    // Every run still carries its own leaking-tap flag in its record.
    expect(results.every((r) => r.flags.some((x) => x.code === 'leaking-tap'))).toBe(true);
  });

  it('the summary names each run\'s notes: the leaking-tap flag on every data run, never a planted per-run fault', () => {
    const notes = notesByRun(summary);
    const leak = demo.faults.find((f) => f.code === 'leaking-tap')!;
    for (const r of results) {
      const { decision, notes: n } = splitFlags(r.flags, notes.get(r.run));
      expect(n.map((f) => f.code), `run ${r.run}`).toEqual(['leaking-tap']);
      expect(n[0].reason).toContain(leak.tap!);
      // what is left is what the planted per-run faults raise, and it is what makes a decision
      const planted = demo.faults.filter((f) => f.code !== 'leaking-tap' && f.runs.includes(r.run)).map((f) => f.code);
      for (const code of planted) expect(decision.map((f) => f.code), `run ${r.run}`).toContain(code);
      expect(decision.length > 0, `run ${r.run}`).toBe(summary.needsDecision!.includes(r.run));
    }
    // a note is told by its code and reason, so a copy of the result (the inspector's) splits alike
    const r0 = results[0];
    expect(splitFlags(r0.flags.map((f) => ({ ...f })), notes.get(r0.run)).notes).toHaveLength(1);
    // with no findings there are no notes
    expect(notedFlags(results, [])).toEqual([]);
    // the polars mark as flagged only the runs with a flag of their own
    expect(summary.polar.filter((p) => p.flagged).map((p) => p.run)).toEqual(summary.needsDecision);
  });

  it('a tap fault on fewer than 80 % of the runs is no finding, and its runs need a decision', () => {
    const flag = (run: number, taps: string[]) => ({
      run,
      flags: [{ code: 'bad-tap' as const, severity: 'warn' as const, reason: 'x' }],
      dropped: taps.map((id) => ({ id, reason: 'outlier', by: 'auto' as const })),
    });
    const rs = [flag(1, ['C07']), flag(2, ['C07']), flag(3, ['C07']), { run: 4, flags: [] }, { run: 5, flags: [] }];
    const r = sessionFindings(rs);
    expect(r.findings).toEqual([]);
    expect(r.needsDecision).toEqual([1, 2, 3]);
    const r2 = sessionFindings([...rs.slice(0, 3), flag(4, ['C07', 'C11']), flag(5, ['C07'])]);
    expect(r2.findings.map((f) => f.tap)).toEqual(['C07']);
    expect(r2.needsDecision).toEqual([4]);
  });
});

describe('the command line states the findings once (main/cli.ts runsTable, findingsView)', () => {
  it('a flag a finding explains is a note on its run; the rest stay flags; the count is of runs needing a decision', async () => {
    const { findingsView, flagsText, findingsLines } = await import('../main/cli');
    // The view is the session summary's (the day log's and the sheet's), with each run's drops.
    const view = findingsView(summary, results);
    expect(view.findings).toEqual(summary.findings);
    const leak = demo.faults.find((f) => f.code === 'leaking-tap')!;
    for (const r of results) {
      const text = flagsText(r.run, r.flags, view);
      expect(text, `run ${r.run}`).toContain('note: leaking tap (session finding)');
      expect(text.startsWith('check: leaking tap'), `run ${r.run}`).toBe(false);
      // A run needing a decision shows its own flags first.
      if (summary.needsDecision!.includes(r.run)) expect(text, `run ${r.run}`).toMatch(/^(hold|check): /);
      else expect(text, `run ${r.run}`).toMatch(/^note: /);
    }
    const lines = findingsLines(view);
    expect(lines.filter((l) => l.includes(leak.tap!))).toHaveLength(1);
    expect(lines.at(-1)).toBe(`${summary.needsDecision!.length} of ${results.length} data run(s) need a decision: runs ${summary.needsDecision!.join(', ')}`);
    // A rejected run is left out of the count, as on the day log and the sheet (the summary leaves
    // the runs a reviewer rejected out: main/reduceService.ts sessionSummary).
    const rejected = summary.needsDecision![0];
    const without = summariseSession(demo.setup, results.filter((r) => r.run !== rejected) as unknown as ResultDigest[], demo.index);
    expect(findingsView(without, results).needsDecision).not.toContain(rejected);
    expect(findingsLines(findingsView(without, results)).at(-1)).toMatch(new RegExp(`of ${results.length - 1} data run`));
  });

  it('a tap whose channel is dead is explained by that finding, which replaces its leak finding', async () => {
    const { findingsView, flagsText } = await import('../main/cli');
    const leak = summary.findings!.find((f) => f.code === 'leaking-tap')!;
    const dead = { ...leak, code: 'dead-channel' as const, channel: 'P_X', text: `${leak.tap}: dead channel` };
    const view = findingsView({ ...summary, findings: [dead] }, results);
    const r = results.find((x) => !summary.needsDecision!.includes(x.run))!;
    expect(flagsText(r.run, r.flags, view)).toBe('note: leaking tap (session finding)');
  });
});
