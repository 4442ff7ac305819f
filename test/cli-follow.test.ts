// `rakeline follow <folder>`: watches a session folder and imports + reduces each run file as it
// lands, printing one line per run. Every wait is bounded and fails with a clear message.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { RawRun } from '../app/types';
import { demoSession } from '../resources/demo/scenario';
import { appendRunToFolder, writeSessionFolder } from '../main/logwriter';
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

  it('follow on a missing folder is an input error', async () => {
    const r = await runCli(['--db', join(dir, 'x.sqlite'), 'follow', join(dir, 'nowhere')]);
    expect(r.code).toBe(1);
  });
});
