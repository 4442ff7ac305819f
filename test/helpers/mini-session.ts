// A small hand-built session of the invented Harrowgate scenario for import/store tests:
// HAL-S4412 in the No. 2 low-speed tunnel, a few taps, a small rake and wall taps.
// The pressures are invented and only roughly shaped like a real run (they are not physics checks).
import type { Channel, ChannelUnit, RawRun, RunInfo, Setup } from '../../app/types';

export interface MiniOptions {
  taps?: number; // per surface
  rakeProbes?: number;
  wallTaps?: number;
  /** Unit of the tap channels (default 'Pa'). */
  tapUnit?: ChannelUnit;
}

const unc = (fullScale: number) => ({ fullScale, percentFullScale: 0.05, offset: 0 });

export function miniSetup(o: MiniOptions = {}): Setup {
  const nt = o.taps ?? 4;
  const np = o.rakeProbes ?? 5;
  const nw = o.wallTaps ?? 3;
  const taps: Setup['taps'] = [];
  for (let i = 0; i < nt; i++) {
    const x = 1 - (i + 0.5) / nt;
    taps.push({ id: `U${String(i + 1).padStart(2, '0')}`, x, y: 0.06 * Math.sqrt(x) * (1 - x) * 4, surface: 'upper', row: 'C', z: 0 });
  }
  for (let i = 0; i < nt; i++) {
    const x = (i + 0.5) / nt;
    taps.push({ id: `L${String(i + 1).padStart(2, '0')}`, x, y: -0.02 * Math.sqrt(x) * (1 - x) * 4, surface: 'lower', row: 'C', z: 0 });
  }
  const probes: Setup['rake']['probes'] = [];
  for (let i = 0; i < np; i++) probes.push({ id: `T${String(i + 1).padStart(2, '0')}`, y: (i - (np - 1) / 2) * 0.01, kind: 'total' });
  probes.push({ id: 'S01', y: 0.05, kind: 'static' });
  const floor = Array.from({ length: nw }, (_, i) => ({ id: `F${String(i + 1).padStart(2, '0')}`, x: (i - (nw - 1) / 2) * 0.2 }));
  const ceiling = Array.from({ length: nw }, (_, i) => ({ id: `K${String(i + 1).padStart(2, '0')}`, x: (i - (nw - 1) / 2) * 0.2 }));
  const tapUnit = o.tapUnit ?? 'Pa';
  const channels: Channel[] = [
    { name: 'DP_REF', target: { kind: 'reference', ref: 'dpRef' }, unit: 'kPa', uncertainty: unc(2.5) },
    { name: 'P_STAT', target: { kind: 'reference', ref: 'pStatic' }, unit: 'mbar', uncertainty: unc(25) },
    ...taps.map((t): Channel => ({ name: `S_C${t.id}`, target: { kind: 'tap', id: t.id }, unit: tapUnit, uncertainty: unc(2500) })),
    ...probes.map((p): Channel => ({ name: `R_${p.id}`, target: { kind: 'rake', id: p.id }, unit: 'Pa', uncertainty: unc(2500) })),
    ...floor.map((t): Channel => ({ name: `W_${t.id}`, target: { kind: 'floor', id: t.id }, unit: 'inH2O', uncertainty: unc(10) })),
    ...ceiling.map((t): Channel => ({ name: `W_${t.id}`, target: { kind: 'ceiling', id: t.id }, unit: 'inH2O', uncertainty: unc(10) })),
  ];
  return {
    formatVersion: 1,
    session: { title: 'HAL-S4412 mini test', date: '2026-11-18', operators: ['M. Okonkwo', 'T. Lindqvist'] },
    facility: { name: 'Harrowgate Aeronautical Laboratory No. 2 low-speed tunnel', sectionHeight: 0.9, sectionWidth: 0.6, qCalibration: 1.02, qCalibrationUncertainty: 0.002 },
    model: { name: 'HAL-S4412', chord: 0.25, span: 0.6, geometry: { kind: 'naca4', code: '4412' }, alphaUncertaintyDeg: 0.05, tapPositionUncertainty: 0.001 },
    taps,
    rake: { x: 0.5, probes },
    floor,
    ceiling,
    channels,
    settings: { spikeK: 5 },
  };
}

/** Deterministic pseudo-random numbers (mulberry32). */
export function rng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

export interface MiniRunsOptions {
  /** Data runs (zeros are added before, between every 3 data runs, and after). */
  dataRuns?: number;
  samples?: number;
  seed?: number;
  firstRun?: number;
  startTime?: string;
}

/** Index + raw runs (values in Pa) for a setup. */
export function miniRuns(setup: Setup, o: MiniRunsOptions = {}): { index: RunInfo[]; runs: RawRun[] } {
  const nData = o.dataRuns ?? 3;
  const n = o.samples ?? 20;
  const rand = rng(o.seed ?? 1);
  const t0 = Date.parse(o.startTime ?? '2026-11-18T09:00:00Z');
  const index: RunInfo[] = [];
  const runs: RawRun[] = [];
  let run = o.firstRun ?? 1;
  const kinds: ('zero' | 'data')[] = ['zero'];
  for (let i = 0; i < nData; i++) {
    kinds.push('data');
    if ((i + 1) % 3 === 0 || i === nData - 1) kinds.push('zero');
  }
  let alpha = -2;
  kinds.forEach((kind, k) => {
    const info: RunInfo = {
      run,
      kind,
      time: new Date(t0 + k * 120_000).toISOString().replace('.000Z', 'Z'),
      alphaDeg: kind === 'zero' ? 0 : alpha,
      baro: 101200 + k * 3,
      temperatureC: 18.5 + 0.05 * k,
      humidity: 52,
      file: `runs/run-${String(run).padStart(4, '0')}.csv`,
    };
    if (kind === 'data') alpha += 2;
    const q = kind === 'zero' ? 0 : 1000;
    const channels: Record<string, Float64Array> = {};
    for (const c of setup.channels) {
      const a = new Float64Array(n);
      let base = 0;
      const t = c.target;
      if (t.kind === 'reference') base = t.ref === 'dpRef' ? q / setup.facility.qCalibration : 0;
      else if (t.kind === 'tap') base = -0.5 * q;
      else if (t.kind === 'rake') base = 0.95 * q;
      else base = -0.05 * q * (t.kind === 'floor' ? 1 : -1);
      for (let i = 0; i < n; i++) a[i] = base + (rand() - 0.5) * 4 + 3;
      channels[c.name] = a;
    }
    index.push(info);
    runs.push({ info, channels });
    run++;
  });
  return { index, runs };
}
