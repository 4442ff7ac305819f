// Malformed session folders imported into a real SQLite file: each must fail with a message naming
// file, line and channel/column, and leave the database byte-for-byte unchanged (SHA-256 of the db
// file and its -wal after a TRUNCATE checkpoint, see test/helpers/store-fixtures.ts), both when
// the error comes from the parser and when it comes from inside the store transaction.
import { rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Store } from '../main/store';
import { importSessionFolder, readSessionFolder } from '../main/import';
import { appendRunToFolder } from '../main/logwriter';
import { LogError } from '../app/log/errors';
import { cleanupTempDirs, copyFolder, dbContents, dbSnapshot, editFile, miniFolder, tempDir, type MiniFolder } from './helpers/store-fixtures';
import { miniRuns } from './helpers/mini-session';

let dir: string;
let store: Store;
let base: MiniFolder;

beforeAll(async () => {
  dir = tempDir();
  base = miniFolder(join(dir, 'good'), { runs: { dataRuns: 5, samples: 20 } });
  store = Store.open(join(dir, 'rakeline.sqlite'));
  // The database already holds a session, so "unchanged" is checked on a non-empty file.
  const rep = await importSessionFolder(store, base.dir, { actor: 'M. Okonkwo' });
  expect(rep.created).toBe(true);
});
afterAll(() => {
  store.close();
  cleanupTempDirs();
});

const col = (name: string) => 1 + base.setup.channels.findIndex((c) => c.name === name);
const setCell = (line: number, c: number, cell: string) => (text: string) => {
  const lines = text.split('\n');
  const cells = lines[line - 1].split(',');
  cells[c] = cell;
  lines[line - 1] = cells.join(',');
  return lines.join('\n');
};

let n = 0;
async function expectRefused(mutate: (folder: string) => void, message: RegExp | string, where: { file: string; line?: number; column?: string }) {
  const folder = copyFolder(base.dir, join(dir, `bad-${++n}`));
  mutate(folder);
  const before = dbSnapshot(store);
  const contents = dbContents(store);
  let caught: unknown;
  try {
    await importSessionFolder(store, folder);
  } catch (e) {
    caught = e;
  }
  expect(caught).toBeInstanceOf(LogError);
  const e = caught as LogError;
  if (typeof message === 'string') expect(e.message).toBe(message);
  else expect(e.message).toMatch(message);
  expect({ file: e.file, line: e.line, column: e.column }).toEqual({ line: undefined, column: undefined, ...where });
  expect(dbContents(store)).toEqual(contents);
  expect(dbSnapshot(store)).toBe(before);
}

