// Hand-made store rows for the day-sheet and export tests (invented Harrowgate scenario values;
// demo data only, no physics is checked with them).
import type { RunRow, SessionRow } from '../../main/store';
import type { Flag, SessionSummary, Setup } from '../../app/types';

export function fixtureSetup(over: Partial<Setup['session']> = {}): Setup {
  return {
    formatVersion: 1,
    session: { title: 'HAL-S4412 polar, Re 0.5 M', date: '2026-11-18', operators: ['M. Okonkwo', 'T. Lindqvist'], ...over },
    facility: { name: 'Harrowgate Aeronautical Laboratory, No. 2 low-speed tunnel', sectionHeight: 0.9, sectionWidth: 0.6, qCalibration: 1.02 },
    model: { name: 'HAL-S4412', chord: 0.25, span: 0.6, geometry: { kind: 'naca4', code: '4412' }, alphaUncertaintyDeg: 0.02, tapPositionUncertainty: 0.001 },
    taps: [
      { id: 'C1', x: 0, y: 0, surface: 'upper', row: 'C', z: 0 },
      { id: 'C2', x: 0.5, y: 0.05, surface: 'upper', row: 'C', z: 0 },
    ],
    rake: { x: 0.5, probes: [{ id: 'R1', y: 0, kind: 'total' }] },
    floor: [{ id: 'F1', x: 0 }],
    ceiling: [{ id: 'K1', x: 0 }],
    channels: [],
  };
}

export function fixtureSession(title = 'HAL-S4412 polar, Re 0.5 M'): SessionRow {
  return {
    id: 1, title, date: '2026-11-18', facility: 'Harrowgate Aeronautical Laboratory, No. 2 low-speed tunnel',
    model: 'HAL-S4412', folder: '/data/hal/2026-11-18', runCount: 4, dataRunCount: 3, flaggedCount: 1,
    importedAt: '2026-11-18T17:02:00Z',
  };
}

export const LIFT_FLAG: Flag = {
  code: 'lift-mismatch', severity: 'reject',
  reason: 'Lift methods disagree: surface pressures give cl = 1.3120, wall momentum gives 1.2050.',
};
export const UNSTEADY_FLAG: Flag = { code: 'unsteady', severity: 'warn', reason: 'std(q)/q = 0.031 above 0.020.' };

function dataRow(run: number, time: string, alphaDeg: number, cl: number, clMom: number, cd: number, cmc4: number, flags: Flag[]): RunRow {
  return {
    sessionId: 1, run, kind: 'data', alphaDeg, time, baro: 100850, temperatureC: 14.2, humidity: 61, file: `run-${run}.csv`,
    result: {
      resultId: 100 + run, reducedAt: '2026-11-18T17:03:00Z', q: 512.3, Re: 512000, V: 29.41, cl, clMom, clWall: clMom + 0.001,
      cd, cdp: cd * 0.4, cmc4, gammaPressure: 0.5 * 29.41 * 0.25 * cl, gammaMomentum: 0.5 * 29.41 * 0.25 * clMom, flags,
      alphaCorrDeg: alphaDeg + 0.21,
    },
    review: null,
  };
}

export function fixtureRuns(): RunRow[] {
  return [
    { sessionId: 1, run: 1, kind: 'zero', alphaDeg: 0, time: '2026-11-18T09:00:00Z', baro: 100850, temperatureC: 14.0, humidity: 61, file: 'run-1.csv', result: null, review: null },
    dataRow(2, '2026-11-18T09:05:00Z', 0, 0.4471, 0.4402, 0.00712, -0.0931, []),
    dataRow(3, '2026-11-18T09:09:00Z', 4, 0.8893, 0.8810, 0.00805, -0.0902, [UNSTEADY_FLAG]),
    { ...dataRow(4, '2026-11-18T09:13:00Z', 12, 1.3120, 1.2050, 0.01633, -0.0744, [LIFT_FLAG]),
      review: { verdict: 'rejected', comment: 'stall cell seen on tufts', actor: 'T. Lindqvist', at: '2026-11-18T17:30:00Z' } },
  ];
}

export function fixtureSummary(runs: RunRow[] = fixtureRuns()): SessionSummary {
  const data = runs.filter((r) => r.result);
  return {
    stats: {
      liftSlopePerDeg: 0.1106, linearRange: [0.21, 4.21], alphaL0Deg: -4.04, clMax: 1.312, alphaClMaxDeg: 12.21,
      cdMin: 0.00712, clAtCdMin: 0.4471, ldMax: 110.5, alphaLdMaxDeg: 4.21, hysteresis: null, repeatSpread: null,
    },
    flagged: data.filter((r) => r.result!.flags.length).map((r) => ({ run: r.run, flags: r.result!.flags })),
    conditions: { qMin: 508.1, qMax: 515.9, ReMin: 505000, ReMax: 518000, alphaMin: 0.21, alphaMax: 12.21, tempMin: 14.0, tempMax: 14.6, baroMin: 100820, baroMax: 100870 },
    polar: data.map((r) => ({
      run: r.run, alphaDeg: r.result!.alphaCorrDeg, cl: r.result!.cl, clMom: r.result!.clMom, cd: r.result!.cd, cdp: r.result!.cdp,
      cmc4: r.result!.cmc4, time: r.time, flagged: r.result!.flags.length > 0,
    })),
    span: [],
  };
}
