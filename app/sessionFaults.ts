// Faults that persist across a session (issue 9, common practice, no source): a tap dropped as
// leaking (its wind-off zero off the others') or as an outlier on most data runs is one fault of the
// day, reported once, not a decision per run. A finding needs the same tap in the same flag code on
// at least FINDING_SHARE of the data runs, and on 3 runs or more. The runs' own flags stay as they
// are (the record of each run is unchanged); the summary lists the findings and the runs still
// needing a decision: those with a flag that no finding explains (a flag is explained when it is a
// leaking-tap or bad-tap flag all of whose taps are session findings of that code).
//
// Dead and saturated channels (channelFindings, also common practice, no source) are read from the
// statistics of every run's samples (mean and standard deviation of each channel, wind-on and
// wind-off), see channelFindings below. They are reported, never acted on: the tap test of each
// run still decides what to drop, and the engineer marks the tap bad.
import type { ChannelStats, Flag, ResultDigest, RunInfo, SessionFinding, SessionSummary, Setup } from './types';
import { PA_PER_UNIT } from './units';

/** Share of the data runs a tap fault must be seen on to be a session finding. */
export const FINDING_SHARE = 0.8;

function ranges(runs: readonly number[]): string {
  const s = [...runs].sort((a, b) => a - b);
  const out: string[] = [];
  for (let i = 0; i < s.length; ) {
    let j = i;
    while (j + 1 < s.length && s[j + 1] === s[j] + 1) j++;
    out.push(j > i ? `${s[i]}–${s[j]}` : `${s[i]}`);
    i = j + 1;
  }
  return out.join(', ');
}

const CODE_OF: Record<string, 'leaking-tap' | 'bad-tap'> = { leak: 'leaking-tap', outlier: 'bad-tap' };

/** The taps behind a run's leaking-tap and bad-tap flags: its automatic drops by flag code. */
function tapsOf(r: Pick<ResultDigest, 'dropped'>, code: string): string[] {
  return (r.dropped ?? []).filter((d) => d.by === 'auto' && CODE_OF[d.reason] === code).map((d) => d.id);
}

export function sessionFindings(results: readonly Pick<ResultDigest, 'run' | 'flags' | 'dropped'>[]): {
  findings: SessionFinding[];
  needsDecision: number[];
} {
  const n = results.length;
  const seen = new Map<string, { code: 'leaking-tap' | 'bad-tap'; tap: string; runs: number[] }>();
  for (const r of results) {
    for (const f of r.flags) {
      if (f.code !== 'leaking-tap' && f.code !== 'bad-tap') continue;
      for (const tap of tapsOf(r, f.code)) {
        const key = `${f.code}\u0000${tap}`;
        const e = seen.get(key) ?? { code: f.code, tap, runs: [] };
        e.runs.push(r.run);
        seen.set(key, e);
      }
    }
  }
  const findings: SessionFinding[] = [];
  for (const e of seen.values()) {
    if (e.runs.length < 3 || e.runs.length < FINDING_SHARE * n) continue;
    const all = e.runs.length === n;
    const where = `${all ? 'every data run' : `${e.runs.length} of ${n} data runs`}, runs ${ranges(e.runs)}`;
    findings.push({
      code: e.code,
      tap: e.tap,
      runs: e.runs,
      of: n,
      text: e.code === 'leaking-tap'
        ? `${e.tap} leaks in the wind-off zeros of ${where}; dropped from ${all ? 'all those runs' : 'those runs'}.`
        : `${e.tap} is an outlier against its neighbours on ${where}; dropped from those runs (confirm it as a bad tap, or look at it).`,
    });
  }
  findings.sort((a, b) => (a.tap < b.tap ? -1 : a.tap > b.tap ? 1 : 0));
  const needsDecision = results.filter((r) => r.flags.some((f) => !explainedByFindings(r, f, findings))).map((r) => r.run);
  return { findings, needsDecision };
}

/** Whether a run's flag is explained by the session findings: a leaking-tap or bad-tap flag all of
 *  whose taps are findings of that code, or have a dead or saturated channel, the finding that
 *  replaces theirs in the session summary (then it is a note on the run, not a decision). */
export function explainedByFindings(r: Pick<ResultDigest, 'dropped'>, f: Flag, findings: readonly Pick<SessionFinding, 'code' | 'tap'>[]): boolean {
  if (f.code !== 'leaking-tap' && f.code !== 'bad-tap') return false;
  const taps = tapsOf(r, f.code);
  const explains = (x: Pick<SessionFinding, 'code' | 'tap'>, t: string) =>
    x.tap === t && (x.code === f.code || x.code === 'dead-channel' || x.code === 'saturated-channel');
  return taps.length > 0 && taps.every((t) => findings.some((x) => explains(x, t)));
}

