// Measurement of the contour rules (issue 9 part 5): worst |Δcl| and |Δcm c/4| against the exact
// Joukowski flow (test/helpers/joukowski.ts; Milne-Thomson, Theoretical Hydrodynamics ch. 7, memory)
// over α −8…12° and −8…16°, rows of 16/24/48/96 taps (cosine in arc length, 3 % gap at the trailing
// edge: arcTaps), on several thicknesses and cambers. Prints a table; asserts nothing (the asserted
// targets are in test/contour-rule.test.ts). Run: npx tsx scripts/contour-sweep.ts
import { readFileSync } from 'node:fs';
import { contourIntegrals, orderContour } from '../app/surface';
import { arcTaps, joukowski } from '../test/helpers/joukowski';

type Variant = { name: string; rule: 'linear' | 'spline' };
const VARIANTS: Variant[] = [
  { name: 'linear', rule: 'linear' },
  { name: 'spline', rule: 'spline' },
];
/** Joukowski m, n: t/c ≈ 9, 12, 15 % (m 0.075, 0.1, 0.125), camber ≈ n/2 (0, 2, 4 %). */
const SECTIONS = [[0.075, 0], [0.1, 0], [0.1, 0.04], [0.125, 0.08], [0.075, 0.08], [0.125, 0]];
const COUNTS = [16, 24, 48, 96];
const ALPHA_HI = Number(process.env.ALPHA_HI ?? 12);

console.log(`load ${readFileSync('/proc/loadavg', 'utf8').trim()}; α −8…${ALPHA_HI}°`);
const worst = new Map<string, { cl: number; cm: number }>();
for (const [m, n] of SECTIONS) {
  for (let a = -8; a <= ALPHA_HI; a++) {
    const J = joukowski(m, n, a);
    for (const N of COUNTS) {
      const o = orderContour(arcTaps(J, N));
      let nU = 0;
      while (o[nU].surface === 'upper') nU++;
      const x = o.map((p) => p.x);
      const y = o.map((p) => p.y);
      const cp = o.map((p) => p.cp);
      for (const v of VARIANTS) {
        const r = contourIntegrals(x, y, cp, o.length, nU, a, v.rule);
        for (const key of [`${v.name}|${N}|all`, `${v.name}|${N}|${m},${n}`]) {
          const w = worst.get(key) ?? { cl: 0, cm: 0 };
          w.cl = Math.max(w.cl, Math.abs(r.cl - J.cl));
          w.cm = Math.max(w.cm, Math.abs(r.cmc4 - J.cmc4));
          worst.set(key, w);
        }
      }
    }
  }
}
const f = (w?: { cl: number; cm: number }) => (w ? `${w.cl.toFixed(4)} / ${w.cm.toFixed(4)}` : '-');
console.log(`| rule (worst |Δcl| / |Δcm|, all sections) | ${COUNTS.join(' | ')} |`);
for (const v of VARIANTS) console.log(`| ${v.name} | ${COUNTS.map((N) => f(worst.get(`${v.name}|${N}|all`))).join(' | ')} |`);
for (const [m, n] of SECTIONS) {
  console.log(`\nsection m ${m}, n ${n}`);
  for (const v of VARIANTS) console.log(`| ${v.name} | ${COUNTS.map((N) => f(worst.get(`${v.name}|${N}|${m},${n}`))).join(' | ')} |`);
}
