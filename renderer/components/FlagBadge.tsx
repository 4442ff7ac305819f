// Flag badges: a glyph + words on a tinted chip; the colour only repeats what the text says.
import type { Flag } from '../../app/types';
import { FLAG_LABEL, SEVERITY } from '../palette';

export function FlagBadge({ flag, long = false }: { flag: Flag; long?: boolean }) {
  const sev = SEVERITY[flag.severity];
  return (
    <span className={`badge badge-${flag.severity}`} title={`${sev.title}: ${flag.reason}`} data-flag={flag.code}>
      <span className="badge-glyph" aria-hidden="true">{sev.glyph}</span>
      <span className="badge-text">{FLAG_LABEL[flag.code] ?? flag.code}</span>
      {long ? <span className="sr-only"> ({sev.word})</span> : null}
    </span>
  );
}

export function FlagBadges({ flags }: { flags: readonly Flag[] | null | undefined }) {
  if (!flags || flags.length === 0) return <span className="badge-none">none</span>;
  return (
    <span className="badges">
      {flags.map((f, i) => <FlagBadge key={`${f.code}-${i}`} flag={f} />)}
    </span>
  );
}

/** Flags with their reasons in words (run inspector, overview side panel). */
export function FlagReasons({ flags }: { flags: readonly Flag[] | null | undefined }) {
  if (!flags || flags.length === 0) {
    return <p className="ok-line"><span aria-hidden="true">✓</span> No flags: every check passed.</p>;
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
    </ul>
  );
}
