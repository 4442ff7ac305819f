// Reviewer verdict on one run: accept or reject with a comment (stored and audited by main).
import { useEffect, useState } from 'react';
import type { RunRowLike } from '../../main/contract';
import { useApi, useStatus, quiet } from '../context';
import { when } from '../format';

export function ReviewPanel({ row, onSaved }: { row: RunRowLike; onSaved(): void }) {
  const api = useApi();
  const { track } = useStatus();
  const [comment, setComment] = useState(row.review?.comment ?? '');
  useEffect(() => setComment(row.review?.comment ?? ''), [row.run, row.review?.comment]);

  const save = (verdict: 'accepted' | 'rejected' | null) =>
    quiet(track('Saving the review', async () => {
      await api.call('runs.review', { sessionId: row.sessionId, run: row.run, verdict, comment: comment.trim() });
      onSaved();
    }));

  const id = `review-comment-${row.run}`;
  return (
    <section className="review" aria-label={`Review of run ${row.run}`}>
      <h3>Review of run {row.run}</h3>
      <p className="review-now">
        {row.review
          ? <>Now: <strong className={`review-mark review-${row.review.verdict}`}>{row.review.verdict === 'accepted' ? '✔ accepted' : '✖ rejected'}</strong> by {row.review.actor}, {when(row.review.at)}</>
          : 'Not reviewed yet.'}
      </p>
      <label htmlFor={id}>Comment</label>
      <textarea id={id} rows={2} value={comment} maxLength={4000} onChange={(e) => setComment(e.target.value)} placeholder="Why (kept in the audit trail)" />
      <div className="button-row">
        <button type="button" className="btn-accept" onClick={() => save('accepted')}>✔ Accept</button>
        <button type="button" className="btn-reject" onClick={() => save('rejected')} disabled={comment.trim() === ''} title={comment.trim() === '' ? 'A rejection needs a comment' : undefined}>✖ Reject</button>
        {row.review ? <button type="button" onClick={() => save(null)}>Clear verdict</button> : null}
      </div>
    </section>
  );
}
