// Tap judgement on published measured pressure distributions (issue 9): a NACA 0012 at M = 0.30,
// Re = 3 × 10⁶, 45 taps (Ladson, Hill & Johnson, NASA TM 100526, 1987, as tabulated for NASA
// Langley's Turbulence Modeling Resource; test/fixtures/ladson-naca0012.ts says what was typed in
// and which two values look like slips of the tabulation). What is asserted is what an engineer
// reading the tables would conclude (common practice, no source): the smooth distributions keep
// every tap; the single tap 0.2 Cp off its neighbours at x/c 0.85 (α = 0°, fixed transition) and
// the two isolated values at α = 15° are the only taps dropped; the stagnation readings above the
// isentropic Cp_stag (1.0561 and 1.0505 against 1.0227 at M 0.30; NACA Report 1135, from memory) are kept and give a reference finding instead.
import { describe, expect, it } from 'vitest';
import { detectBadTaps, karmanTsien } from '../app/surface';
import { cpStagnation, referenceCheck } from '../app/tapCheck';
import { naca4Point } from '../app/panel';
import { DEFAULT_SETTINGS, type TapCp } from '../app/types';
import { LADSON_CASES, type MeasuredCase } from './fixtures/ladson-naca0012';

const geometry = { kind: 'naca4' as const, code: '0012' };

function taps(c: MeasuredCase): TapCp[] {
  return c.taps.map((t) => {
    const p = naca4Point('0012', t.x, t.surface);
    return { id: t.id, x: p.x, y: p.y, surface: t.surface, row: 'C', cp: t.cp, bad: false };
  });
}
const byName = (name: string) => LADSON_CASES.find((c) => c.name === name)!;
/** The reduction's call: the model's geometry, the run's α and M; tap Cp uncertainty the floor
 *  tapCheckMinU (the tables give no uncertainty). */
function drops(c: MeasuredCase, positionU: number, withShape = true, mach = c.M): string[] {
  return detectBadTaps(taps(c), DEFAULT_SETTINGS, undefined, undefined, {
    positionU,
    inviscid: withShape ? { geometry, alphaDeg: c.alphaDeg, mach } : undefined,
  }).map((b) => b.id).sort();
}

/** Tap position uncertainties tried, in chords: 0.08–0.23 mm on the 152 mm chord of the model
 *  (the 0.3-m tunnel's 8-in-wide section and the aspect ratio of 1.33 give a 6-in chord). */
const POSITIONS = [0.0005, 0.001, 0.0015];

