// "Day sheet": the printable summary of the test day, made by main ('daysheet.html'), shown in a
// sandboxed frame without scripts. Print: the desktop app saves a PDF ('daysheet.pdf'); browser
// mode prints a script-less copy of the sheet with the browser's print dialog.
import { useEffect, useRef, useState } from 'react';
import type { SessionData } from '../session';
import { useApi, useStatus, quiet } from '../context';

export type Paper = 'A4' | 'Letter';

/** Run numbers from "3, 5-9" (null when the text is not such a list). */
export function parseRuns(text: string): number[] | null {
  const out: number[] = [];
  for (const part of text.split(/[\s,;]+/).filter(Boolean)) {
    const m = /^(\d+)(?:[-–](\d+))?$/.exec(part);
    if (!m) return null;
    const a = Number(m[1]), b = m[2] === undefined ? a : Number(m[2]);
    if (b < a || b - a > 1000) return null;
    for (let r = a; r <= b; r++) out.push(r);
  }
  return [...new Set(out)];
}

/** Print an HTML document through a hidden, script-less, same-origin frame. */
export function printHtml(html: string, doc: Document = document): Promise<void> {
  return new Promise((resolve, reject) => {
    const frame = doc.createElement('iframe');
    frame.setAttribute('sandbox', 'allow-same-origin allow-modals');
    frame.setAttribute('aria-hidden', 'true');
    frame.className = 'print-frame';
    frame.onload = () => {
      try {
        frame.contentWindow?.focus();
        frame.contentWindow?.print();
        resolve();
      } catch (e) {
        reject(e);
      } finally {
        setTimeout(() => frame.remove(), 60_000);
      }
    };
    frame.srcdoc = html;
    doc.body.appendChild(frame);
  });
}

export function DaySheet({ data, mode }: { data: SessionData; mode: 'electron' | 'browser' }) {
  const api = useApi();
  const { track, notify } = useStatus();
  const [paper, setPaper] = useState<Paper>('A4');
  const [html, setHtml] = useState<string | null>(null);
  const [cpText, setCpText] = useState('');
  const cpParsed = parseRuns(cpText);
  const cpRuns = (cpParsed ?? []).join(',');
  const sessionId = data.session.id;
  const stamp = useRef(0);

  useEffect(() => {
    const mine = ++stamp.current;
    setHtml(null);
    quiet(track('Making the day sheet', async () => {
      const picked = cpRuns ? cpRuns.split(',').map(Number) : undefined;
      const r = await api.call('daysheet.html', { sessionId, paper, ...(picked ? { cpRuns: picked } : {}) });
      if (mine === stamp.current) setHtml(r.html);
    }));
  }, [api, sessionId, paper, cpRuns, data.runs, track]);

  const print = () =>
    quiet(track('Printing the day sheet', async () => {
      if (mode === 'electron') {
        const r = await api.call('daysheet.pdf', { sessionId, paper, ...(cpRuns ? { cpRuns: cpRuns.split(',').map(Number) } : {}) });
        if (r.supported) {
          if (r.path) notify('info', `Day sheet saved as ${r.path}`);
          return;
        }
      }
      if (html) await printHtml(html);
    }));

  return (
    <div className="daysheet">
      <div className="toolbar" role="toolbar" aria-label="Day sheet tools">
        <h2>Day sheet — {data.session.title}</h2>
        <span className="toolbar-gap" />
        <fieldset className="paper">
          <legend className="sr-only">Paper size</legend>
          {(['A4', 'Letter'] as Paper[]).map((p) => (
            <label key={p} className="chip"><input type="radio" name="paper" value={p} checked={paper === p} onChange={() => setPaper(p)} /> {p}</label>
          ))}
        </fieldset>
        <label className="cp-pick">Cp plots also of runs{' '}
          <input value={cpText} onChange={(e) => setCpText(e.target.value)} placeholder="e.g. 9, 14-16" aria-label="Cp plots also of runs" aria-invalid={cpParsed === null} size={12} />
        </label>
        {cpParsed === null ? <span className="error-text" role="alert">Run numbers like 9, 14-16.</span> : null}
        <button type="button" className="btn-primary" onClick={print} disabled={!html}>{mode === 'electron' ? 'Print to PDF…' : 'Print…'}</button>
      </div>
      <div className={`sheet-frame-wrap paper-${paper}`}>
        {html
          ? <iframe className="sheet-frame" title={`Day sheet of ${data.session.title} (${paper})`} sandbox="" srcDoc={html} />
          : <p className="muted">Making the day sheet…</p>}
      </div>
    </div>
  );
}
