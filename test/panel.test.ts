import { describe, expect, it } from 'vitest';
import {
  geometryPoints,
  inviscidCp,
  naca4,
  naca4AlphaL0Deg,
  naca4Point,
  panelSolve,
  thinAirfoilCl,
} from '../app/panel';
import { integrateContour } from '../app/surface';
import { joukowski, karmanTrefftz } from './helpers/joukowski';

const DEG = Math.PI / 180;

describe('naca4 geometry', () => {
  it('runs TE → upper → LE → lower → TE with a closed trailing edge', () => {
    const { x, y } = naca4('4412', 80);
    expect(x.length).toBe(81);
    expect([x[0], y[0]]).toEqual([1, 0]);
    expect([x[80], y[80]]).toEqual([1, 0]);
    expect(Math.min(...x)).toBeLessThan(0.001);
    expect(y[20]).toBeGreaterThan(0);
    expect(y[60]).toBeLessThan(0);
  });

  it('has the published thickness and camber', () => {
    // NACA 0012: maximum thickness 12 % of the chord at 30 % chord (Abbott & von Doenhoff, Theory
    // of Wing Sections, §6.4, memory); with the −0.1036 coefficient y_t(0.3) = 0.06002.
    const up = naca4Point('0012', 0.3, 'upper');
    const lo = naca4Point('0012', 0.3, 'lower');
    expect(up.y - lo.y).toBeCloseTo(0.12, 3);
    // NACA 4412: 4 % camber at 40 % chord (same source).
    const u = naca4Point('4412', 0.4, 'upper');
    const l = naca4Point('4412', 0.4, 'lower');
    expect((u.y + l.y) / 2).toBeCloseTo(0.04, 10);
    expect(() => naca4('44a2', 40)).toThrow(/four digits/);
    expect(() => naca4('4012', 40)).toThrow(/camber/);
  });
});

describe('panelSolve (linear-strength vortex, Katz & Plotkin §11.4, memory)', () => {
  it('gives no lift on a symmetric section at zero incidence', () => {
    const { x, y } = naca4('0012', 160);
    expect(Math.abs(panelSolve(x, y, 0).cl)).toBeLessThan(1e-6);
  });

  it('gives a NACA 0012 lift slope within 2 % of 2π(1 + 0.77 t/c)', () => {
    // Inviscid thickness effect on the lift slope, 2π(1 + 0.77 t/c) (memory; e.g. Abbott & von
    // Doenhoff ch. 4 / Katz & Plotkin thickness corrections). Tolerance 2 % for the approximation.
    const { x, y } = naca4('0012', 160);
    const slope = (panelSolve(x, y, 4).cl - panelSolve(x, y, -4).cl) / (8 * DEG);
    expect(Math.abs(slope / (2 * Math.PI * (1 + 0.77 * 0.12)) - 1)).toBeLessThan(0.02);
  });

  it('converges as the panels double', () => {
    const cl = [40, 80, 160].map((n) => {
      const g = naca4('4412', n);
      return panelSolve(g.x, g.y, 5).cl;
    });
    expect(Math.abs(cl[1] - cl[2])).toBeLessThan(Math.abs(cl[0] - cl[1]));
  });

  it('agrees between lift from the circulation and from integrating Cp', () => {
    // Kutta–Joukowski L' = ρVΓ against ∮ −Cp n ds: the same lift if the discrete solution is
    // consistent (Katz & Plotkin ch. 11, memory). Checked both with the panel's own quadrature and
    // with app/surface.ts integrating the midpoint Cp.
    for (const [code, alpha] of [
      ['4412', 4],
      ['0012', 8],
      ['2412', -2],
    ] as const) {
      const g = naca4(code, 160);
      const s = panelSolve(g.x, g.y, alpha);
      expect(Math.abs(s.clPressure - s.cl)).toBeLessThan(0.002 * Math.max(1, Math.abs(s.cl)));
      const r = integrateContour(
        s.xm.map((x, i) => ({ id: String(i), x, y: s.ym[i], surface: s.surface[i], cp: s.cp[i] })),
        alpha,
      );
      expect(Math.abs(r.cl - s.cl)).toBeLessThan(0.005 * Math.max(1, Math.abs(s.cl)));
      expect(Math.abs(r.cmc4 - s.cmc4)).toBeLessThan(0.002);
    }
  });

  it.each([
    ['Joukowski (cusped)', 0],
    ['Kármán–Trefftz, τ = 10°', 10],
  ])('matches the exact %s solution', (_name, tau) => {
    // Exact conformal-mapping solution with the Kutta condition (test/helpers/joukowski.ts;
    // Milne-Thomson ch. 7, Katz & Plotkin §6.5–6.6, memory). Nodes on the exact contour.
    const J = tau === 0 ? joukowski(0.1, 0.05, 5) : karmanTrefftz(0.1, 0.05, 5, tau);
    const errCp = (n: number) => {
      const nd = J.nodes(n);
      const s = panelSolve(nd.x, nd.y, 5);
      let max = 0;
      for (let i = 0; i < n; i++) {
        // Exact Cp at the contour point midway (in θ) between the panel's nodes; the trailing
        // edge's last 5 % is left out (steep there on a cusp, finite-angle TE singular corner).
        if (s.xm[i] > 0.95) continue;
        max = Math.max(max, Math.abs(J.at(J.thetaTE + (2 * Math.PI * (i + 0.5)) / n).cp - s.cp[i]));
      }
      return { s, max };
    };
    const a = errCp(200);
    expect(Math.abs(a.s.cl / J.cl - 1)).toBeLessThan(0.001);
    expect(Math.abs(a.s.cmc4 - J.cmc4)).toBeLessThan(0.001);
    expect(a.max).toBeLessThan(0.02);
    // Second-order convergence of Cp: doubling the panels cuts the error by well over 2.
    expect(errCp(400).max).toBeLessThan(a.max / 3);
  });

  it('names bad input', () => {
    expect(() => panelSolve([1, 0.5, 0], [0, 0.1, 0], 0)).toThrow(/at least 7 points/);
    const g = naca4('0012', 20);
    g.y[3] = Number.NaN;
    expect(() => panelSolve(g.x, g.y, 0)).toThrow(/point 4/);
  });
});

