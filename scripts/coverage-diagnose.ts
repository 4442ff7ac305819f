// Issue 10: per-cell diagnosis of the coverage of the exact value (the cells of
// test/uncertainty-coverage.test.ts: the same seeds, sections and replicates). For each cell and
// each of cl, cm c/4, cd it prints
//   bias      the reduction's own error, noise-free reduced value − exact (the same case with every
//             normal deviate 0: true α and k_q, no channel noise), mean and rms over the replicates;
//   uInt uTe  the estimated integration and trailing-edge u (budget lines), median;
//   uNoise    the rest of the combined u (channels, α, k_q), median;
//   |b+s|/u   rms of (bias + the estimated shift) / combined u: what is left of the bias after the
//             estimated integration error (the intervals' placement), against the width;
//   value out the fraction of runs whose interval does not hold the reduced value itself; held: the
//             coverage of the interval stretched to hold the reduced value;
//   cover     coverage of the exact value by the 95 % interval; cover0: of the noise-free reduced
//             value (the propagation alone, with no reduction error to hold);
//   ruleDiff  (spline − linear) of the noisy row against the true bias: the estimator named by the
//             issue ("the difference between two integration rules"), correlation and rms ratio.
// Asserts nothing. Run: npx tsx scripts/coverage-diagnose.ts [taps…]   (ALPHA=1 only α + k_q cells,
// ALPHA=0 only channel-only cells; REPS=n replicates, default 200; SECTIONS=n sections in the pool,
// default 12; SECTION=cambered for one cambered section; SEED=n added to the cells' seeds;
// RULE=spline for the spline rule).
import { readFileSync } from 'node:fs';
import { reduceRun, resolveSettings } from '../app/reduce';
import { contourIntegrals, orderContour } from '../app/surface';
import { createRng, gaussian } from '../app/uncertainty';
import { exactCase, exactSections } from '../test/helpers/exactRun';
import { karmanTrefftz } from '../test/helpers/joukowski';

type K = 'cl' | 'cmc4' | 'cd';
const KEYS: K[] = ['cl', 'cmc4', 'cd'];
const REPS = Number(process.env.REPS ?? 200);
const RULE = (process.env.RULE ?? 'linear') as 'linear' | 'spline';
const tapsList = process.argv.slice(2).map(Number).filter((n) => n > 0);
const TAPS = tapsList.length ? tapsList : [24, 48, 96];
const ALPHAS = process.env.ALPHA === undefined ? [false, true] : [process.env.ALPHA === '1'];

const median = (v: number[]) => {
  const s = [...v].sort((a, b) => a - b);
  return s.length % 2 ? s[(s.length - 1) >> 1] : 0.5 * (s[s.length / 2 - 1] + s[s.length / 2]);
};
const rms = (v: number[]) => Math.sqrt(v.reduce((a, b) => a + b * b, 0) / v.length);
const mean = (v: number[]) => v.reduce((a, b) => a + b, 0) / v.length;
const corr = (a: number[], b: number[]) => {
  const ma = mean(a);
  const mb = mean(b);
  let s = 0;
  let sa = 0;
  let sb = 0;
  for (let i = 0; i < a.length; i++) {
    s += (a[i] - ma) * (b[i] - mb);
    sa += (a[i] - ma) ** 2;
    sb += (b[i] - mb) ** 2;
  }
  return s / Math.sqrt(sa * sb);
};

/** The rule difference spline − linear of a result's main row. */
function ruleDiff(r: ReturnType<typeof reduceRun>, alphaDeg: number): Record<'cl' | 'cmc4', number> {
  const o = orderContour(r.taps.filter((t) => !t.bad));
  let nU = 0;
  while (nU < o.length && o[nU].surface === 'upper') nU++;
  const x = o.map((t) => t.x);
  const y = o.map((t) => t.y);
  const cp = o.map((t) => t.cp);
  const a = contourIntegrals(x, y, cp, o.length, nU, alphaDeg, 'linear');
  const b = contourIntegrals(x, y, cp, o.length, nU, alphaDeg, 'spline');
  return { cl: b.cl - a.cl, cmc4: b.cmc4 - a.cmc4 };
}

