// Helpers of the robustness tests (issue 12): what a database holds, times left out, so that a
// database repaired by running a command again can be compared with one from an undisturbed run;
// the files of a folder with their hashes; small mounts (tmpfs, read-only bind) where the test
// process may mount (root with CAP_SYS_ADMIN), else null; a child killed with SIGKILL once it
// prints a marker (the crash tests).
import { execFileSync, spawn } from 'node:child_process';
import { createHash } from 'node:crypto';
import { mkdirSync, readdirSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { Store } from '../../main/store';
import { dbContents } from './store-fixtures';

const TIME_KEY = /^(at|.*_at)$/;

/** Every table's rows with the time stamps left out (ids, hashes, BLOB hashes and results kept). */
export function dbHolds(file: string): Record<string, unknown[]> {
  const store = Store.open(file, { readOnly: true });
  try {
    const all = dbContents(store);
    for (const rows of Object.values(all)) {
      for (const r of rows as Record<string, unknown>[]) for (const k of Object.keys(r)) if (TIME_KEY.test(k)) delete r[k];
    }
    delete all.schema_migrations;
    return all;
  } finally {
    store.close();
  }
}

/** Relative path → SHA-256 of every file under `dir`. */
export function folderFiles(dir: string): Record<string, string> {
  const out: Record<string, string> = {};
  const walk = (sub: string) => {
    for (const n of readdirSync(join(dir, sub)).sort()) {
      const rel = sub ? `${sub}/${n}` : n;
      const st = statSync(join(dir, rel));
      if (st.isDirectory()) walk(rel);
      else out[rel] = createHash('sha256').update(readFileSync(join(dir, rel))).digest('hex');
    }
  };
  walk('');
  return out;
}

/** Mount a tmpfs of `bytes` at `dir`; false when this process may not mount. */
export function mountTmpfs(dir: string, bytes: number): boolean {
  mkdirSync(dir, { recursive: true });
  try {
    execFileSync('mount', ['-t', 'tmpfs', '-o', `size=${bytes}`, 'tmpfs', dir], { stdio: 'ignore' });
    return true;
  } catch {
    return false;
  }
}

/** Bind `from` read-only at `at`; false when this process may not mount. */
export function mountReadOnly(from: string, at: string): boolean {
  mkdirSync(at, { recursive: true });
  try {
    execFileSync('mount', ['--bind', from, at], { stdio: 'ignore' });
  } catch {
    return false;
  }
  try {
    execFileSync('mount', ['-o', 'remount,ro,bind', at], { stdio: 'ignore' });
    return true;
  } catch {
    unmount(at);
    return false;
  }
}

export function unmount(dir: string): void {
  try {
    execFileSync('umount', [dir], { stdio: 'ignore' });
  } catch {
    /* not mounted */
  }
}

export interface KilledChild {
  /** Everything the child wrote to standard output and error before it died. */
  out: string;
  err: string;
  /** How it ended (SIGKILL when the marker came). */
  code: number | null;
  signal: NodeJS.Signals | null;
}

/**
 * Run a TypeScript script in a child Node (through tsx) and kill it with SIGKILL the moment its
 * standard output contains `marker`. Rejects when the child ends before printing the marker (the
 * message names the marker and carries what the child wrote).
 */
export async function killAtMarker(script: string, args: string[], marker: string, cwd: string): Promise<KilledChild> {
  const child = spawn(process.execPath, ['--import', 'tsx', script, ...args], { cwd, stdio: ['ignore', 'pipe', 'pipe'] });
  let out = '';
  let err = '';
  child.stderr.on('data', (d) => (err += d));
  const exited = new Promise<{ code: number | null; signal: NodeJS.Signals | null }>((res) => child.on('exit', (code, signal) => res({ code, signal })));
  await new Promise<void>((res, rej) => {
    child.stdout.on('data', (d) => {
      out += d;
      if (out.includes(marker)) {
        child.kill('SIGKILL');
        res();
      }
    });
    child.on('exit', () => rej(new Error(`the child ended before it printed "${marker}":\n${out}\n${err}`)));
  });
  const { code, signal } = await exited;
  return { out, err, code, signal };
}