describe('Ladson, Hill & Johnson NACA 0012 distributions (M 0.30, 45 taps)', () => {
  it('the fixture is the tabulated data: 45 taps a case, six cases, one leading-edge tap each', () => {
    expect(LADSON_CASES).toHaveLength(6);
    for (const c of LADSON_CASES) {
      expect(c.taps).toHaveLength(45);
      expect(c.taps.filter((t) => t.x === 0)).toHaveLength(1);
    }
  });

  const expected: [string, string[]][] = [
    ['α = 0°, free transition', []],
    ['α = 10°, free transition', []],
    ['α = 15°, free transition', ['L21', 'U21']],
    ['α = 0°, fixed transition', ['L20']],
    ['α = 15°, fixed transition', []],
  ];
  it.each(expected)('%s: the taps dropped are %j, at every position uncertainty tried', (name, ids) => {
    for (const pu of POSITIONS) {
      expect(drops(byName(name), pu), `shape-aided, positionU ${pu}`).toEqual(ids);
      // Without the geometry (or on rows of fewer than 20 taps) the neighbours alone judge.
      expect(drops(byName(name), pu, false), `neighbours only, positionU ${pu}`).toEqual(ids);
    }
  });

  it('α = 10°, fixed transition: only U02 (x/c 0.027, 0.24 off the fitted shape) is ever suggested, and not at 0.0015 c', () => {
    // The tap just behind the suction peak stands 0.24 Cp above the fitted shape where its
    // neighbours agree with it to 0.03 (in the free-transition run of the same angle, 0.09): a
    // real departure, small against the position error a 6-in model's nose allows. Measured:
    // suggested at 0.0005 and 0.001 c, kept at 0.0015 c (docs/TAP-JUDGEMENT.md §1).
    const c = byName('α = 10°, fixed transition');
    for (const pu of POSITIONS) expect(drops(c, pu).every((id) => id === 'U02'), `positionU ${pu}`).toBe(true);
    expect(drops(c, 0.0015)).toEqual([]);
    expect(drops(c, 0.0015, false)).toEqual([]);
  });

  it('the glitch at x/c 0.85 is dropped and the stagnation tap at 1.0561 kept (the issue\'s case)', () => {
    const c = byName('α = 0°, fixed transition');
    const bad = detectBadTaps(taps(c), DEFAULT_SETTINGS, undefined, undefined, { positionU: 0.001, inviscid: { geometry, alphaDeg: 0, mach: c.M } });
    expect(bad.map((b) => b.id)).toEqual(['L20']);
    expect(c.taps.find((t) => t.id === 'L20')!.x).toBeCloseTo(0.8503, 4);
    // Its neighbours read 0.0631 and −0.0126: the residual is about 0.2 (the tabulated 0.232 less
    // the prediction).
    expect(bad[0].verdict!.residual).toBeGreaterThan(0.18);
    expect(bad[0].verdict!.residual).toBeLessThan(0.25);
  });

  it('reference findings: the stagnation readings above Cp_stag at M 0.30, with the q error they imply', () => {
    const cs = cpStagnation(0.3);
    expect(cs).toBeCloseTo(1.0227, 4);
    const find = (name: string) => referenceCheck('C', taps(byName(name)), () => DEFAULT_SETTINGS.tapCheckMinU, 0.3, 1000, DEFAULT_SETTINGS.stagnationK);
    const f0 = find('α = 0°, fixed transition')!;
    expect([f0.id, f0.cp]).toEqual(['LE', 1.0561]);
    expect(f0.qLow).toBeCloseTo(1 - cs / 1.0561, 10); // q about 3.2 % low
    const f10 = find('α = 10°, fixed transition')!;
    expect([f10.id, f10.cp]).toEqual(['L01', 1.0505]);
    for (const name of ['α = 0°, free transition', 'α = 10°, free transition', 'α = 15°, free transition', 'α = 15°, fixed transition']) {
      expect(find(name), name).toBeNull();
    }
  });

  it('the shape at the run\'s Mach number (Kármán–Tsien): at 10°, free transition, the suction-peak tap is kept; with the incompressible shape it was dropped', () => {
    const c = byName('α = 10°, free transition');
    expect(drops(c, 0.0005)).toEqual([]);
    expect(drops(c, 0.0005, true, 0)).toEqual(['U01']);
  });
});

describe('the Kármán–Tsien rule (Tsien 1939; von Kármán 1941; Anderson, Fundamentals of Aerodynamics ch. 11, from memory)', () => {
  it('is Prandtl–Glauert (Cp₀/β) for small Cp₀ and grows faster with suction', () => {
    const M = 0.3;
    const beta = Math.sqrt(1 - M * M);
    expect(karmanTsien(1e-6, M).cp / 1e-6).toBeCloseTo(1 / beta, 5);
    expect(karmanTsien(-3.5, M).cp).toBeLessThan(-3.5 / beta - 0.2);
    expect(karmanTsien(0.9, M).cp).toBeLessThan(0.9 / beta);
    expect(karmanTsien(-1, 0)).toEqual({ cp: -1, slope: 1 });
  });
  it('its slope is the derivative of the rule', () => {
    for (const cp0 of [-4, -1, 0, 0.8]) {
      const h = 1e-6;
      const fd = (karmanTsien(cp0 + h, 0.3).cp - karmanTsien(cp0 - h, 0.3).cp) / (2 * h);
      expect(karmanTsien(cp0, 0.3).slope).toBeCloseTo(fd, 6);
    }
  });
});
