// What the day sheet prints, gathered from the store: one place for the desktop app, browser
// mode and the command line, so the three print the same sheet.
import type { Store } from './store';
import { sessionSummary } from './reduceService';
import { listRunsMarked } from './stale';
import { daySheetHtml, type DaySheetArgs, type SessionFinding, type TapNote } from './daysheet';
import { flagLabel } from '../app/flags';
import type { SessionSummary } from '../app/types';

/** Tap overrides with the reasons given, oldest first, from the audit trail. */
export function tapNotes(store: Store, sessionId: number): TapNote[] {
  const num = (x: unknown) => (typeof x === 'number' && Number.isFinite(x) ? x : null);
  return store.auditTrail(sessionId)
    .filter((a) => a.action === 'tap.bad' || a.action === 'tap.good' || a.action === 'tap.confirm' || a.action === 'tap.keep' || a.action === 'tap.release')
    .map((a): TapNote => {
      const d = (a.detail ?? {}) as { tapId?: unknown; bad?: unknown; comment?: unknown; run?: unknown; suggestion?: { reason?: unknown; residual?: unknown; u?: unknown } | null };
      const note: TapNote = {
        tapId: String(d.tapId ?? ''), bad: a.action === 'tap.bad' || a.action === 'tap.confirm', comment: typeof d.comment === 'string' ? d.comment : '',
        actor: a.actor, at: a.at,
      };
      if (a.action === 'tap.confirm' || a.action === 'tap.keep' || a.action === 'tap.release') {
        note.settled = {
          decision: a.action.slice(4) as 'confirm' | 'keep' | 'release',
          run: Number(d.run ?? a.run),
          reason: typeof d.suggestion?.reason === 'string' ? d.suggestion.reason : null,
          residual: num(d.suggestion?.residual),
          u: num(d.suggestion?.u),
        };
      }
      return note;
    })
    .filter((n) => n.tapId !== '');
}

export interface SheetOptions {
  paper: 'A4' | 'Letter';
  cpRuns?: number[];
  appVersion?: string;
  timeZone?: string;
  generatedAt?: string;
}

/** The session-level findings (app/sessionFaults.ts) in the sheet's words: a note each, not a hold. */
function sheetFindings(summary: SessionSummary): SessionFinding[] {
  const title = (f: SessionSummary['findings'] extends (infer T)[] | undefined ? T : never) => (
    f.code === 'dead-channel' ? `Dead channel ${f.channel ?? f.tap}`
      : f.code === 'saturated-channel' ? `Saturated channel ${f.channel ?? f.tap}`
        : `${flagLabel(f.code)}, tap ${f.tap}`);
  return (summary.findings ?? []).map((f) => ({ severity: 'warn', title: title(f), detail: f.text }));
}

/** The arguments of the day sheet of one stored session. */
export function daySheetArgs(store: Store, sessionId: number, o: SheetOptions): DaySheetArgs {
  const summary = sessionSummary(store, sessionId);
  return {
    session: store.getSession(sessionId),
    setup: store.getSetup(sessionId),
    runs: listRunsMarked(store, sessionId),
    summary,
    findings: sheetFindings(summary),
    paper: o.paper,
    generatedAt: o.generatedAt ?? new Date().toISOString(),
    results: store.latestResults(sessionId),
    settings: store.getSettings(sessionId),
    tapNotes: tapNotes(store, sessionId),
    ...(o.cpRuns ? { cpRuns: o.cpRuns } : {}),
    ...(o.appVersion ? { appVersion: o.appVersion } : {}),
    ...(o.timeZone ? { timeZone: o.timeZone } : {}),
  };
}

/** The day sheet of one stored session as HTML. */
export function storedDaySheet(store: Store, sessionId: number, o: SheetOptions): string {
  return daySheetHtml(daySheetArgs(store, sessionId, o));
}
