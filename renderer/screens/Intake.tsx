// "Intake": bring a session in. Three ways: a folder path (native picker in the desktop app),
// chosen files or a whole folder (file inputs), or drag-and-drop. Chosen files are read here,
// checked in the worker with the app/log parser (errors at once, with file and line), then sent
// with sessions.importFiles. Live mode watches a folder and imports runs as they are written.
import { useEffect, useRef, useState, type DragEvent } from 'react';
import type { Events, ImportReportLike } from '../../main/contract';
import { useApi, useStatus, quiet } from '../context';
import { ProgressBar } from '../components/ProgressBar';
import { checkInWorker } from '../workerClient';
import type { CheckReport, PlainError, UploadFile } from '../workerTasks';
import { progressFraction, newTaskId } from '../hooks';
import { errorText, when } from '../format';
import type { LiveState } from '../live';

type Stage = { fraction: number | null; label: string } | null;

export interface IntakeProps {
  mode: 'electron' | 'browser';
  live: LiveState;
  onImported(sessionId: number): void;
  onOpenSession(sessionId: number): void;
  setLive(update: (s: LiveState) => LiveState): void;
}

interface Picked { file: File; path: string }

/** Read every file of a dropped directory tree (webkitGetAsEntry). */
async function walkEntry(entry: FileSystemEntry, prefix: string, out: Picked[]): Promise<void> {
  if (entry.isFile) {
    const file = await new Promise<File>((res, rej) => (entry as FileSystemFileEntry).file(res, rej));
    out.push({ file, path: `${prefix}${entry.name}` });
    return;
  }
  if (entry.isDirectory) {
    const reader = (entry as FileSystemDirectoryEntry).createReader();
    for (;;) {
      const batch = await new Promise<FileSystemEntry[]>((res, rej) => reader.readEntries(res, rej));
      if (batch.length === 0) break;
      for (const e of batch) await walkEntry(e, `${prefix}${entry.name}/`, out);
    }
  }
}

const SKIP = /(^|\/)(\.DS_Store|Thumbs\.db|desktop\.ini)$|(^|\/)\./;

/** An error's words without the place the line before it already names ("runs/x.csv line 5,
 *  channel REF_DP: expected a number" → "expected a number"). */
export function errorReason(e: PlainError): string {
  if (!e.file || !e.message.startsWith(e.file)) return e.message;
  const at = e.message.indexOf(': ');
  return at < 0 ? e.message : e.message.slice(at + 2);
}

