// Browser mode knows no user: once per launch it asks for the reviewer's name, recorded with every
// review, tap override and setting change (and printed on the day sheet) instead of "browser".
import { useState } from 'react';
import { useApi } from '../context';
import { errorText } from '../format';

export function ReviewerPrompt({ onNamed }: { onNamed(name: string): void }) {
  const api = useApi();
  const [name, setName] = useState('');
  const [error, setError] = useState<string | null>(null);
  const submit = async () => {
    const n = name.trim();
    if (!n) {
      setError('Enter your name.');
      return;
    }
    try {
      const r = await api.call('reviewer.set', { name: n });
      onNamed(r.reviewer);
    } catch (e) {
      setError(errorText(e));
    }
  };
  return (
    <div className="modal-back">
      <form className="modal" role="dialog" aria-modal="true" aria-labelledby="reviewer-title" onSubmit={(e) => { e.preventDefault(); void submit(); }}>
        <h2 id="reviewer-title">Who is reviewing?</h2>
        <p className="small">Your name is recorded with every review, tap override and setting change you make, and printed on the day sheet.</p>
        <label>Name <input autoFocus value={name} onChange={(e) => setName(e.target.value)} aria-label="Reviewer name" maxLength={120} /></label>
        {error ? <p className="error-text" role="alert">{error}</p> : null}
        <button type="submit" className="btn-primary">Use this name</button>
      </form>
    </div>
  );
}
