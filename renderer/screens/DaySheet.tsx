// "Day sheet": the printable summary of the test day, made by main ('daysheet.html'), shown in a
// sandboxed frame without scripts. Print: the desktop app saves a PDF ('daysheet.pdf'); browser
// mode prints a script-less copy of the sheet with the browser's print dialog.
import { useEffect, useRef, useState } from 'react';
import type { SessionData } from '../session';
import { useApi, useStatus, quiet } from '../context';

export type Paper = 'A4' | 'Letter';

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
  const sessionId = data.session.id;
  const stamp = useRef(0);

  useEffect(() => {
    const mine = ++stamp.current;
    setHtml(null);
    quiet(track('Making the day sheet', async () => {
      const r = await api.call('daysheet.html', { sessionId, paper });
      if (mine === stamp.current) setHtml(r.html);
    }));
  }, [api, sessionId, paper, data.runs, track]);

  const print = () =>
    quiet(track('Printing the day sheet', async () => {
      if (mode === 'electron') {
        const r = await api.call('daysheet.pdf', { sessionId, paper });
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
