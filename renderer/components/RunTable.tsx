// The run table of the Day log: sortable by any column (header buttons, aria-sort), keyboard
// navigable (↑/↓, Page Up/Down, Home/End move the selection; Enter opens the run). Flagged runs
// carry a text badge and a row stripe; the stripe colour only repeats the badge.
import { useEffect, useMemo, useRef, useState, type KeyboardEvent, type ReactNode } from 'react';
import type { RunRowLike } from '../../main/contract';
import type { Flag } from '../../app/types';
import { splitFlags } from '../../app/sessionFaults';
import { FlagBadges } from './FlagBadge';
import { worstSeverity } from '../palette';
import { clock, fix, reMillions } from '../format';

type Value = number | string | null;

/** Per run, the flags a session finding explains (app/sessionFaults.ts notesByRun). */
export type NotedFlags = ReadonlyMap<number, ReadonlySet<string>>;

export interface Column {
  key: string;
  head: ReactNode;
  /** Full name for screen readers and the header tooltip. */
  title: string;
  value(r: RunRowLike, noted?: NotedFlags): Value;
  cell(r: RunRowLike, noted?: NotedFlags): ReactNode;
  numeric?: boolean;
}

const res = (r: RunRowLike) => r.result;
/** A run's flags that need a decision, and its notes (flags a session finding explains). */
export function runFlags(r: RunRowLike, noted?: NotedFlags): { decision: Flag[]; notes: Flag[] } {
  return splitFlags(r.result?.flags ?? [], noted?.get(r.run));
}

export const RUN_COLUMNS: Column[] = [
  { key: 'run', head: 'Run', title: 'Run number', value: (r) => r.run, cell: (r) => r.run, numeric: true },
  { key: 'kind', head: 'Kind', title: 'Data run or wind-off zero', value: (r) => r.kind, cell: (r) => (r.kind === 'data' ? 'data' : 'wind-off') },
  { key: 'time', head: 'Time', title: 'Start time (local)', value: (r) => r.time, cell: (r) => clock(r.time).slice(0, 5) },
  { key: 'alpha', head: <>α [°]</>, title: 'Geometric angle of attack, degrees', value: (r) => r.alphaDeg, cell: (r) => fix(r.alphaDeg, 2), numeric: true },
  {
    key: 'flags', head: 'Flags', title: 'Checks that failed (ℹ: a note, explained by a session finding, not a decision on this run)',
    value: (r, noted) => {
      if (!r.result) return null;
      const { decision, notes } = runFlags(r, noted);
      return (worstSeverity(decision) === 'reject' ? 2 : decision.length ? 1 : 0) * 1000 + decision.length * 10 + notes.length;
    },
    cell: (r, noted) => {
      if (r.kind === 'zero') return <span className="badge-none">–</span>;
      if (!r.result) return <span className="badge-none">not reduced</span>;
      const { decision, notes } = runFlags(r, noted);
      return <FlagBadges flags={decision} notes={notes} stale={r.stale} />;
    },
  },
  { key: 'alphaCorr', head: <>α<sub>c</sub> [°]</>, title: 'Corrected angle of attack, degrees', value: (r) => res(r)?.alphaCorrDeg ?? null, cell: (r) => fix(res(r)?.alphaCorrDeg, 2), numeric: true },
  { key: 'q', head: 'q [Pa]', title: 'Corrected dynamic pressure, Pa', value: (r) => res(r)?.q ?? null, cell: (r) => fix(res(r)?.q, 1), numeric: true },
  { key: 'Re', head: <>Re [×10<sup>6</sup>]</>, title: 'Reynolds number based on chord, millions', value: (r) => res(r)?.Re ?? null, cell: (r) => reMillions(res(r)?.Re), numeric: true },
  { key: 'cl', head: <>c<sub>l</sub> p</>, title: 'Lift coefficient from surface pressures (corrected)', value: (r) => res(r)?.cl ?? null, cell: (r) => fix(res(r)?.cl, 4), numeric: true },
  { key: 'clMom', head: <>c<sub>l</sub> mom</>, title: 'Lift coefficient from wall momentum', value: (r) => res(r)?.clMom ?? null, cell: (r) => fix(res(r)?.clMom, 4), numeric: true },
  { key: 'cd', head: <>c<sub>d</sub> wake</>, title: 'Drag coefficient from the wake rake (Jones)', value: (r) => res(r)?.cd ?? null, cell: (r) => fix(res(r)?.cd, 5), numeric: true },
  { key: 'cdp', head: <>c<sub>d</sub> p</>, title: 'Pressure drag coefficient from surface pressures', value: (r) => res(r)?.cdp ?? null, cell: (r) => fix(res(r)?.cdp, 5), numeric: true },
  { key: 'cm', head: <>c<sub>m c/4</sub></>, title: 'Pitching-moment coefficient about the quarter chord', value: (r) => res(r)?.cmc4 ?? null, cell: (r) => fix(res(r)?.cmc4, 4), numeric: true },
  { key: 'gp', head: <>Γ corr. [m²/s]</>, title: 'Bound circulation from surface pressures (Kutta–Joukowski Γ = ½·V·c·cl with V and cl wall-corrected), m²/s; the Run inspector shows every method, uncorrected and corrected', value: (r) => res(r)?.gammaPressure ?? null, cell: (r) => fix(res(r)?.gammaPressure, 3), numeric: true },
  {
    key: 'review', head: 'Review', title: 'Reviewer verdict',
    value: (r) => r.review?.verdict ?? null,
    cell: (r) => (r.review ? (
      <span className={`review-mark review-${r.review.verdict}`} title={r.review.comment || undefined}>
        {r.review.verdict === 'accepted' ? '✔ accepted' : '✖ rejected'}
      </span>
    ) : null),
  },
];

