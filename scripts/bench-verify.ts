// `npm run bench -- --verify` — what main/verify.ts costs: the demo day (52 runs) imported and
// reduced, then every data run's stored result handed back to verifyResults (main re-runs the
// reduction from the stored data and the stated settings, with its Monte Carlo, and compares),
// one run a call as the run inspector sends them, and the whole session in one call. Printed with
// the load average; never asserted.
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { demoSession } from '../resources/demo/scenario';
import { writeSessionFolder } from '../main/logwriter';
import { Store } from '../main/store';
import { importSessionFolder } from '../main/import';
import { reduceStoredSession } from '../main/reduceService';
import { verifyResults } from '../main/verify';
import { readFileSync } from 'node:fs';

export async function benchVerify(): Promise<number> {
  const dir = mkdtempSync(join(tmpdir(), 'rakeline-bench-verify-'));
  try {
    const day = demoSession();
    const folder = join(dir, 'day');
    writeSessionFolder(folder, day.setup, day.index, day.runs());
    const store = Store.open(join(dir, 'v.sqlite'));
    const rep = await importSessionFolder(store, folder, { workers: 0 });
    reduceStoredSession(store, rep.sessionId);
    // Over the bridge a result is plain data (JSON with NaN kept): verify what the page would send.
    const results = store.latestResults(rep.sessionId).map((r) => structuredClone(r));
    const draws = results[0]?.settings.mcDraws ?? 0;
    verifyResults(store, rep.sessionId, [results[0]]); // warm-up (JIT), not counted
    const per: number[] = [];
    for (const r of results) {
      const t0 = performance.now();
      verifyResults(store, rep.sessionId, [r]);
      per.push(performance.now() - t0);
    }
    per.sort((a, b) => a - b);
    const t0 = performance.now();
    verifyResults(store, rep.sessionId, results);
    const all = performance.now() - t0;
    const nominal = results.map((r) => ({ ...r, settings: { ...r.settings, mcDraws: 0 } }));
    // The nominal pass alone (no Monte Carlo) for comparison: such results do not match the stored
    // ones (their intervals differ), so time the reduction through a refused call.
    const t1 = performance.now();
    let refused = 0;
    for (const r of nominal) {
      try { verifyResults(store, rep.sessionId, [r]); } catch { refused++; }
    }
    const nom = (performance.now() - t1) / nominal.length;
    const load = readFileSync('/proc/loadavg', 'utf8').trim();
    const med = per[Math.floor(per.length / 2)];
    console.log(`verify (main re-reduces what the page sends), demo day, ${results.length} data runs, ${draws} Monte Carlo draws a run:`);
    console.log(`  one run a call: median ${med.toFixed(1)} ms, max ${per[per.length - 1].toFixed(1)} ms  [load ${load}]`);
    console.log(`  whole session in one call: ${all.toFixed(0)} ms (${(all / results.length).toFixed(1)} ms a run)  [load ${load}]`);
    console.log(`  nominal pass only (mcDraws 0, ${refused} refused as expected): ${nom.toFixed(2)} ms a run  [load ${load}]`);
    store.close();
    return 0;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

if (process.argv[1] && /bench-verify\.ts$/.test(process.argv[1])) process.exit(await benchVerify());
