// `npm run bench:budget` — what the GUM budget (app/budget.ts runBudget) adds to the reduction of
// one run, on the demo day (invented scenario, resources/demo/scenario.ts). Prints figures beside
// the load average; no targets, no asserts. Per data run: reduceRun whole (nominal pass, Monte
// Carlo, budget, Cp band), and runBudget alone on the same run's model (median of repeats).
// Issue 10 item 4; the budget's mechanics belong to issue 14 (not changed here).
import { readFileSync } from 'node:fs';
import { demoSession } from '../resources/demo/scenario';
import { averageRuns, prepareRuns, reduceRun, resolveSettings, uncertaintyModel } from '../app/reduce';
import { runBudget } from '../app/budget';
import type { UncertaintyKey } from '../app/types';

const load = () => readFileSync('/proc/loadavg', 'utf8').split(' ').slice(0, 3).join(' ');
const t = () => performance.now();
const median = (v: number[]) => {
  const s = [...v].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : 0.5 * (s[m - 1] + s[m]);
};

const day = demoSession();
const settings = resolveSettings(day.setup);
const zeroed = prepareRuns(day.setup, averageRuns([...day.runs()], settings));
const KEYS: UncertaintyKey[] = ['cl', 'cd', 'cdp', 'cmc4', 'clMom', 'gammaPressure', 'gammaMomentum', 'gammaWall'];
const REPS = 5;
console.log(`Budget cost on the demo day: ${zeroed.length} data runs, ${settings.mcDraws} Monte Carlo draws; load ${load()}`);
for (const z of zeroed.slice(0, 2)) reduceRun(day.setup, z, settings); // warm
const whole: number[] = [];
const budget: number[] = [];
const lines: number[] = [];
for (const z of zeroed) {
  let t0 = t();
  const r = reduceRun(day.setup, z, settings);
  whole.push(t() - t0);
  const m = uncertaintyModel(day.setup, z, settings);
  const nominal = Object.fromEntries(KEYS.map((k) => [k, r.uncertainty[k]?.value ?? NaN])) as Record<UncertaintyKey, number>;
  const each: number[] = [];
  for (let i = 0; i < REPS; i++) {
    t0 = t();
    const b = runBudget(day.setup, m, z.info.alphaDeg, nominal);
    each.push(t() - t0);
    if (i === 0) lines.push(b.lines.length);
  }
  budget.push(median(each));
}
const w = median(whole);
const b = median(budget);
console.log(`reduceRun, whole run (median over runs)      ${w.toFixed(2).padStart(8)} ms`);
console.log(`runBudget alone (median over runs of ${REPS} reps) ${b.toFixed(2).padStart(8)} ms   (${(100 * b / w).toFixed(0)} % of the run; ${median(lines)} budget lines)`);
console.log(`runBudget, whole day                         ${budget.reduce((a, x) => a + x, 0).toFixed(0).padStart(8)} ms   of ${whole.reduce((a, x) => a + x, 0).toFixed(0)} ms reduceRun`);
console.log(`load after: ${load()}`);
