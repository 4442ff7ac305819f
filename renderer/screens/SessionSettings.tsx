// "Session settings": tolerances and reduction options of one session. Values are checked as
// typed (same ranges as main), saved with settings.update (audited, with an optional note), then
// a re-reduction of every run is offered.
import { staleRunNumbers } from '../../app/stale';
import { useEffect, useMemo, useState } from 'react';
import type { SessionData } from '../session';
import { CONTOUR_RULES, CORRECTIONS, NUM_FIELDS, checkForm, formFromSettings, type FormValues, type NumField } from '../settingsForm';
import { useApi, useStatus, quiet } from '../context';
import { newTaskId, useTaskProgress } from '../hooks';
import { ProgressBar } from '../components/ProgressBar';
import type { CorrectionMethod } from '../../app/types';

const GROUPS: { id: NumField['group']; title: string }[] = [
  { id: 'checks', title: 'Checks and flags' },
  { id: 'samples', title: 'Samples' },
  { id: 'uncertainty', title: 'Uncertainty' },
  { id: 'walls', title: 'Wall corrections: limits' },
];

export function SessionSettings({ data, reload }: { data: SessionData; reload(): Promise<void> }) {
  const api = useApi();
  const { track, notify } = useStatus();
  const sessionId = data.session.id;
  const [values, setValues] = useState<FormValues>(() => formFromSettings(data.settings));
  const [note, setNote] = useState('');
  const [saved, setSaved] = useState(false);
  const [task, setTask] = useState<string | null>(null);
  const progress = useTaskProgress(task, false);

  useEffect(() => setValues(formFromSettings(data.settings)), [data.settings]);
  const check = useMemo(() => checkForm(values, data.settings), [values, data.settings]);
  const nErr = Object.keys(check.errors).length;
  const nChanged = Object.keys(check.patch).length;
  const stale = staleRunNumbers(data.runs);

  const save = () =>
    quiet(track('Saving settings', async () => {
      await api.call('settings.update', { sessionId, patch: check.patch, note: note.trim() || undefined });
      setSaved(true);
      setNote('');
      notify('info', `Saved ${nChanged} setting${nChanged === 1 ? '' : 's'}; results reduced with the old values are marked stale until re-reduced.`);
      await reload();
    }));

  const reduceAll = () => {
    const taskId = newTaskId('reduce');
    setTask(taskId);
    quiet(track('Re-reducing every run', async () => {
      try {
        const r = await api.call('runs.reduce', { sessionId, stale: true, taskId });
        notify('info', `Re-reduced ${r.reduced} stale run${r.reduced === 1 ? '' : 's'} with the new settings.`);
        setSaved(false);
        await reload();
      } finally {
        setTask(null);
      }
    }));
  };

  const restoreTap = (tapId: string) =>
    quiet(track(`Restoring tap ${tapId}`, async () => {
      await api.call('taps.setBad', { sessionId, tapId, bad: false, comment: 'restored from Session settings' });
      setSaved(true);
      await reload();
    }));

  return (
    <div className="settings">
      <h2>Session settings — {data.session.title}</h2>
      <form
        className="settings-form"
        noValidate
        onSubmit={(e) => {
          e.preventDefault();
          if (nErr === 0 && nChanged > 0) save();
        }}
      >
        {GROUPS.map((g) => (
          <fieldset key={g.id}>
            <legend>{g.title}</legend>
            {NUM_FIELDS.filter((f) => f.group === g.id).map((f) => {
              const err = check.errors[f.key];
              const id = `set-${f.key}`;
              const changed = f.key in check.patch;
              return (
                <div key={f.key} className={`set-row${err ? ' set-err' : ''}${changed ? ' set-changed' : ''}`}>
                  <label htmlFor={id}>{f.label}</label>
                  <input
                    id={id}
                    name={f.key}
                    type="text"
                    inputMode="decimal"
                    value={values[f.key]}
                    aria-invalid={err ? true : undefined}
                    aria-describedby={`${id}-help`}
                    onChange={(e) => setValues((v) => ({ ...v, [f.key]: e.target.value }))}
                  />
                  <span className="unit">{f.unit}</span>
                  <span id={`${id}-help`} className={err ? 'field-error' : 'help'}>{err ? `✖ ${err}` : f.help}{changed && !err ? ' (changed)' : ''}</span>
                </div>
              );
            })}
          </fieldset>
        ))}
        <fieldset>
          <legend>Surface integration</legend>
          <div className="set-row">
            <label htmlFor="set-contour-rule">Contour rule</label>
            <select id="set-contour-rule" value={values.contourRule} onChange={(e) => setValues((v) => ({ ...v, contourRule: e.target.value as FormValues['contourRule'] }))}>
              {CONTOUR_RULES.map((c) => <option key={c.value} value={c.value}>{c.label}</option>)}
            </select>
          </div>
        </fieldset>
        <fieldset>
          <legend>Wall corrections</legend>
          <div className="set-row">
            <label htmlFor="set-correction">Method</label>
            <select id="set-correction" value={values.correction} onChange={(e) => setValues((v) => ({ ...v, correction: e.target.value as CorrectionMethod }))}>
              {CORRECTIONS.map((c) => <option key={c.value} value={c.value}>{c.label}</option>)}
            </select>
          </div>
        </fieldset>
        <fieldset>
          <legend>Taps marked bad by a reviewer ({data.settings.badTaps.length})</legend>
          {data.settings.badTaps.length ? (
            <ul className="bad-taps">
              {data.settings.badTaps.map((t) => (
                <li key={t}>{t} <button type="button" className="btn-small" onClick={() => restoreTap(t)}>Restore {t}</button></li>
              ))}
            </ul>
          ) : <p className="small muted">None. Mark taps bad in the Run inspector.</p>}
        </fieldset>
        <div className="set-row">
          <label htmlFor="set-note">Reason for the change</label>
          <input id="set-note" type="text" value={note} onChange={(e) => setNote(e.target.value)} maxLength={4000} placeholder="kept in the audit trail" />
        </div>
        <div className="button-row">
          <button type="submit" className="btn-primary" disabled={nErr > 0 || nChanged === 0}>
            Save {nChanged ? `${nChanged} change${nChanged === 1 ? '' : 's'}` : 'settings'}
          </button>
          <button type="button" onClick={() => setValues(formFromSettings(data.settings))} disabled={nChanged === 0 && nErr === 0}>Undo edits</button>
          {nErr ? <span className="field-error" role="alert">✖ {nErr} value{nErr === 1 ? ' needs' : 's need'} fixing before saving.</span> : null}
        </div>
      </form>

      {saved || stale.length ? (
        <section className="panel offer" aria-label="Re-reduce">
          <p>{stale.length
            ? `${stale.length} stored result${stale.length === 1 ? ' was' : 's were'} reduced with other settings, bad taps or zeros than those above and ${stale.length === 1 ? 'is' : 'are'} marked stale.`
            : 'Settings saved; every stored result is up to date.'}</p>
          <button type="button" className="btn-primary" onClick={reduceAll} disabled={task !== null || !stale.length}>Re-reduce stale runs ({stale.length})</button>
        </section>
      ) : null}
      {task ? <ProgressBar fraction={progress?.fraction ?? null} label={progress?.label ?? 'Starting…'} name="Reduction progress" /> : null}
    </div>
  );
}
