// Faults that persist across a session (issue 9, common practice, no source): a tap dropped as
// leaking (its wind-off zero off the others') or as an outlier on most data runs is one fault of the
// day, reported once, not a decision per run. A finding needs the same tap in the same flag code on
// at least FINDING_SHARE of the data runs, and on 3 runs or more. The runs' own flags stay as they
// are (the record of each run is unchanged); the summary lists the findings and the runs still
// needing a decision: those with a flag that no finding explains (a flag is explained when it is a
// leaking-tap or bad-tap flag all of whose taps are session findings of that code).
import type { Flag, ResultDigest, SessionFinding } from './types';

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
  const known = new Set(findings.map((f) => `${f.code}\u0000${f.tap}`));
  const explained = (r: Pick<ResultDigest, 'dropped'>, f: Flag) => {
    if (f.code !== 'leaking-tap' && f.code !== 'bad-tap') return false;
    const taps = tapsOf(r, f.code);
    return taps.length > 0 && taps.every((t) => known.has(`${f.code}\u0000${t}`));
  };
  const needsDecision = results.filter((r) => r.flags.some((f) => !explained(r, f))).map((r) => r.run);
  return { findings, needsDecision };
}
