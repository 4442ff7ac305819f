// Instrument errors as the channels are wired (REDUCTION.md §9), for the Monte Carlo draws and the
// budget of one run. Standard uncertainties (k = 1) throughout (JCGM 100:2008 §3.3.5).
// - A channel in no transducer group keeps the model of earlier versions: its own %FS ⊕ offset
//   (app/uncertainty.ts instrumentStd) and the standard error of its mean, one independent error
//   per channel in every run.
// - Channels in a group (setup `transducerGroups`: one transducer or one scanner module):
//   * gain: one relative error common to the group, g ~ N(0, u_g²), reading × (1 + g) — correlated
//     between the group's channels, so it does not average away over a row of taps;
//   * zero: one offset common to the group. A wind-off zero on each side of the run removes it;
//     what is left is the zero's change between the bracketing zeros, which the linear
//     interpolation in time of app/samples.ts does not follow exactly: taken as a rectangular
//     distribution of full width |Δz| (the measured drift of that channel), u = |Δz|/√12
//     (JCGM 100 §4.3.7, rectangular; the width is our choice, common practice, no source). With a
//     zero on one side only the drift is not measured, and with none the offset stays: the group's
//     zero figure is then counted in full, common to the group;
//   * each channel's own error at a reading (non-linearity, hysteresis): linearityPercentFS of the
//     full scale, independent between channels, not removed by the zero;
//   * the standard error of the run's mean, independent per channel.
// - Reference pressures (Δp_ref → q, p∞) are drawn once per draw and enter every Cp through
//   Cp = (p − p∞)/q, so their errors are common to every Cp by construction.
// Pure module.

import type { Setup, ZeroedRun } from './types';
import { instrumentStd } from './uncertainty';
import { toPascal } from './units';

/** The instrument model of one run's drawn channels (`names`, in draw order). */
export interface InstrumentModel {
  /** Independent standard uncertainty of each channel, Pa (deg for angles). */
  sd: Float64Array;
  /** Index of each channel's group in `groups`, or −1. */
  group: Int32Array;
  /** Per channel: 1 when its group's zero still counts (no wind-off zero on both sides). */
  zeroCounts: Uint8Array;
  groups: { id: string; gain: number; zeroPa: number }[];
  /** Per channel, the parts of `sd` for the budget (Pa): own instrument or linearity, standard
   *  error of the mean, drift residual. */
  parts: { instrument: Float64Array; noise: Float64Array; drift: Float64Array };
}

/** The model for the drawn channels of a run. `scale`: Pa per channel unit. */
export function instrumentModel(
  setup: Setup, run: ZeroedRun, names: readonly string[], scale: ReadonlyMap<string, number>,
): InstrumentModel {
  const byName = new Map(setup.channels.map((c) => [c.name, c]));
  const groups = (setup.transducerGroups ?? []).map((g) => ({
    id: g.id,
    gain: g.gainPercent / 100,
    zeroPa: toPascal(g.zero, g.unit),
    linPa: (g.linearityPercentFS / 100) * toPascal(g.fullScale, g.unit),
  }));
  const groupOf = new Map<string, number>();
  (setup.transducerGroups ?? []).forEach((g, i) => g.channels.forEach((c) => groupOf.set(c, i)));
  const twoSided = run.zeroRuns.length >= 2;
  const n = names.length;
  const sd = new Float64Array(n);
  const group = new Int32Array(n).fill(-1);
  const zeroCounts = new Uint8Array(n);
  const instrument = new Float64Array(n);
  const noise = new Float64Array(n);
  const drift = new Float64Array(n);
  names.forEach((name, k) => {
    const ch = byName.get(name);
    const x = run.values[name];
    const se = run.stats[name]?.stdErr ?? 0;
    noise[k] = se;
    const g = groupOf.get(name);
    if (g === undefined || !ch) {
      instrument[k] = ch ? instrumentStd(ch.uncertainty, x, scale.get(name) ?? 1) : 0;
    } else {
      group[k] = g;
      instrument[k] = groups[g].linPa;
      const zeroed = run.zeroRaw !== undefined && name in run.zeroRaw;
      if (zeroed && twoSided) drift[k] = Math.abs(run.drift[name] ?? 0) / Math.sqrt(12);
      else zeroCounts[k] = 1;
    }
    sd[k] = Math.sqrt(instrument[k] ** 2 + se * se + drift[k] ** 2);
  });
  return {
    sd,
    group,
    zeroCounts,
    groups: groups.map(({ id, gain, zeroPa }) => ({ id, gain, zeroPa })),
    parts: { instrument, noise, drift },
  };
}

/**
 * Adds the correlated group errors of one draw to `vals` (already drawn with the independent
 * parts): reading·g + (zero where it still counts). `gain` and `zero` hold one deviate per group
 * (already scaled to its standard uncertainty); `mean` the nominal readings.
 */
export function addGroupErrors(
  m: InstrumentModel, mean: Float64Array, vals: Float64Array, gain: Float64Array, zero: Float64Array,
): void {
  const { group, zeroCounts } = m;
  for (let k = 0; k < vals.length; k++) {
    const g = group[k];
    if (g < 0) continue;
    vals[k] += mean[k] * gain[g] + (zeroCounts[k] ? zero[g] : 0);
  }
}

/** Total standard uncertainty of one channel's reading k (Pa): its independent part and its
 *  group's gain and (where it counts) zero, in quadrature. */
export function channelSd(m: InstrumentModel, k: number, reading: number): number {
  const g = m.group[k];
  if (g < 0) return m.sd[k];
  const G = m.groups[g];
  return Math.hypot(m.sd[k], G.gain * reading, m.zeroCounts[k] ? G.zeroPa : 0);
}