console.log(`load ${readFileSync('/proc/loadavg', 'utf8').trim()}; ${REPS} replicates a cell; rule ${RULE}; pool ${process.env.SECTION === 'cambered' ? 'one cambered section' : 'random sections'} of ${process.env.SECTIONS ?? 12}`);
for (const alphaAndKq of ALPHAS) {
  for (const taps of TAPS) {
    const rng = createRng(taps * 7 + (alphaAndKq ? 1 : 0) + Number(process.env.SEED ?? 0));
    const count = Number(process.env.SECTIONS ?? 12);
    // SECTION=cambered: one cambered Kármán–Trefftz section (m 0.1, n 0.08: about 12 % thick and
    // 4 % camber; trailing-edge angle 4°) at `count` angles −2…8°, instead of the random pool.
    const sections = process.env.SECTION === 'cambered'
      ? Array.from({ length: count }, (_, i) => {
          const alphaDeg = -2 + (10 * i) / Math.max(1, count - 1);
          return { J: karmanTrefftz(0.1, 0.08, alphaDeg, 4), alphaDeg };
        })
      : exactSections(count, rng);
    const rec: Record<K, { bias: number[]; uInt: number[]; uTe: number[]; uNoise: number[]; u: number[]; hit: number; hit0: number; rd: number[]; rd0: number[]; biasN: number[]; shift: number[]; out: number; held: number }> =
      Object.fromEntries(KEYS.map((k) => [k, { bias: [], uInt: [], uTe: [], uNoise: [], u: [], hit: 0, hit0: 0, rd: [], rd0: [], biasN: [], shift: [], out: 0, held: 0 }])) as never;
    for (let i = 0; i < REPS; i++) {
      // Record the stream so the same case can be rebuilt noise-free.
      const us: number[] = [];
      const uniform = () => {
        const v = rng();
        us.push(v);
        return v;
      };
      const c = exactCase({ taps, sections, uniform, normal: () => gaussian(rng), alphaAndKq });
      let j = 0;
      const c0 = exactCase({ taps, sections, uniform: () => us[j++], normal: () => 0, alphaAndKq });
      const settings = resolveSettings(c.setup, { mcDraws: 200, mcSeed: 1000 + i, tapCheckK: 100, contourRule: RULE });
      const r = reduceRun(c.setup, c.run, settings);
      const r0 = reduceRun(c0.setup, c0.run, settings);
      const d = ruleDiff(r, c.run.info.alphaDeg);
      const d0 = ruleDiff(r0, c0.run.info.alphaDeg);
      const b = r.budget!;
      for (const k of KEYS) {
        const iv = r.uncertainty[k]!;
        const R = rec[k];
        R.bias.push(r0.corrected[k] - c.exact[k]);
        R.biasN.push(r.corrected[k] - r0.corrected[k]);
        const line = (s: string) => b.lines.find((l) => l.source === s)?.contribution[k] ?? 0;
        const uInt = k === 'cd' ? Math.hypot(line('rake probe spacing'), line('rake truncation')) : line('integration (tap resolution)');
        const uTe = k === 'cd' ? 0 : line('trailing-edge closure');
        R.uInt.push(uInt);
        R.uTe.push(uTe);
        R.u.push(iv.u);
        R.shift.push(b.shift?.[k] ?? 0);
        if (!(iv.lo <= r.corrected[k] && r.corrected[k] <= iv.hi)) R.out++;
        R.uNoise.push(Math.sqrt(Math.max(0, b.combined[k]! ** 2 - uInt ** 2 - uTe ** 2)));
        if (iv.lo <= c.exact[k] && c.exact[k] <= iv.hi) R.hit++;
        if (Math.min(iv.lo, r.corrected[k]) <= c.exact[k] && c.exact[k] <= Math.max(iv.hi, r.corrected[k])) R.held++;
        if (iv.lo <= r0.corrected[k] && r0.corrected[k] <= iv.hi) R.hit0++;
        if (k !== 'cd') {
          R.rd.push(d[k]);
          R.rd0.push(d0[k]);
        }
      }
    }
    console.log(`\n${taps} taps, ${alphaAndKq ? 'channel + α + k_q' : 'channel only'}`);
    console.log('     bias mean   bias rms    uInt med    uTe med     uNoise med  rms|b+s|/u  cover  cover0  value out  held  ruleDiff: corr  rms(rd)/rms(b)  rms(b−rd)   (same, noise-free row)');
    for (const k of KEYS) {
      const R = rec[k];
      const ratio = rms(R.bias.map((v, i) => (v + R.shift[i]) / R.u[i]));
      const f = (v: number) => v.toExponential(2).padStart(10);
      let extra = '';
      if (k !== 'cd') {
        // The rule difference estimates −bias (linear is low where spline is right): compare.
        const neg = R.bias.map((v) => -v);
        extra = `  ${corr(R.rd, neg).toFixed(3).padStart(6)}  ${(rms(R.rd) / rms(R.bias)).toFixed(3).padStart(8)}  ${f(rms(R.rd.map((v, i) => v + R.bias[i])))}   noise-free row: ${corr(R.rd0, neg).toFixed(3)} ${(rms(R.rd0) / rms(R.bias)).toFixed(3)}`;
      }
      console.log(`${k.padEnd(5)}${f(mean(R.bias))} ${f(rms(R.bias))} ${f(median(R.uInt))} ${f(median(R.uTe))} ${f(median(R.uNoise))}  ${ratio.toFixed(2).padStart(7)}  ${(R.hit / REPS).toFixed(3)}  ${(R.hit0 / REPS).toFixed(3)}  ${(R.out / REPS).toFixed(3).padStart(8)}  ${(R.held / REPS).toFixed(3)}${extra}`);
    }
  }
}