/** Each run's flags that the findings explain, by their index in the run's flags (runs with none
 *  left out): on the run they are a note, not a decision (SessionSummary.noted). */
export function notedFlags(
  results: readonly Pick<ResultDigest, 'run' | 'flags' | 'dropped'>[], findings: readonly Pick<SessionFinding, 'code' | 'tap'>[],
): { run: number; flags: number[] }[] {
  if (!findings.length) return [];
  const out: { run: number; flags: number[] }[] = [];
  for (const r of results) {
    const flags = r.flags.flatMap((f, i) => (explainedByFindings(r, f, findings) ? [i] : []));
    if (flags.length) out.push({ run: r.run, flags });
  }
  return out;
}

/** A flag's identity for telling notes from decisions across copies of a result: code and reason. */
const flagKey = (f: Pick<Flag, 'code' | 'reason'>) => `${f.code}\u0000${f.reason}`;

/** The summary's notes by run (SessionSummary.noted, resolved against its `flagged` list): for each
 *  run, the identities of the flags a session finding explains. */
export function notesByRun(summary: Pick<SessionSummary, 'noted' | 'flagged'> | null | undefined): Map<number, Set<string>> {
  const out = new Map<number, Set<string>>();
  if (!summary?.noted?.length) return out;
  const flags = new Map(summary.flagged.map((x) => [x.run, x.flags]));
  for (const { run, flags: idx } of summary.noted) {
    const fs = flags.get(run);
    if (fs) out.set(run, new Set(idx.filter((i) => i < fs.length).map((i) => flagKey(fs[i]))));
  }
  return out;
}

/** A run's flags split into those that need a decision and the notes (`noted`: that run's entry of
 *  notesByRun). */
export function splitFlags<F extends Pick<Flag, 'code' | 'reason'>>(flags: readonly F[], noted: ReadonlySet<string> | undefined): { decision: F[]; notes: F[] } {
  if (!noted?.size) return { decision: [...flags], notes: [] };
  return { decision: flags.filter((f) => !noted.has(flagKey(f))), notes: flags.filter((f) => noted.has(flagKey(f))) };
}

/** What channelFindings reads of a run: its index entry and its channels' sample statistics. */
export interface ChannelRun {
  info: RunInfo;
  stats: Readonly<Record<string, ChannelStats>>;
}

/** A channel reads "without scatter" when its samples' standard deviation is at most this times
 *  max(1 Pa, |mean|): no live pressure transducer in a running tunnel is that quiet; a frozen
 *  output, a disconnected input logged as a constant or a clipped signal is. */
export const FROZEN_REL = 1e-9;
/** A channel "sits at its rail" when |mean| is at least this fraction of its full scale. */
export const RAIL_FRACTION = 0.995;
/** A model tap "does not respond" in a data run when its wind-on mean is within this fraction of q
 *  of its wind-off zero (Cp within ±0.002 of the reference in every run of a sweep does not happen
 *  on a live tap: the pressures on a section change with α). */
export const NO_RESPONSE_Q = 0.002;