describe('malformed folders leave the database unchanged', () => {
  it('truncated last line', async () => {
    await expectRefused(
      (f) => editFile(join(f, 'runs/run-0003.csv'), (t) => t.slice(0, t.trimEnd().lastIndexOf(',') - 3)),
      /^runs\/run-0003\.csv line 21, channel W_K03: the line ends after 22 of 23 cells \(truncated line\?\)/,
      { file: 'runs/run-0003.csv', line: 21, column: 'W_K03' },
    );
  });

  it('non-numeric cell', async () => {
    await expectRefused(
      (f) => editFile(join(f, 'runs/run-0002.csv'), setCell(8, col('S_CU02'), '1.2.3')),
      'runs/run-0002.csv line 8, channel S_CU02: expected a number, found "1.2.3"',
      { file: 'runs/run-0002.csv', line: 8, column: 'S_CU02' },
    );
  });

  it('NaN / Inf', async () => {
    await expectRefused(
      (f) => editFile(join(f, 'runs/run-0004.csv'), setCell(5, col('DP_REF'), 'NaN')),
      'runs/run-0004.csv line 5, channel DP_REF: expected a finite number, found "NaN"',
      { file: 'runs/run-0004.csv', line: 5, column: 'DP_REF' },
    );
    await expectRefused(
      (f) => editFile(join(f, 'runs/run-0004.csv'), setCell(6, col('R_T03'), '-Inf')),
      'runs/run-0004.csv line 6, channel R_T03: expected a finite number, found "-Inf"',
      { file: 'runs/run-0004.csv', line: 6, column: 'R_T03' },
    );
  });

  it('missing channel', async () => {
    await expectRefused(
      (f) => editFile(join(f, 'runs/run-0005.csv'), (t) => t.replace(',R_T03,', ',R_TX3,')),
      "runs/run-0005.csv line 1, channel R_T03: the header lacks this channel of the setup's channel map",
      { file: 'runs/run-0005.csv', line: 1, column: 'R_T03' },
    );
  });

  it('unknown unit in setup.json', async () => {
    let line = 0;
    await expectRefused(
      (f) =>
        editFile(join(f, 'setup.json'), (t) => {
          const s = JSON.parse(t);
          s.channels[1].unit = 'millibar';
          const out = JSON.stringify(s, null, 2);
          line = out.slice(0, out.indexOf('"millibar"')).split('\n').length;
          return out;
        }),
      /^setup\.json line \d+, channel P_STAT: unknown unit "millibar"; expected one of Pa, kPa/,
      { file: 'setup.json', column: 'P_STAT', line: expect.any(Number) as unknown as number },
    );
    expect(line).toBeGreaterThan(1);
  });

  it('a transducer group naming a channel that does not exist: refused, nothing stored', async () => {
    let line = 0;
    await expectRefused(
      (f) =>
        editFile(join(f, 'setup.json'), (t) => {
          const s = JSON.parse(t);
          s.transducerGroups = [{ id: 'MOD1', channels: ['S_CU01', 'S_CU99'], unit: 'Pa', fullScale: 2500, gainPercent: 0.05, zero: 2, linearityPercentFS: 0.03 }];
          const out = JSON.stringify(s, null, 2);
          line = out.slice(0, out.indexOf('"S_CU99"')).split('\n').length;
          return out;
        }),
      /^setup\.json line \d+, field transducerGroups\[0\]\.channels\[1\]: transducer group "MOD1" names channel "S_CU99", which is not in the channel map$/,
      { file: 'setup.json', column: 'transducerGroups[0].channels[1]', line: expect.any(Number) as unknown as number },
    );
    expect(line).toBeGreaterThan(1);
  });

  it('duplicate run number in the index', async () => {
    await expectRefused(
      (f) => editFile(join(f, 'runs.csv'), (t) => {
        const lines = t.trimEnd().split('\n');
        lines.splice(5, 0, lines[3].replace('run-0003', 'run-0003b'));
        return lines.join('\n') + '\n';
      }),
      'runs.csv line 6, column run: run 3 is listed twice (first on line 4)',
      { file: 'runs.csv', line: 6, column: 'run' },
    );
  });

  it('run file missing', async () => {
    await expectRefused(
      (f) => rmSync(join(f, 'runs/run-0006.csv')),
      'runs.csv line 7, column file: the file "runs/run-0006.csv" of run 6 is missing from the session folder',
      { file: 'runs.csv', line: 7, column: 'file' },
    );
  });

  it('empty run file, empty index, empty setup', async () => {
    await expectRefused(
      (f) => writeFileSync(join(f, 'runs/run-0002.csv'), ''),
      'runs/run-0002.csv line 1: expected a header line "t_s,<channel names…>", found an empty file',
      { file: 'runs/run-0002.csv', line: 1 },
    );
    await expectRefused((f) => writeFileSync(join(f, 'runs.csv'), ''), /^runs\.csv line 1: expected a header line/, { file: 'runs.csv', line: 1 });
    await expectRefused((f) => writeFileSync(join(f, 'setup.json'), ''), 'setup.json line 1: expected a JSON setup object, found an empty file', { file: 'setup.json', line: 1 });
  });

  it('header only', async () => {
    await expectRefused(
      (f) => editFile(join(f, 'runs/run-0003.csv'), (t) => t.split('\n')[0] + '\n'),
      'runs/run-0003.csv line 2: the file has a header but no samples; expected at least one sample line',
      { file: 'runs/run-0003.csv', line: 2 },
    );
  });

  it('wrong delimiter (semicolons)', async () => {
    await expectRefused(
      (f) => editFile(join(f, 'runs/run-0003.csv'), (t) => t.replace(/,/g, ';')),
      'runs/run-0003.csv line 1: the columns are separated by semicolons (";"); expected a comma (",") as the delimiter (and "." as the decimal point)',
      { file: 'runs/run-0003.csv', line: 1 },
    );
  });

  it('a bad run appended to an already imported folder (existing-session path)', async () => {
    const folder = copyFolder(base.dir, join(dir, 'live'));
    // First import the copy so that a session with this folder exists.
    await importSessionFolder(store, folder);
    const more = miniRuns(base.setup, { dataRuns: 1, firstRun: 20, seed: 5 });
    appendRunToFolder(folder, base.setup, more.runs[1]);
    editFile(join(folder, 'runs/run-0021.csv'), setCell(3, col('W_F01'), '0x1F'));
    const before = dbSnapshot(store);
    await expect(importSessionFolder(store, folder)).rejects.toThrow('runs/run-0021.csv line 3, channel W_F01: expected a number, found "0x1F"');
    expect(dbSnapshot(store)).toBe(before);
  });

  it('an error inside the store transaction rolls everything back', async () => {
    const folder = copyFolder(base.dir, join(dir, 'txn'));
    const parsed = await readSessionFolder(folder);
    // Corrupt a sample of the 4th run after parsing: the store has inserted runs 1–3 (and the new
    // session) when averaging run 4 throws.
    parsed.runs[3].channels.DP_REF[2] = Number.NaN;
    const before = dbSnapshot(store);
    const contents = dbContents(store);
    const phases: number[] = [];
    expect(() => store.importParsed(parsed, 'T. Lindqvist', { onProgress: (p) => phases.push(p.runsDone) })).toThrow(/run 4, channel "DP_REF": sample 3 is not a finite number/);
    expect(phases).toEqual([0, 1, 2, 3]); // it really was mid-way
    expect(dbContents(store)).toEqual(contents);
    expect(dbSnapshot(store)).toBe(before);
  });
});
