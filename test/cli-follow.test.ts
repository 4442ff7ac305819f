// `rakeline follow <folder>`: watches a session folder and imports + reduces each run file as it
// lands, printing one line per run. Every wait is bounded and fails with a clear message.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { RawRun } from '../app/types';
import { demoSession } from '../resources/demo/scenario';
import { appendRunToFolder, runFileName, writeSessionFolder } from '../main/logwriter';
import { runCli, startCli, TINY, waitFor } from './helpers/cliSession';

let dir: string;
let live: string;
let demo: ReturnType<typeof demoSession>;
let lastRaw: RawRun;

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'rakeline-follow-'));
  // The live folder holds every run but the last; the last one "lands" during the test the way
  // live acquisition writes it (run log first, then its line appended to runs.csv).
  demo = demoSession(TINY);
  const raws = [...demo.runs()];
  const k = raws.findLastIndex((r) => r.info.kind === 'data'); // the last data run lands
  lastRaw = raws[k];
  live = join(dir, 'live');
  writeSessionFolder(live, demo.setup, demo.index.slice(0, k), raws.slice(0, k));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('follow', () => {
  it('picks up a data run that lands (log file, then its runs.csv line) and prints its line', async () => {
    const db = join(dir, 'follow.sqlite');
    const child = startCli(['--db', db, 'follow', '--settle', '150', live]);
    let stdout = '';
    let stderr = '';
    child.stdout.setEncoding('utf8').on('data', (d: string) => (stdout += d));
    child.stderr.setEncoding('utf8').on('data', (d: string) => (stderr += d));
    const exited = new Promise<number | null>((res) => child.on('close', (code) => res(code)));
    try {
      await waitFor(child.stderr, /watching /, 30_000, 'the "watching" line of rakeline follow').catch((e: Error) => {
        throw new Error(`${e.message}\nstdout so far:\n${stdout}\nstderr so far:\n${stderr}`);
      });
      const last = lastRaw.info;
      expect(stdout).not.toMatch(new RegExp(`^(run|updated run) ${last.run}:`, 'm'));
      appendRunToFolder(live, demo.setup, lastRaw);
      const pattern = new RegExp(`^run ${last.run}: alpha .* cl .*$`, 'm');
      await waitFor(child.stdout, pattern, 30_000, `the line of run ${last.run} after its file landed`).catch((e: Error) => {
        throw new Error(`${e.message}\nstdout so far:\n${stdout}\nstderr so far:\n${stderr}`);
      });
    } finally {
      child.kill('SIGTERM');
      const code = await Promise.race([exited, new Promise<'hung'>((r) => setTimeout(() => r('hung'), 10_000))]);
      if (code === 'hung') {
        child.kill('SIGKILL');
        throw new Error('rakeline follow did not stop within 10 s of SIGTERM');
      }
      expect(code).toBe(0);
    }
    // the run landed in the store and was reduced
    const rows = JSON.parse((await runCli(['--db', db, 'runs', '--format', 'json'])).stdout) as { run: number; kind: string; result: unknown }[];
    const last = lastRaw.info;
    const row = rows.find((r) => r.run === last.run)!;
    expect(row).toBeDefined();
    expect(row.kind).toBe('data');
    expect(row.result).not.toBeNull();
  });

  it('index line first, then half the log (paused at a line boundary), then the rest: the run is replaced and ends as an undisturbed ingest has it', async () => {
    const raws = [...demo.runs()];
    const k = raws.findLastIndex((r) => r.info.kind === 'data');
    const final = join(dir, 'final');
    writeSessionFolder(final, demo.setup, demo.index.slice(0, k + 1), raws.slice(0, k + 1));
    const folder = join(dir, 'idx-first');
    writeSessionFolder(folder, demo.setup, demo.index.slice(0, k), raws.slice(0, k));
    const db = join(dir, 'idx-first.sqlite');
    const child = startCli(['--db', db, 'follow', '--settle', '150', folder]);
    let stdout = '';
    let stderr = '';
    child.stdout.setEncoding('utf8').on('data', (d: string) => (stdout += d));
    child.stderr.setEncoding('utf8').on('data', (d: string) => (stderr += d));
    const exited = new Promise<number | null>((res) => child.on('close', (code) => res(code)));
    const last = lastRaw.info;
    const say = (e: Error) => new Error(`${e.message}\nstdout so far:\n${stdout}\nstderr so far:\n${stderr}`);
    try {
      await waitFor(child.stderr, /watching /, 30_000, 'the "watching" line').catch((e: Error) => { throw say(e); });
      const { readFileSync, writeFileSync, appendFileSync } = await import('node:fs');
      writeFileSync(join(folder, 'runs.csv'), readFileSync(join(final, 'runs.csv')));
      await new Promise((r) => setTimeout(r, 500)); // pacing only
      expect(stdout).not.toMatch(new RegExp(`^run ${last.run}:`, 'm')); // no log yet: nothing taken, no error
      expect(stderr).not.toMatch(/error|waiting for valid input/);
      const text = readFileSync(join(final, runFileName(last.run)), 'utf8');
      const lines = text.split('\n');
      const head = lines.slice(0, 1 + Math.floor((lines.length - 1) / 2)).join('\n') + '\n';
      writeFileSync(join(folder, runFileName(last.run)), head);
      await waitFor(child.stdout, new RegExp(`^run ${last.run}: alpha .* cl .*$`, 'm'), 30_000, 'the half run').catch((e: Error) => { throw say(e); });
      appendFileSync(join(folder, runFileName(last.run)), text.slice(head.length));
      await waitFor(child.stderr, new RegExp(`run ${last.run}: its log grew after it was imported; samples replaced`), 30_000, 'the replacement').catch((e: Error) => { throw say(e); });
      const twice = () => (stdout.match(new RegExp(`^run ${last.run}: alpha .* cl .*$`, 'gm')) ?? []).length >= 2;
      for (let i = 0; i < 1500 && !twice(); i++) await new Promise((r) => setTimeout(r, 20)); // bounded wait
      if (!twice()) throw say(new Error(`no second line of run ${last.run} (re-reduced) within 30 s`));
    } finally {
      child.kill('SIGTERM');
      const code = await Promise.race([exited, new Promise<'hung'>((r) => setTimeout(() => r('hung'), 10_000))]);
      if (code === 'hung') child.kill('SIGKILL');
      expect(code).toBe(0);
    }
    const ref = join(dir, 'idx-first-ref.sqlite');
    expect((await runCli(['--db', ref, 'ingest', final])).code).toBe(0);
    const view = async (file: string) => (JSON.parse((await runCli(['--db', file, 'runs', '--format', 'json'])).stdout) as Record<string, unknown>[])
      // when and under which id it was stored differ by nature; every figure and flag must not
      .map((r) => ({ run: r.run, kind: r.kind, result: r.result && Object.fromEntries(Object.entries(r.result as object).filter(([k]) => !/At$|Id$/.test(k))) }));
    expect(await view(db)).toEqual(await view(ref));
  }, 90_000);

  it('follow on a missing folder is an input error', async () => {
    const r = await runCli(['--db', join(dir, 'x.sqlite'), 'follow', join(dir, 'nowhere')]);
    expect(r.code).toBe(1);
  });
});
