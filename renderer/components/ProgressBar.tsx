// Task progress: role="progressbar" with aria-valuenow in percent (absent while indeterminate).
export interface ProgressBarProps {
  /** Fraction done 0…1, or null when the total is not known yet. */
  fraction: number | null;
  label: string;
  /** Accessible name of the bar. */
  name?: string;
}

export function ProgressBar({ fraction, label, name = 'Progress' }: ProgressBarProps) {
  const pct = fraction === null || !Number.isFinite(fraction) ? null : Math.round(Math.min(1, Math.max(0, fraction)) * 100);
  return (
    <div className="progress">
      <div
        className={`progress-track${pct === null ? ' progress-indeterminate' : ''}`}
        role="progressbar"
        aria-label={name}
        aria-valuemin={0}
        aria-valuemax={100}
        aria-valuenow={pct ?? undefined}
        aria-valuetext={pct === null ? label : `${pct} % – ${label}`}
      >
        <div className="progress-fill" style={{ width: pct === null ? '30%' : `${pct}%` }} />
      </div>
      <div className="progress-label">
        {pct === null ? null : <span className="num">{pct} %</span>} <span>{label}</span>
      </div>
    </div>
  );
}