function median(xs: readonly number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/**
 * Dead and saturated channels of a session, each one finding (needs FINDING_SHARE of the runs
 * looked at, and 3 runs or more):
 * - saturated: |mean| ≥ RAIL_FRACTION × full scale (Channel.uncertainty.fullScale, in the
 *   channel's unit) in the data runs;
 * - dead, no scatter: standard deviation ≤ FROZEN_REL·max(1, |mean|) in the runs, wind-on and
 *   wind-off alike;
 * - dead, no response (model taps only; references, rake probes and wall taps can rightly read
 *   about their wind-off value): the wind-on mean within NO_RESPONSE_Q·q of the median of the
 *   tap's wind-off zeros in the data runs, q from the reference channel (k_q·Δp_ref, its zero
 *   taken off likewise).
 * A channel gets at most one finding, in that order. Angle channels (unit 'deg') are left out.
 */
export function channelFindings(setup: Setup, runs: readonly ChannelRun[]): SessionFinding[] {
  const data = runs.filter((r) => r.info.kind === 'data');
  const zeros = runs.filter((r) => r.info.kind === 'zero');
  const dpRef = setup.channels.find((c) => c.target.kind === 'reference' && c.target.ref === 'dpRef');
  const zeroOf = (name: string): number | null => {
    const m = zeros.map((z) => z.stats[name]?.mean).filter((x): x is number => Number.isFinite(x));
    return m.length ? median(m) : null;
  };
  const dpZero = dpRef ? zeroOf(dpRef.name) ?? 0 : 0;
  const qOf = (r: ChannelRun): number => {
    const dp = dpRef ? r.stats[dpRef.name]?.mean : undefined;
    return Number.isFinite(dp) ? Math.abs((dp as number) - dpZero) * setup.facility.qCalibration : NaN;
  };
  const enough = (hits: number, of: number) => hits >= 3 && hits >= FINDING_SHARE * of;
  const out: SessionFinding[] = [];
  for (const ch of setup.channels) {
    if (ch.unit === 'deg') continue;
    const t = ch.target;
    const what = t.kind === 'reference' ? ch.name : t.id;
    const named = t.kind === 'tap' ? `Tap ${t.id} (channel ${ch.name})`
      : t.kind === 'reference' ? `Reference channel ${ch.name} (${t.ref === 'dpRef' ? 'Δp_ref' : 'p∞'})`
        : `Channel ${ch.name} (${t.kind} ${t.id})`;
    const seenIn = (list: readonly ChannelRun[]) => list.filter((r) => r.stats[ch.name] && Number.isFinite(r.stats[ch.name].mean));
    const finding = (code: SessionFinding['code'], hitRuns: number[], of: number, kind: string, tail: string): SessionFinding => {
      const all = hitRuns.length === of;
      return {
        code, tap: what, channel: ch.name, runs: hitRuns, of,
        text: `${named} ${tail} in ${all ? `every ${kind}` : `${hitRuns.length} of ${of} ${kind}s`}, runs ${ranges(hitRuns)}`,
      };
    };
    // Saturated: at the rail in the data runs.
    const fs = ch.uncertainty?.fullScale;
    const dSeen = seenIn(data);
    if (fs && fs > 0) {
      const rail = RAIL_FRACTION * fs * PA_PER_UNIT[ch.unit as keyof typeof PA_PER_UNIT];
      const hit = dSeen.filter((r) => Math.abs(r.stats[ch.name].mean) >= rail).map((r) => r.info.run);
      if (enough(hit.length, dSeen.length)) {
        const f = finding('saturated-channel', hit, dSeen.length, 'data run', `sits at its full scale (±${fs} ${ch.unit})`);
        f.text += ': the transducer is over range, its reading is the rail and not the pressure; mark what it measures bad, or change the range.';
        out.push(f);
        continue;
      }
    }
    // Dead: no scatter at all, wind-on and wind-off.
    const aSeen = seenIn(runs);
    const quiet = aSeen.filter((r) => {
      const s = r.stats[ch.name];
      return s.std <= FROZEN_REL * Math.max(1, Math.abs(s.mean));
    }).map((r) => r.info.run);
    if (enough(quiet.length, aSeen.length)) {
      const means = aSeen.filter((r) => quiet.includes(r.info.run)).map((r) => r.stats[ch.name].mean);
      const same = Math.max(...means) - Math.min(...means) <= FROZEN_REL * Math.max(1, ...means.map(Math.abs));
      const f = finding('dead-channel', quiet, aSeen.length, 'run', `reads ${same ? `the same value (${+means[0].toPrecision(6)} Pa) without any scatter` : 'without any scatter'}`);
      f.text += ' (wind-on and wind-off): a frozen or disconnected transducer; its readings carry no information.';
      out.push(f);
      continue;
    }
    // Dead: a model tap that reads with the wind on what it reads in the wind-off zeros.
    if (t.kind === 'tap') {
      const z = zeroOf(ch.name);
      if (z === null) continue;
      const withQ = dSeen.filter((r) => qOf(r) > 0);
      const flat = withQ.filter((r) => Math.abs(r.stats[ch.name].mean - z) <= NO_RESPONSE_Q * qOf(r)).map((r) => r.info.run);
      if (enough(flat.length, withQ.length)) {
        const f = finding('dead-channel', flat, withQ.length, 'data run', `reads with the wind on what it reads in the wind-off zeros (within ${NO_RESPONSE_Q * 100} % of q)`);
        f.text += ': a blocked or disconnected tube, or a dead transducer; its Cp is not the surface pressure.';
        out.push(f);
      }
    }
  }
  return out;
}
