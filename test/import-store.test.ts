// Importing session folders into a real SQLite file: lossless samples, idempotent re-import,
// changed files refused, live acquisition (appended index / grown long log) accepted, BOM/CRLF.
import { appendFileSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { Store } from '../main/store';
import { importSessionFolder, parseSessionFiles, readSessionFolder } from '../main/import';
import { appendRunToFolder, indexLine } from '../main/logwriter';
import { averageRun } from '../app/samples';
import { cleanupTempDirs, dbSnapshot, editFile, miniFolder, tempDir } from './helpers/store-fixtures';
import { miniRuns } from './helpers/mini-session';

afterAll(() => cleanupTempDirs());

function freshStore(dir: string): Store {
  return Store.open(join(dir, 'db', 'rakeline.sqlite'));
}

describe('first import', () => {
  it('stores every run, sample for sample, and averages them with app/samples at the session spikeK', async () => {
    const dir = tempDir();
    const f = miniFolder(join(dir, 's'), { runs: { dataRuns: 4, samples: 30 } });
    const store = freshStore(dir);
    const parsed = await readSessionFolder(f.dir);
    const rep = store.importParsed(parsed, 'M. Okonkwo');
    expect(rep).toEqual({ sessionId: 1, created: true, importedRuns: f.index.map((i) => i.run), unchangedFiles: [], changedFiles: [], skippedRuns: [], warnings: [] });
    const s = store.getSession(1);
    expect([s.title, s.date, s.model, s.runCount, s.dataRunCount, s.folder]).toEqual(['HAL-S4412 mini test', '2026-11-18', 'HAL-S4412', f.index.length, 4, f.dir]);
    expect(store.getSetup(1)).toEqual(f.setup);
    expect(store.getIndex(1)).toEqual(parsed.index);
    const avg = store.getAveraged(1);
    for (const raw of parsed.runs) {
      for (const c of f.setup.channels) {
        // Bit-for-bit what the parser produced (Float64 BLOBs).
        expect(store.getSamples(1, raw.info.run, c.name)).toEqual(raw.channels[c.name]);
      }
      const expected = averageRun(raw, f.setup.settings!.spikeK!);
      expect(avg.find((a) => a.info.run === raw.info.run)).toEqual(expected);
    }
    // The values are those written (logwriter: Pa → unit → text; parser: text → Pa): equal to ~1e-12.
    const orig = f.runs[1].channels.W_F01;
    const back = store.getSamples(1, f.runs[1].info.run, 'W_F01');
    back.forEach((v, i) => expect(v).toBeCloseTo(orig[i], 9));
    const blob = store.db.prepare('SELECT dtype, n, length(data) AS bytes FROM samples WHERE run = 2 AND channel = ?').get('W_F01');
    expect(blob).toEqual({ dtype: 'f64le', n: 30, bytes: 240 });
    expect(store.auditTrail(1).map((a) => [a.action, a.actor])).toEqual([['import', 'M. Okonkwo']]);
    store.close();
  });

  it('packed samples decode to the very doubles the reader read, awkward cells included', async () => {
    // Common practice, no source: the import packs each channel as decimal mantissas where it can
    // (main/sampleCodec.ts) and as plain doubles where it cannot; every stored sample must still be
    // the parser's double (the reference: readSessionFolder, which packs nothing), bit for bit.
    const dir = tempDir();
    const f = miniFolder(join(dir, 's'), { runs: { dataRuns: 2, samples: 40 }, write: { digits: 6 } });
    const file = f.index[2].file!;
    const cell = (i: number, k: number): string | null => {
      // Per column k (after t_s): a kind of awkward value for some rows; null keeps the written cell.
      switch (k) {
        case 0: return [`${(i * 137) % 1000}`, `-${i}.5`, '0.000125', '-12345.6789'][i % 4]; // digits after the point vary
        case 1: return i === 17 ? '-0.0' : null; // −0: no mantissa carries it
        case 2: return i === 5 ? '1.5e2' : null; // exponent notation
        case 3: return i === 9 ? '3.14159265358979323' : null; // more than 15 digits
        case 4: return i % 2 ? '123456789012.345' : '-0.001'; // a large range of magnitudes
        default: return null;
      }
    };
    editFile(join(f.dir, file), (t) => t.split('\n').map((line, j) => {
      if (j === 0 || line === '') return line;
      const cells = line.split(',');
      for (let k = 0; k + 1 < cells.length; k++) {
        const c = cell(j - 1, k);
        if (c !== null) cells[k + 1] = c;
      }
      return cells.join(',');
    }).join('\n'));
    const parsed = await readSessionFolder(f.dir);
    const store = freshStore(dir);
    await importSessionFolder(store, f.dir, { workers: 0 });
    const run = f.index[2].run;
    const raw = parsed.runs.find((r) => r.info.run === run)!;
    const header = readFileSync(join(f.dir, file), 'utf8').split('\n')[0].split(',').slice(1);
    const dtypes: string[] = [];
    for (const name of header.slice(0, 6)) {
      const got = store.getSamples(1, run, name);
      const want = raw.channels[name];
      expect(got.length).toBe(want.length);
      for (let i = 0; i < want.length; i++) if (!Object.is(got[i], want[i])) expect.fail(`${name} sample ${i + 1}: ${got[i]} ≠ ${want[i]}`);
      dtypes.push((store.db.prepare('SELECT dtype FROM samples WHERE run = ? AND channel = ?').get(run, name) as { dtype: string }).dtype);
    }
    // Columns 1–3 hold a value no decimal mantissa holds the same way: plain doubles; 0 and 4 pack.
    expect(dtypes.slice(0, 5)).toEqual(['dec', 'f64le', 'dec', 'f64le', 'dec']);
    store.close();
  });

  it('BOM and CRLF files import to the same samples as plain LF files', async () => {
    const dir = tempDir();
    const lf = miniFolder(join(dir, 'lf'), { runs: { dataRuns: 2, samples: 10 } });
    const crlf = miniFolder(join(dir, 'crlf'), { runs: { dataRuns: 2, samples: 10 }, write: { eol: '\r\n' } });
    for (const name of ['setup.json', 'runs.csv', ...crlf.index.map((i) => i.file!)]) editFile(join(crlf.dir, name), (t) => '\uFEFF' + t);
    expect(readFileSync(join(crlf.dir, 'runs/run-0002.csv'), 'utf8').slice(0, 4)).toBe('\uFEFFt_s');
    expect(readFileSync(join(crlf.dir, 'runs/run-0002.csv'), 'utf8')).toContain('\r\n');
    const store = freshStore(dir);
    const a = await importSessionFolder(store, lf.dir);
    const b = await importSessionFolder(store, crlf.dir);
    expect(b.created).toBe(true);
    for (const i of lf.index) {
      for (const c of lf.setup.channels) expect(store.getSamples(b.sessionId, i.run, c.name)).toEqual(store.getSamples(a.sessionId, i.run, c.name));
    }
    store.close();
  });
});

describe('re-import', () => {
  it('the same files again: a no-op (database bytes unchanged)', async () => {
    const dir = tempDir();
    const f = miniFolder(join(dir, 's'));
    const store = freshStore(dir);
    await importSessionFolder(store, f.dir);
    const before = dbSnapshot(store);
    const rep = await importSessionFolder(store, f.dir);
    expect(rep.created).toBe(false);
    expect(rep.importedRuns).toEqual([]);
    expect(rep.changedFiles).toEqual([]);
    expect(rep.unchangedFiles).toEqual(['setup.json', 'runs.csv', ...f.index.map((i) => i.file!)]);
    expect(rep.skippedRuns).toEqual(f.index.map((i) => i.run));
    expect(dbSnapshot(store)).toBe(before);
    store.close();
  });

  it('a changed run file is reported and not merged', async () => {
    const dir = tempDir();
    const f = miniFolder(join(dir, 's'));
    const store = freshStore(dir);
    await importSessionFolder(store, f.dir);
    const old = store.getSamples(1, 3, 'DP_REF'); // the edited column (first after t_s)
    editFile(join(f.dir, 'runs/run-0003.csv'), (t) => {
      const lines = t.split('\n');
      lines[4] = lines[4].replace(/,[^,]+/, ',-123.5');
      return lines.join('\n');
    });
    const before = dbSnapshot(store);
    const rep = await importSessionFolder(store, f.dir);
    expect(rep.changedFiles).toEqual(['runs/run-0003.csv']);
    expect(rep.importedRuns).toEqual([]);
    expect(store.getSamples(1, 3, 'DP_REF')).toEqual(old);
    expect(old[3]).not.toBe(-123.5 * 1000);
    expect(dbSnapshot(store)).toBe(before);
    store.close();
  });

  it('a run file whose bytes changed but not its numbers (line endings) is not a change', async () => {
    const dir = tempDir();
    const f = miniFolder(join(dir, 's'));
    const store = freshStore(dir);
    await importSessionFolder(store, f.dir);
    editFile(join(f.dir, 'runs/run-0002.csv'), (t) => t.replace(/\n/g, '\r\n'));
    const rep = await importSessionFolder(store, f.dir);
    expect(rep.changedFiles).toEqual([]);
    expect(rep.importedRuns).toEqual([]);
    expect(rep.unchangedFiles).toContain('runs/run-0002.csv');
    store.close();
  });

  // Found by test/import-fuzz.test.ts (seeds 692876779 for a run log, -1792358101 for the index): the
  // third import tried to store the first bytes' source row a second time and failed on the UNIQUE
  // (session, name, sha256) key.
  it.each(['runs/run-0002.csv', 'runs.csv'])('%s back to bytes stored before (LF → CRLF → LF) re-imports cleanly', async (name) => {
    const dir = tempDir();
    const f = miniFolder(join(dir, 's'));
    const store = freshStore(dir);
    await importSessionFolder(store, f.dir);
    const path = join(f.dir, name);
    const lf = readFileSync(path, 'utf8');
    editFile(path, (t) => t.replace(/\n/g, '\r\n'));
    await importSessionFolder(store, f.dir);
    editFile(path, () => lf);
    const before = dbSnapshot(store);
    const rep = await importSessionFolder(store, f.dir);
    expect(rep.changedFiles).toEqual([]);
    expect(rep.importedRuns).toEqual([]);
    expect(rep.unchangedFiles).toContain(name);
    expect(dbSnapshot(store)).toBe(before);
    store.close();
  });

  it('live acquisition: an index that only grew imports the new runs', async () => {
    const dir = tempDir();
    const f = miniFolder(join(dir, 's'), { runs: { dataRuns: 2 } });
    const store = freshStore(dir);
    await importSessionFolder(store, f.dir);
    const more = miniRuns(f.setup, { dataRuns: 1, firstRun: 10, seed: 9, startTime: '2026-11-18T11:00:00Z' });
    for (const r of more.runs) appendRunToFolder(f.dir, f.setup, r);
    const rep = await importSessionFolder(store, f.dir, { actor: 'T. Lindqvist' });
    expect(rep.importedRuns).toEqual([10, 11, 12]);
    expect(rep.changedFiles).toEqual([]);
    expect(rep.unchangedFiles).not.toContain('runs.csv');
    expect(store.listRuns(1).map((r) => r.run)).toEqual([...f.index.map((i) => i.run), 10, 11, 12]);
    expect(store.getSession(1).runCount).toBe(f.index.length + 3);
    expect(store.auditTrail(1).map((a) => [a.action, a.actor, (a.detail as { runs: number[] }).runs.length])).toEqual([
      ['import', 'import', f.index.length],
      ['import', 'T. Lindqvist', 3],
    ]);
    // Same folder again: nothing more.
    expect((await importSessionFolder(store, f.dir)).importedRuns).toEqual([]);
    store.close();
  });

  it('an index whose earlier lines changed is refused whole', async () => {
    const dir = tempDir();
    const f = miniFolder(join(dir, 's'));
    const store = freshStore(dir);
    await importSessionFolder(store, f.dir);
    const more = miniRuns(f.setup, { dataRuns: 1, firstRun: 10 });
    appendRunToFolder(f.dir, f.setup, more.runs[0]);
    editFile(join(f.dir, 'runs.csv'), (t) => t.replace(',52,runs/run-0002.csv', ',53,runs/run-0002.csv'));
    const before = dbSnapshot(store);
    const rep = await importSessionFolder(store, f.dir);
    expect(rep.changedFiles).toEqual(['runs.csv']);
    expect(rep.importedRuns).toEqual([]);
    expect(dbSnapshot(store)).toBe(before);
    store.close();
  });

  it('a changed setup.json is refused', async () => {
    const dir = tempDir();
    const f = miniFolder(join(dir, 's'));
    const store = freshStore(dir);
    await importSessionFolder(store, f.dir);
    editFile(join(f.dir, 'setup.json'), (t) => t.replace('"qCalibration": 1.02', '"qCalibration": 1.03'));
    const rep = await importSessionFolder(store, f.dir);
    expect(rep.changedFiles).toEqual(['setup.json']);
    expect(rep.importedRuns).toEqual([]);
    expect(store.listSessions()).toHaveLength(1);
    store.close();
  });

  it('run logs stored before with the same bytes are only hashed, not parsed again (live mode stays cheap)', async () => {
    const dir = tempDir();
    const f = miniFolder(join(dir, 's'), { runs: { dataRuns: 2, samples: 8 } });
    // An extra column the setup does not map: parsing the file says so in the import's warnings.
    const file = f.index[1].file!;
    editFile(join(f.dir, file), (t) => t.split('\n').map((l, i) => (l === '' ? l : `${l},${i === 0 ? 'spare' : '7'}`)).join('\n'));
    const store = freshStore(dir);
    await importSessionFolder(store, f.dir);
    const warned = `${file}: column "spare" is not in the setup's channel map; ignored`;
    expect((store.auditTrail(1)[0].detail as { warnings: string[] }).warnings).toContain(warned);
    const more = miniRuns(f.setup, { dataRuns: 1, firstRun: 20, seed: 9 });
    appendRunToFolder(f.dir, f.setup, more.runs[1]);
    const rep = await importSessionFolder(store, f.dir);
    expect(rep.importedRuns).toEqual([more.runs[1].info.run]);
    expect(rep.unchangedFiles).toEqual(expect.arrayContaining(f.index.map((i) => i.file!)));
    // The second import did not parse the unchanged file: no warning about its column.
    const second = store.auditTrail(1)[1];
    expect(second.action).toBe('import');
    expect((second.detail as { warnings: string[] }).warnings).not.toContain(warned);
    // A stored file whose samples changed (same size) is read in full, compared and refused.
    const size = readFileSync(join(f.dir, file)).length;
    editFile(join(f.dir, file), (t) => {
      const lines = t.split('\n');
      const cells = lines[2].split(',');
      const last = cells[1].slice(-1);
      cells[1] = cells[1].slice(0, -1) + (last === '1' ? '2' : '1');
      lines[2] = cells.join(',');
      return lines.join('\n');
    });
    expect(readFileSync(join(f.dir, file)).length).toBe(size);
    const before = dbSnapshot(store);
    const rep2 = await importSessionFolder(store, f.dir);
    expect(rep2.importedRuns).toEqual([]);
    expect(rep2.changedFiles).toEqual([file]);
    expect(dbSnapshot(store)).toBe(before);
    store.close();
  });

  it('one long log with a run column: grows with new runs, refuses edited ones', async () => {
    const dir = tempDir();
    const f = miniFolder(join(dir, 's'), { runs: { dataRuns: 2, samples: 8 }, write: { singleFile: true } });
    expect(readFileSync(join(f.dir, 'runs.csv'), 'utf8')).toContain(',samples.csv\n');
    const store = freshStore(dir);
    const first = await importSessionFolder(store, f.dir);
    expect(first.importedRuns).toEqual(f.index.map((i) => i.run));
    expect(store.getRun(1, 2).file).toBe('samples.csv');
    // Acquisition appends run 9 to the long log, then its index line.
    const more = miniRuns(f.setup, { dataRuns: 1, firstRun: 9, seed: 3 }).runs[0];
    const rows = Array.from({ length: 8 }, (_, i) => [9, i / 100, ...f.setup.channels.map((c) => more.channels[c.name][i] / (c.unit === 'kPa' ? 1000 : c.unit === 'mbar' ? 100 : c.unit === 'inH2O' ? 249.08891 : 1))].join(','));
    appendFileSync(join(f.dir, 'samples.csv'), rows.join('\n') + '\n');
    const before = dbSnapshot(store);
    // Samples of run 9 before its index line: ignored with a warning, nothing stored.
    const early = await readSessionFolder(f.dir);
    expect(early.warnings).toContain('samples.csv: samples of run 9 ignored (not in runs.csv for this file)');
    expect(store.importParsed(early, 'x').importedRuns).toEqual([]);
    appendFileSync(join(f.dir, 'runs.csv'), indexLine({ ...more.info, run: 9 }, 'samples.csv') + '\n');
    const rep = await importSessionFolder(store, f.dir);
    expect(rep.importedRuns).toEqual([9]);
    expect(rep.changedFiles).toEqual([]);
    expect(dbSnapshot(store)).not.toBe(before);
    // Now edit a sample of run 2 inside the long log.
    editFile(join(f.dir, 'samples.csv'), (t) => t.replace(/\n2,0,[^,]+,/, '\n2,0,0.5,'));
    const again = dbSnapshot(store);
    const rep2 = await importSessionFolder(store, f.dir);
    expect(rep2.changedFiles).toEqual(['samples.csv']);
    expect(dbSnapshot(store)).toBe(again);
    store.close();
  });

  it('dropped files (no folder): the session is found by its setup file, re-import is a no-op', async () => {
    const dir = tempDir();
    const f = miniFolder(join(dir, 's'));
    const names = ['setup.json', 'runs.csv', ...f.index.map((i) => i.file!)];
    const files = names.map((name) => ({ name, text: readFileSync(join(f.dir, name), 'utf8') }));
    const store = freshStore(dir);
    const a = store.importParsed(parseSessionFiles(files), 'browser');
    expect(a.created).toBe(true);
    expect(store.getSession(a.sessionId).folder).toBeNull();
    const before = dbSnapshot(store);
    const b = store.importParsed(parseSessionFiles(files), 'browser');
    expect([b.sessionId, b.created, b.importedRuns]).toEqual([a.sessionId, false, []]);
    expect(dbSnapshot(store)).toBe(before);
    // The same bytes read from disk hash the same as the dropped texts.
    const disk = await readSessionFolder(f.dir);
    expect(parseSessionFiles(files).sources).toEqual(disk.sources.sort((x, y) => names.indexOf(x.name) - names.indexOf(y.name)));
    store.close();
  });
});