export type SortState = { key: string; dir: 'asc' | 'desc' };

/** Sort rows by a column; missing values always last. Ties keep run order. */
export function sortRuns(rows: readonly RunRowLike[], sort: SortState, columns: Column[] = RUN_COLUMNS, noted?: NotedFlags): RunRowLike[] {
  const col = columns.find((c) => c.key === sort.key) ?? columns[0];
  const sign = sort.dir === 'asc' ? 1 : -1;
  return [...rows].sort((a, b) => {
    const va = col.value(a, noted);
    const vb = col.value(b, noted);
    const na = va === null || (typeof va === 'number' && !Number.isFinite(va));
    const nb = vb === null || (typeof vb === 'number' && !Number.isFinite(vb));
    if (na || nb) return na && nb ? a.run - b.run : na ? 1 : -1;
    const c = typeof va === 'number' && typeof vb === 'number' ? va - vb : String(va).localeCompare(String(vb));
    return c !== 0 ? sign * c : a.run - b.run;
  });
}

export interface RunTableProps {
  runs: readonly RunRowLike[];
  selected: number | null;
  onSelect(run: number): void;
  onOpen(run: number): void;
  /** Table caption (visible). */
  caption?: string;
  /** The flags session findings explain, by run: shown as notes, no row stripe of their own. */
  noted?: NotedFlags;
}

export function RunTable({ runs, selected, onSelect, onOpen, caption = 'Runs', noted }: RunTableProps) {
  const [sort, setSort] = useState<SortState>({ key: 'run', dir: 'asc' });
  const rows = useMemo(() => sortRuns(runs, sort, RUN_COLUMNS, noted), [runs, sort, noted]);
  const tableRef = useRef<HTMLTableElement>(null);

  useEffect(() => {
    if (selected === null) return;
    const el = tableRef.current?.querySelector<HTMLElement>(`[data-run="${selected}"]`);
    el?.scrollIntoView?.({ block: 'nearest' });
  }, [selected, rows]);

  const onKey = (e: KeyboardEvent<HTMLTableElement>) => {
    if (rows.length === 0) return;
    const i = rows.findIndex((r) => r.run === selected);
    const go = (j: number) => {
      const k = Math.max(0, Math.min(rows.length - 1, j));
      onSelect(rows[k].run);
      e.preventDefault();
    };
    switch (e.key) {
      case 'ArrowDown': go(i < 0 ? 0 : i + 1); break;
      case 'ArrowUp': go(i < 0 ? 0 : i - 1); break;
      case 'PageDown': go(i < 0 ? 0 : i + 15); break;
      case 'PageUp': go(i < 0 ? 0 : i - 15); break;
      case 'Home': go(0); break;
      case 'End': go(rows.length - 1); break;
      case 'Enter':
        if (i >= 0) {
          e.preventDefault();
          onOpen(rows[i].run);
        }
        break;
      default:
    }
  };

  const toggle = (key: string) =>
    setSort((s) => (s.key === key ? { key, dir: s.dir === 'asc' ? 'desc' : 'asc' } : { key, dir: 'asc' }));

  const activeId = selected !== null && rows.some((r) => r.run === selected) ? `runrow-${selected}` : undefined;
  return (
    <div className="table-scroll">
      <table
        ref={tableRef}
        className="runs"
        role="grid"
        aria-label={caption}
        aria-rowcount={rows.length + 1}
        aria-activedescendant={activeId}
        tabIndex={0}
        onKeyDown={onKey}
      >
        <thead>
          <tr>
            {RUN_COLUMNS.map((c) => (
              <th
                key={c.key}
                scope="col"
                className={c.numeric ? 'num' : undefined}
                aria-sort={sort.key === c.key ? (sort.dir === 'asc' ? 'ascending' : 'descending') : 'none'}
              >
                <button type="button" className="sort" title={`${c.title} – sort`} onClick={() => toggle(c.key)}>
                  {c.head}
                  <span className="sort-mark" aria-hidden="true">
                    {sort.key === c.key ? (sort.dir === 'asc' ? ' ▴' : ' ▾') : ''}
                  </span>
                </button>
              </th>
            ))}
          </tr>
        </thead>
        <tbody>
          {rows.map((r) => {
            const sev = r.result ? worstSeverity(runFlags(r, noted).decision) : null;
            const cls = [
              r.kind === 'zero' ? 'row-zero' : '',
              sev ? `row-${sev}` : '',
              r.run === selected ? 'row-selected' : '',
              r.review?.verdict === 'rejected' ? 'row-reviewed-out' : '',
            ].filter(Boolean).join(' ');
            return (
              <tr
                key={r.run}
                id={`runrow-${r.run}`}
                data-run={r.run}
                className={cls}
                aria-selected={r.run === selected}
                onClick={() => onSelect(r.run)}
                onDoubleClick={() => onOpen(r.run)}
              >
                {RUN_COLUMNS.map((c) => (
                  <td key={c.key} className={c.numeric ? 'num' : undefined}>{c.cell(r, noted)}</td>
                ))}
              </tr>
            );
          })}
        </tbody>
      </table>
      {rows.length === 0 ? <p className="empty">No runs in this session yet.</p> : null}
    </div>
  );
}
