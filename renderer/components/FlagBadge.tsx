// Flag badges: a glyph + words on a tinted chip; the colour only repeats what the text says.
// Words, glyphs and severity words come from the one vocabulary table (app/flags.ts).
import type { Flag } from '../../app/types';
import { SEVERITY, flagWords } from '../../app/flags';
import { staleLine, type StaleMark } from '../../app/stale';

export function FlagBadge({ flag, long = false }: { flag: Flag; long?: boolean }) {
  const w = flagWords(flag.code, flag.severity);
  return (
    <span className={`badge badge-${flag.severity}`} title={`${w.word} (${SEVERITY[w.severity].meaning.toLowerCase()}): ${flag.reason}`} data-flag={flag.code}>
      <span className="badge-glyph" aria-hidden="true">{w.glyph}</span>
      <span className="badge-text">{long ? w.label : w.short}</span>
      {long ? null : <span className="sr-only"> ({w.word})</span>}
    </span>
  );
}

/** A flag a session finding explains (SessionSummary.noted): a note on the run, not a decision —
 *  muted, with the note glyph instead of the severity's, and not counted as flagged. */
export function NoteBadge({ flag, long = false }: { flag: Flag; long?: boolean }) {
  const w = flagWords(flag.code, flag.severity);
  return (
    <span className="badge badge-note" title={`Note, explained by a session finding (not a decision on this run): ${flag.reason}`} data-note={flag.code}>
      <span className="badge-glyph" aria-hidden="true">ℹ</span>
      <span className="badge-text">{long ? w.label : w.short}</span>
      <span className="sr-only"> (note: session finding)</span>
    </span>
  );
}

export function FlagBadges({ flags, notes, stale }: { flags: readonly Flag[] | null | undefined; notes?: readonly Flag[]; stale?: StaleMark | null }) {
  if ((!flags || flags.length === 0) && !notes?.length && !stale) return <span className="badge-none">none</span>;
  return (
    <span className="badges">
      {stale ? <StaleBadge mark={stale} /> : null}
      {(flags ?? []).map((f, i) => <FlagBadge key={`${f.code}-${i}`} flag={f} />)}
      {(notes ?? []).map((f, i) => <NoteBadge key={`note-${f.code}-${i}`} flag={f} />)}
    </span>
  );
}

/** A result computed with other settings, bad taps or zeros than the session's now (app/stale.ts). */
export function StaleBadge({ mark }: { mark: StaleMark }) {
  return (
    <span className="badge badge-stale" title={staleLine(mark)} data-stale="true">
      <span className="badge-glyph" aria-hidden="true">◷</span>
      <span className="badge-text">stale</span>
    </span>
  );
}

/** The reasons a result is stale, in words, with what re-reducing does. */
export function StaleReasons({ mark }: { mark: StaleMark | null | undefined }) {
  if (!mark) return null;
  return (
    <div className="stale-reasons" role="note">
      <StaleBadge mark={mark} /> Reduced with other inputs than the session's now: {mark.reasons.join('; ')}. Re-reduce to bring it up to date.
    </div>
  );
}

/** Flags with their reasons in words (run inspector, overview side panel); `notes`: the flags a
 *  session finding explains, listed after them as notes. */
export function FlagReasons({ flags, notes }: { flags: readonly Flag[] | null | undefined; notes?: readonly Flag[] }) {
  const noteItems = (notes ?? []).map((f, i) => (
    <li key={`note-${f.code}-${i}`} className="flag-reason flag-note">
      <NoteBadge flag={f} long />
      <span className="flag-sev">note (session finding, not a decision on this run):</span>{' '}
      <span className="flag-text">{f.reason}</span>
    </li>
  ));
  if (!flags || flags.length === 0) {
    const ok = <p className="ok-line"><span aria-hidden="true">✓</span> {noteItems.length ? 'No flag of its own: nothing to decide on this run.' : 'No flags: every check passed.'}</p>;
    return noteItems.length ? <>{ok}<ul className="flag-reasons">{noteItems}</ul></> : ok;
  }
  return (
    <ul className="flag-reasons">
      {flags.map((f, i) => (
        <li key={`${f.code}-${i}`} className={`flag-reason flag-${f.severity}`}>
          <FlagBadge flag={f} long />
          <span className="flag-sev">{SEVERITY[f.severity].word}:</span>{' '}
          <span className="flag-text">{f.reason}</span>
        </li>
      ))}
      {noteItems}
    </ul>
  );
}
