// Issue 9, tests: whole runs on exact Joukowski sections (REDUCTION.md §11 case 2; conformal
// mapping with the Kutta condition, Milne-Thomson ch. 7 and Katz & Plotkin §6.5, memory;
// test/helpers/joukowski.ts), α −8…16° in 1° steps, at 12, 16, 24, 48 and 96 taps with realistic
// spacing (cosine in arc length from a leading-edge tap, a 3 % gap at the trailing edge:
// arcTaps), reduced as the app reduces them (reduceRun, default settings, the model's geometry the
// section's own coordinates so that the shape-aided tap test and the shape contour rule run):
// no tap is dropped and no run is held. The row-level rates are in test/tap-judgement.test.ts;
// this checks that nothing else in the reduction (the references check, the integration estimate,
// the flags) turns an exact row into a decision.
import { describe, expect, it } from 'vitest';
import { reduceRun, resolveSettings } from '../app/reduce';
import { exactCase } from './helpers/exactRun';
import { arcTaps, joukowski } from './helpers/joukowski';

/** 12 % thick, 2 % camber; 9.6 % symmetric. */
const SECTIONS: [string, number, number][] = [
  ['12 % thick, 2 % camber', 0.1, 0.04],
  ['9.6 % symmetric', 0.075, 0],
  ['15 % thick, 4 % camber', 0.125, 0.08],
  ['9 % thick, 4 % camber', 0.075, 0.08],
];

describe('exact Joukowski runs, α −8…16°, reduced whole: no tap dropped, no hold', () => {
  for (const [name, m, n] of SECTIONS) {
    it.each([12, 16, 24, 48, 96])(`${name}, %i taps`, (count) => {
      const problems: string[] = [];
      for (let a = -8; a <= 16; a++) {
        const J = joukowski(m, n, a);
        const c = exactCase({
          taps: count,
          sections: [{ J, alphaDeg: a }],
          uniform: () => 0.5,
          normal: () => 0, // exact readings: every channel at its true value
          alphaAndKq: false,
          points: (S) => arcTaps(S, count),
        });
        const r = reduceRun(c.setup, c.run, resolveSettings(c.setup, { mcDraws: 50 }));
        const dropped = (r.dropped ?? []).map((d) => d.id);
        const holds = r.flags.filter((f) => f.severity === 'reject').map((f) => `${f.code}: ${f.reason}`);
        if (dropped.length || holds.length) problems.push(`α ${a}°: dropped [${dropped.join(', ')}] holds [${holds.join(' | ')}]`);
        // The pressure cl is the exact one to the integration's accuracy (shape rule, docs/TAP-JUDGEMENT.md §3;
        // measured worst over α −8…16°: 0.0015–0.0025 at 16 taps, 0.0019–0.0064 at 12).
        expect(Math.abs(r.surface.cl - c.exact.cl), `α ${a}° cl`).toBeLessThan(count >= 16 ? 0.004 : 0.01);
      }
      expect(problems).toEqual([]);
    });
  }
});
