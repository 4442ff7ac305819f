// Every contract channel refuses a malformed payload before any handler runs, with an error that
// names the channel and the offending field (common practice, no source).
import { describe, expect, it } from 'vitest';
import { channels, type Channel } from '../main/contract';
import { dispatch, type Handlers } from '../main/handlers';

/** Handlers that record a call: none may run for a bad payload. */
function spyHandlers(calls: string[]): Handlers {
  return new Proxy({} as Handlers, {
    get: (_t, name: string) => async () => {
      calls.push(name);
      return { ok: true };
    },
  });
}

const good = { sessionId: 1 };
/** channel → malformed payloads, each with the field the message must name. */
const bad: Record<Channel, [unknown, string][]> = {
  'app.info': [[{ extra: 1 }, 'extra']],
  'sessions.list': [[{ sessionId: 1 }, 'sessionId']],
  'sessions.get': [[{ sessionId: 'one' }, 'sessionId'], [{}, 'sessionId'], [{ sessionId: 0 }, 'sessionId']],
  'dialog.pickFolder': [[{ purpose: 'delete' }, 'purpose'], [{}, 'purpose']],
  'sessions.importFolder': [[{ folder: '' }, 'folder'], [{ folder: 3 }, 'folder'], [{ folder: '/x', taskId: 5 }, 'taskId']],
  'sessions.importFiles': [
    [{ files: [] }, 'files'],
    [{ files: [{ name: 'setup.json' }] }, 'files.0.text'],
    [{ files: [{ name: '', text: '{}' }] }, 'files.0.name'],
  ],
  'runs.list': [[{ sessionId: -2 }, 'sessionId']],
  'runs.get': [[{ ...good, run: 1.5 }, 'run'], [good, 'run']],
  'runs.reductionInput': [[{ ...good, run: '3' }, 'run']],
  'runs.reduce': [[{ ...good, runs: [1, 'x'] }, 'runs.1'], [{ ...good, runs: 4 }, 'runs']],
  'runs.saveResults': [[{ ...good, results: [] }, 'results'], [{ ...good, results: [42] }, 'results.0']],
  'runs.review': [
    [{ ...good, run: 2, verdict: 'maybe', comment: '' }, 'verdict'],
    [{ ...good, run: 2, verdict: 'accepted' }, 'comment'],
  ],
  'taps.setBad': [[{ ...good, tapId: 'U01', bad: 'yes' }, 'bad'], [{ ...good, tapId: '', bad: true }, 'tapId']],
  'taps.settle': [
    [{ ...good, run: 3, tapId: 'U01', decision: 'drop' }, 'decision'],
    [{ ...good, tapId: 'U01', decision: 'keep' }, 'run'],
    [{ ...good, run: 3, tapId: '', decision: 'confirm' }, 'tapId'],
  ],
  'settings.get': [[{ sessionId: null }, 'sessionId']],
  'settings.update': [
    [{ ...good, patch: { spikeK: 0 } }, 'patch.spikeK'],
    [{ ...good, patch: { liftTolAbs: 0.1, colour: 'red' } }, 'colour'],
    [{ ...good, patch: { correction: 'magic' } }, 'patch.correction'],
  ],
  'session.summary': [[{ sessionId: 2.2 }, 'sessionId']],
  'audit.list': [[{ sessionId: '7' }, 'sessionId']],
  'daysheet.html': [[{ ...good, paper: 'A3' }, 'paper']],
  'daysheet.pdf': [[{ ...good, paper: 'A4', path: 17 }, 'path'], [good, 'paper']],
  'export.results': [[{ ...good, format: 'xlsx' }, 'format']],
  'file.save': [
    [{ suggestedName: '../../etc/x.svg', kind: 'svg', base64: '' }, 'suggestedName'],
    [{ suggestedName: 'lift.exe', kind: 'svg', base64: '' }, 'suggestedName'],
    [{ suggestedName: 'lift.png', kind: 'gif', base64: '' }, 'kind'],
    [{ suggestedName: 'lift.png', kind: 'png', base64: 'not base64!' }, 'base64'],
  ],
  'reviewer.set': [[{ name: '   ' }, 'name'], [{}, 'name']],
  'watch.start': [[{ folder: '' }, 'folder'], [{}, 'folder']],
  'watch.stop': [[{ now: true }, 'now']],
  'watch.status': [[{ verbose: 1 }, 'verbose']],
};

describe('contract payload validation', () => {
  it('has a malformed case for every channel', () => {
    expect(Object.keys(bad).sort()).toEqual(Object.keys(channels).sort());
  });

  for (const channel of Object.keys(channels) as Channel[]) {
    it(`${channel} refuses malformed payloads before its handler runs`, async () => {
      for (const [payload, field] of bad[channel]) {
        const calls: string[] = [];
        const answer = await dispatch(spyHandlers(calls), channel, payload);
        expect(calls).toEqual([]);
        expect('error' in answer).toBe(true);
        if (!('error' in answer)) continue;
        expect(answer.error.kind).toBe('validation');
        expect(answer.error.message).toContain(`"${channel}"`);
        expect(answer.error.message).toContain(field);
      }
    });
  }

  it('refuses a non-object payload', async () => {
    const calls: string[] = [];
    const answer = await dispatch(spyHandlers(calls), 'sessions.get', 'sessionId=1');
    expect(calls).toEqual([]);
    expect('error' in answer && answer.error.kind).toBe('validation');
  });

  it('refuses an unknown channel, naming it', async () => {
    const calls: string[] = [];
    const answer = await dispatch(spyHandlers(calls), 'fs.readFile', { path: '/etc/passwd' });
    expect(calls).toEqual([]);
    expect('error' in answer && answer.error.message).toContain('fs.readFile');
  });

  it('runs the handler with the parsed payload when it is valid', async () => {
    const calls: string[] = [];
    const answer = await dispatch(spyHandlers(calls), 'runs.get', { sessionId: 3, run: 7 });
    expect(calls).toEqual(['runs.get']);
    expect(answer).toEqual({ result: { ok: true } });
  });
});