describe('geometryPoints and inviscidCp', () => {
  it('re-panels user coordinates to the same solution as the formula', () => {
    // A 60-panel NACA 4412 table, splined and re-panelled to 160, against the 160-panel formula.
    const table = naca4('4412', 60);
    const pts = geometryPoints({ kind: 'coordinates', x: table.x, y: table.y }, 160);
    expect(pts.x.length).toBe(161);
    const fromTable = panelSolve(pts.x, pts.y, 4);
    const g = naca4('4412', 160);
    const fromFormula = panelSolve(g.x, g.y, 4);
    expect(Math.abs(fromTable.cl - fromFormula.cl)).toBeLessThan(0.002);
    expect(Math.abs(fromTable.cmc4 - fromFormula.cmc4)).toBeLessThan(0.002);
  });

  it('refuses coordinates in the wrong order', () => {
    const t = naca4('0012', 40);
    expect(() =>
      geometryPoints({ kind: 'coordinates', x: [...t.x].reverse(), y: [...t.y].reverse() }),
    ).toThrow(/trailing edge → upper/);
  });

  it('returns midpoint Cp with surfaces, the same from the cache, and fresh arrays', () => {
    const g = { kind: 'naca4' as const, code: '4412' };
    const a = inviscidCp(g, 6, 120);
    const b = inviscidCp(g, 6, 120);
    expect(a).not.toBe(b);
    expect(b).toEqual(a);
    expect(a.length).toBe(120);
    expect(a.filter((p) => p.surface === 'upper').length).toBeGreaterThan(50);
    const direct = panelSolve(naca4('4412', 120).x, naca4('4412', 120).y, 6);
    expect(a.map((p) => p.cp)).toEqual(direct.cp);
    // Inviscid stagnation: Cp never exceeds 1 (Bernoulli).
    expect(Math.max(...a.map((p) => p.cp))).toBeLessThanOrEqual(1);
  });
});

describe('thin-airfoil theory', () => {
  it('gives α_L0 ≈ −4.15° for NACA 4412 and 0 for a symmetric section', () => {
    // Thin-airfoil α_L0 of the NACA 4412 mean line ≈ −4.15° (Anderson §4.8 worked example /
    // Abbott & von Doenhoff §4.3, memory).
    expect(naca4AlphaL0Deg('4412')).toBeCloseTo(-4.15, 1);
    expect(naca4AlphaL0Deg('0012')).toBe(0);
    // α_L0 scales with the camber m for a fixed mean-line shape (thin-airfoil theory is linear).
    expect(naca4AlphaL0Deg('2412')).toBeCloseTo(naca4AlphaL0Deg('4412') / 2, 10);
  });

  it('gives cl = 2π(α − α_L0)', () => {
    expect(thinAirfoilCl(5, -4.15)).toBeCloseTo(2 * Math.PI * 9.15 * DEG, 12);
    expect(thinAirfoilCl(-2, -2)).toBe(0);
  });

  it('is close to the panel method for a thin cambered section', () => {
    // Thin-airfoil theory is the thin limit: for a 6 % thick 4-digit section the panel cl and the
    // thin-airfoil cl agree within ~1 + 0.77 t/c ≈ 5 % plus a margin (memory; common practice).
    const g = naca4('4406', 160);
    const cl = panelSolve(g.x, g.y, 4).cl;
    const thin = thinAirfoilCl(4, naca4AlphaL0Deg('4406'));
    expect(Math.abs(cl / thin - 1)).toBeLessThan(0.08);
  });
});
