// The examples in docs/LOG-FORMAT.md are a valid session, in both layouts.
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { expect, it } from 'vitest';
import { parseSessionTexts } from '../app/log/session';

const doc = readFileSync(fileURLToPath(new URL('../docs/LOG-FORMAT.md', import.meta.url)), 'utf8');
const examples = new Map([...doc.matchAll(/<!-- example: (.+?) -->\n```\w*\n([\s\S]*?)```/g)].map((m) => [m[1], m[2]]));

it('the folder example (setup.json, runs.csv, one log per run) reads', () => {
  expect(examples.size).toBe(7);
  const t = parseSessionTexts(['setup.json', 'runs.csv', 'runs/run-0001.csv', 'runs/run-0002.csv', 'runs/run-0003.csv'].map((name) => ({ name, text: examples.get(name)! })));
  expect(t.index.map((i) => [i.run, i.kind])).toEqual([[1, 'zero'], [2, 'data'], [3, 'zero']]);
  // baro_hPa: 1012.4 hPa = 101 240 Pa (hecto = 10², SI Brochure 9th ed., Table 7).
  expect(t.index[0].baro).toBeCloseTo(101240, 6);
  const r2 = t.runs[1];
  expect(r2.channels.S_C01.length).toBe(3);
  // DP_REF logged in inH2O (conventional, 249.0889 Pa per inH2O, NIST SP 811 (2008) B.8).
  expect(r2.channels.DP_REF[0]).toBeCloseTo(4.7325 * 249.0889, 2);
  expect(t.warnings).toEqual([]);
});

it('the long-log example (one samples.csv with a run column) reads', () => {
  const t = parseSessionTexts([
    { name: 'setup.json', text: examples.get('setup.json')! },
    { name: 'runs.csv', text: examples.get('long runs.csv')! },
    { name: 'samples.csv', text: examples.get('long samples.csv')! },
  ]);
  expect(t.runs.map((r) => [r.info.run, r.info.file, r.channels.P_STAT.length])).toEqual([[1, 'samples.csv', 2], [2, 'samples.csv', 2], [3, 'samples.csv', 1]]);
});