export function Intake({ mode, live, onImported, onOpenSession, setLive }: IntakeProps) {
  const api = useApi();
  const { track, notify } = useStatus();
  const [folder, setFolder] = useState('');
  const [stage, setStage] = useState<Stage>(null);
  const [check, setCheck] = useState<CheckReport | null>(null);
  const [errors, setErrors] = useState<PlainError[]>([]);
  const [done, setDone] = useState<{ report: ImportReportLike; reduced: number } | null>(null);
  const [autoSend, setAutoSend] = useState(true);
  const [pending, setPending] = useState<UploadFile[] | null>(null);
  const [dragging, setDragging] = useState(false);
  const [liveFolder, setLiveFolder] = useState(live.folder ?? '');
  const dirInput = useRef<HTMLInputElement>(null);
  const taskRef = useRef<string | null>(null);
  const running = stage !== null && !done && errors.length === 0;

  useEffect(() => {
    dirInput.current?.setAttribute('webkitdirectory', '');
    dirInput.current?.setAttribute('directory', '');
  }, []);

  // Main-side progress of our import task, mapped onto 35…100 % of the bar.
  useEffect(() => api.on('progress', (e: Events['progress']) => {
    if (e.taskId !== taskRef.current) return;
    const f = progressFraction(e);
    setStage({ fraction: f === null ? null : 0.35 + 0.65 * f, label: e.label });
  }), [api]);

  const reset = () => {
    setCheck(null);
    setErrors([]);
    setDone(null);
    setPending(null);
  };

  const finish = async (r: { report: ImportReportLike; reduced: number }) => {
    setDone(r);
    const n = r.report.importedRuns.length;
    setStage({ fraction: 1, label: `Imported ${n} run${n === 1 ? '' : 's'}, reduced ${r.reduced}` });
    const warned = r.report.warnings?.length ? `, ${r.report.warnings.length} warning${r.report.warnings.length === 1 ? '' : 's'} (see below)` : '';
    notify('info', `Session ${r.report.sessionId}: ${r.report.created ? 'new session' : 'existing session'}, ${n} runs imported, ${r.report.unchangedFiles.length} files unchanged, ${r.reduced} runs reduced${warned}.`);
    onImported(r.report.sessionId);
  };

  const fail = (e: unknown) => {
    const o = e as { detail?: PlainError } & PlainError;
    const d = o?.detail ?? o;
    setErrors([{ message: errorText(e), file: d?.file, line: d?.line, column: d?.column }]);
    setStage((s) => (s ? { fraction: s.fraction, label: 'Stopped: see the error below' } : s));
  };

  const send = (files: UploadFile[]) => {
    const taskId = newTaskId('upload');
    taskRef.current = taskId;
    setPending(null);
    const mb = files.reduce((s, f) => s + f.text.length, 0) / 1048576;
    setStage({ fraction: 0.35, label: `Sending ${files.length} files (${mb.toFixed(1)} MB) to be stored and reduced…` });
    quiet(track('Importing the chosen files', async () => {
      try {
        // Let the label paint before the upload is encoded.
        await new Promise((r) => setTimeout(r, 40));
        await finish(await api.call('sessions.importFiles', { files, taskId }));
      } catch (e) {
        fail(e);
        throw e;
      }
    }));
  };

  const takeFiles = (picked: Picked[]) => {
    const list = picked.filter((p) => !SKIP.test(p.path));
    if (list.length === 0) return;
    reset();
    quiet(track('Reading and checking files', async () => {
      const total = list.reduce((s, p) => s + p.file.size, 0) || 1;
      let read = 0;
      const files: UploadFile[] = [];
      setStage({ fraction: 0, label: `Reading ${list.length} files` });
      for (const p of list) {
        files.push({ name: p.path, text: await p.file.text() });
        read += p.file.size;
        setStage({ fraction: 0.1 * (read / total), label: `Reading ${p.path}` });
      }
      const report = await checkInWorker(files, (d, t, label) => setStage({ fraction: 0.1 + 0.25 * (t > 0 ? d / t : 0), label }));
      setCheck(report);
      if (!report.ok) {
        setErrors(report.errors);
        setStage({ fraction: 0.35, label: `Check found ${report.errors.length} problem${report.errors.length === 1 ? '' : 's'}` });
        return;
      }
      const names = new Map(report.files.map((f) => [f.chosen, f]));
      const out = files
        .filter((f) => names.get(f.name)?.status === 'ok')
        .map((f) => ({ name: names.get(f.name)!.name, text: f.text }));
      setStage({ fraction: 0.35, label: `Check passed: ${report.runs} runs, ${report.samples} samples` });
      if (autoSend) send(out);
      else setPending(out);
    }));
  };

  const fromInput = (fl: FileList | null) => {
    if (!fl) return;
    takeFiles([...fl].map((f) => ({ file: f, path: f.webkitRelativePath || f.name })));
  };

  const onDrop = (e: DragEvent<HTMLDivElement>) => {
    e.preventDefault();
    setDragging(false);
    const items = [...e.dataTransfer.items];
    const entries = items.map((i) => i.webkitGetAsEntry?.()).filter((x): x is FileSystemEntry => !!x);
    if (entries.length) {
      quiet(track('Reading dropped folder', async () => {
        const out: Picked[] = [];
        for (const en of entries) await walkEntry(en, '', out);
        takeFiles(out);
      }));
    } else fromInput(e.dataTransfer.files);
  };

  const pick = (purpose: 'import' | 'watch') =>
    quiet(track('Choosing a folder', async () => {
      const r = await api.call('dialog.pickFolder', { purpose });
      if (!r.supported) {
        notify('info', 'This window cannot open a folder dialog: type the folder path instead.');
        return;
      }
      if (r.folder) (purpose === 'import' ? setFolder : setLiveFolder)(r.folder);
      if (r.folder && purpose === 'import') importFolder(r.folder);
    }));

  const importFolder = (path = folder) => {
    const f = path.trim();
    if (!f) return;
    reset();
    const taskId = newTaskId('import');
    taskRef.current = taskId;
    setStage({ fraction: null, label: `Opening ${f}` });
    quiet(track(`Importing ${f}`, async () => {
      try {
        await finish(await api.call('sessions.importFolder', { folder: f, taskId }));
      } catch (e) {
        fail(e);
        throw e;
      }
    }));
  };

  const startLive = () =>
    quiet(track('Starting live mode', async () => {
      const r = await api.call('watch.start', { folder: liveFolder.trim() });
      setLive((s) => ({ ...s, watching: true, folder: r.folder, sessionId: s.folder === r.folder ? s.sessionId : null }));
    }));
  const stopLive = () =>
    quiet(track('Stopping live mode', async () => {
      await api.call('watch.stop', {});
      setLive((s) => ({ ...s, watching: false }));
    }));

  return (
    <div className="intake">
      <h2>Intake</h2>
      <div className="intake-grid">
        <section className="panel" aria-label="Import a folder by path">
          <h3>Session folder on this computer</h3>
          <p className="small muted">A folder with setup.json, runs.csv and the run logs. Files already imported (same content) are skipped.</p>
          <div className="field-row">
            <label htmlFor="intake-folder">Folder</label>
            <input id="intake-folder" type="text" value={folder} onChange={(e) => setFolder(e.target.value)} placeholder="/path/to/session" spellCheck={false} />
            {mode === 'electron' ? <button type="button" onClick={() => pick('import')}>Choose…</button> : null}
            <button type="button" className="btn-primary" onClick={() => importFolder()} disabled={!folder.trim() || running}>Import folder</button>
          </div>
        </section>

        <section className="panel" aria-label="Import chosen files">
          <h3>Files from this window</h3>
          <div
            className={`dropzone${dragging ? ' dropzone-on' : ''}`}
            onDragOver={(e) => { e.preventDefault(); setDragging(true); }}
            onDragLeave={() => setDragging(false)}
            onDrop={onDrop}
          >
            <p><b>Drop a session folder or its files here</b>, or choose:</p>
            <div className="field-row">
              <label className="file-btn">Choose files…
                <input type="file" multiple accept=".json,.csv,text/csv,application/json" onChange={(e) => { fromInput(e.target.files); e.target.value = ''; }} aria-label="Choose session files" data-testid="files-input" />
              </label>
              <label className="file-btn">Choose a folder…
                <input ref={dirInput} type="file" multiple onChange={(e) => { fromInput(e.target.files); e.target.value = ''; }} aria-label="Choose a session folder" data-testid="folder-input" />
              </label>
              <label className="small"><input type="checkbox" checked={autoSend} onChange={(e) => setAutoSend(e.target.checked)} /> import as soon as the check passes</label>
            </div>
            <p className="small muted">Files are checked here first with the same parser the import uses; nothing is stored unless every file passes.</p>
          </div>
          {pending ? <button type="button" className="btn-primary" onClick={() => send(pending)}>Import {pending.length} checked files</button> : null}
        </section>
      </div>

      {stage ? (
        <section className="panel" aria-label="Import progress">
          <ProgressBar fraction={stage.fraction} label={stage.label} name="Import progress" />
          {done ? (
            <div className="done-line">
              <p>
                ✔ {done.report.created ? 'New session' : 'Session updated'} (id {done.report.sessionId}): {done.report.importedRuns.length} runs imported,
                {' '}{done.report.changedFiles.length} changed files, {done.report.unchangedFiles.length} unchanged, {done.report.skippedRuns.length} skipped; {done.reduced} runs reduced.
              </p>
              <button type="button" className="btn-primary" onClick={() => onOpenSession(done.report.sessionId)}>Open the Day log</button>
              {done.report.warnings?.length ? (
                <div className="import-warnings" role="status" aria-label="Import warnings">
                  <p className="small">⚠ {done.report.warnings.length} warning{done.report.warnings.length === 1 ? '' : 's'}: imported, but read with these reservations</p>
                  <ul className="small">
                    {done.report.warnings.slice(0, 50).map((w, i) => <li key={i}>{w}</li>)}
                    {done.report.warnings.length > 50 ? <li>… and {done.report.warnings.length - 50} more (all are in the audit trail)</li> : null}
                  </ul>
                </div>
              ) : null}
            </div>
          ) : null}
        </section>
      ) : null}

      {errors.length ? (
        <section className="panel errors" role="alert" aria-label="Import errors">
          <h3>✖ {errors.length} problem{errors.length === 1 ? '' : 's'} — nothing was imported</h3>
          <ul>
            {errors.map((e, i) => (
              <li key={i}>
                <span className="err-where">{e.file ?? 'input'}{e.line !== undefined ? `, line ${e.line}` : ''}{e.column ? `, channel ${e.column}` : ''}</span>
                <span className="err-msg">{errorReason(e)}</span>
              </li>
            ))}
          </ul>
        </section>
      ) : null}

      {check ? (
        <section className="panel" aria-label="Checked files">
          <h3>Checked files {check.session ? <>— {check.session.title}, {check.session.model}, {check.session.date}</> : null}</h3>
          <div className="table-scroll short">
            <table className="files compact">
              <thead><tr><th scope="col">file</th><th scope="col">sent as</th><th scope="col" className="num">size [kB]</th><th scope="col">check</th><th scope="col">note</th></tr></thead>
              <tbody>
                {[...check.files].sort((a, b) => a.chosen.localeCompare(b.chosen, undefined, { numeric: true })).map((f) => (
                  <tr key={f.chosen} className={f.status === 'error' ? 'row-reject' : undefined}>
                    <td className="fname">{f.chosen}</td><td className="fname">{f.status === 'unused' ? '–' : f.name}</td><td className="num">{(f.bytes / 1024).toFixed(1)}</td>
                    <td>{f.status === 'ok' ? '✔ ok' : f.status === 'error' ? '✖ error' : f.status === 'unused' ? '○ not used' : '– not checked'}</td>
                    <td className="small">{f.note}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
          {check.warnings.length ? <details><summary>{check.warnings.length} notes</summary><ul className="small">{check.warnings.map((w, i) => <li key={i}>{w}</li>)}</ul></details> : null}
        </section>
      ) : null}

      <section className="panel" aria-label="Live mode">
        <h3>Live mode {live.watching ? <span className="live-chip"><span aria-hidden="true">●</span> watching</span> : <span className="muted">(off)</span>}</h3>
        <p className="small muted">Watch the acquisition folder: each run is imported and reduced as soon as its log is complete, and appears in the Day log.</p>
        <div className="field-row">
          <label htmlFor="live-folder">Folder</label>
          <input id="live-folder" type="text" value={liveFolder} onChange={(e) => setLiveFolder(e.target.value)} placeholder="/path/to/acquisition/session" spellCheck={false} disabled={live.watching} />
          {mode === 'electron' && !live.watching ? <button type="button" onClick={() => pick('watch')}>Choose…</button> : null}
          {live.watching
            ? <button type="button" onClick={stopLive}>Stop live mode</button>
            : <button type="button" className="btn-primary" onClick={startLive} disabled={!liveFolder.trim()}>Start live mode</button>}
        </div>
        {live.events.length ? (
          <ul className="live-log">
            {live.events.slice(0, 30).map((e, i) => (
              <li key={i} className={e.ok ? undefined : 'warn-text'}>
                <span className="muted">{when(e.at).slice(11)}</span> {e.ok ? '✔' : '✖'} {e.message}
                {e.ok && e.sessionId !== null ? <> <button type="button" className="link" onClick={() => onOpenSession(e.sessionId!)}>open</button></> : null}
              </li>
            ))}
          </ul>
        ) : null}
      </section>
    </div>
  );
}
