// A tiny session folder for the CLI and export tests, written by the demo generator (invented
// Harrowgate scenario) through the agreed log writer: few runs, few channels, few samples.
import { spawn, type ChildProcessWithoutNullStreams } from 'node:child_process';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { demoSession, type DemoOptions } from '../../resources/demo/scenario';
import { writeSessionFolder } from '../../main/logwriter';

export const TINY_RUNS = 8;
export const TINY: DemoOptions = { runs: TINY_RUNS, taps: 16, rakeProbes: 8, wallTaps: 6, samples: 40, seed: 7 };

/** Writes the tiny session into `folder` and returns the folder. */
export function makeTinySession(folder: string, opts: DemoOptions = TINY): string {
  const demo = demoSession(opts);
  writeSessionFolder(folder, demo.setup, demo.index, demo.runs());
  return folder;
}

export const REPO = fileURLToPath(new URL('../..', import.meta.url)).replace(/[\\/]$/, '');
export const BIN = join(REPO, 'bin', 'rakeline.mjs');

export interface CliResult { code: number | null; stdout: string; stderr: string }

/** Runs `node bin/rakeline.mjs …args` to completion (bounded in time). */
export function runCli(args: string[], opts: { cwd?: string; timeoutMs?: number; env?: Record<string, string> } = {}): Promise<CliResult> {
  return new Promise((res, rej) => {
    const child = spawn(process.execPath, [BIN, ...args], {
      cwd: opts.cwd ?? REPO,
      env: { ...process.env, NO_COLOR: '1', ...opts.env },
    });
    let stdout = '';
    let stderr = '';
    child.stdout.setEncoding('utf8').on('data', (d: string) => (stdout += d));
    child.stderr.setEncoding('utf8').on('data', (d: string) => (stderr += d));
    const timer = setTimeout(() => {
      child.kill('SIGKILL');
      rej(new Error(`rakeline ${args.join(' ')} did not finish within ${opts.timeoutMs ?? 60000} ms\nstdout: ${stdout}\nstderr: ${stderr}`));
    }, opts.timeoutMs ?? 60000);
    child.on('error', rej);
    child.on('close', (code) => {
      clearTimeout(timer);
      res({ code, stdout, stderr });
    });
  });
}

/** Starts a long-running `rakeline …args` (for `follow`). */
export function startCli(args: string[], cwd = REPO): ChildProcessWithoutNullStreams {
  return spawn(process.execPath, [BIN, ...args], { cwd, env: { ...process.env, NO_COLOR: '1' } });
}

/** Resolves with the accumulated text once `pattern` appears on the stream; rejects after `ms`. */
export function waitFor(stream: NodeJS.ReadableStream, pattern: RegExp, ms: number, what: string): Promise<string> {
  return new Promise((res, rej) => {
    let text = '';
    const onData = (d: Buffer | string) => {
      text += d.toString();
      if (pattern.test(text)) {
        cleanup();
        res(text);
      }
    };
    const timer = setTimeout(() => {
      cleanup();
      rej(new Error(`timed out after ${ms} ms waiting for ${what} (${pattern}); got:\n${text}`));
    }, ms);
    const cleanup = () => {
      clearTimeout(timer);
      stream.off('data', onData);
    };
    stream.on('data', onData);
  });
}
