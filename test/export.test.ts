// Result exports: the CSV (read back with csv-parse) and the JSON document (from a real store).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parse } from 'csv-parse/sync';
import { csvText, exportResultsCsv, exportResultsJson, RESULT_CSV_COLUMNS } from '../main/export';
import { fixtureRuns, fixtureSetup, LIFT_FLAG } from './helpers/sheetFixture';
import { makeTinySession } from './helpers/cliSession';
import { Store } from '../main/store';
import { importSessionFolder } from '../main/import';
import { reduceStoredSession } from '../main/reduceService';

const records = (csv: string) => parse(csv, { columns: true, skip_empty_lines: true }) as Record<string, string>[];

describe('results CSV', () => {
  it('has one row per run, units in the header names, and reads back to the stored values', () => {
    const runs = fixtureRuns();
    const csv = exportResultsCsv(runs, fixtureSetup());
    const header = csv.split('\r\n')[0].split(',');
    expect(header).toEqual([...RESULT_CSV_COLUMNS]);
    for (const name of ['alpha_geom_deg', 'alpha_corr_deg', 'q_Pa', 'V_m_s', 'gamma_pressure_m2_s', 'gamma_momentum_m2_s', 'gamma_wall_m2_s']) {
      expect(header).toContain(name);
    }
    const rows = records(csv);
    expect(rows.map((r) => Number(r.run))).toEqual([1, 2, 3, 4]);
    const r4 = rows[3];
    const src = runs[3].result!;
    expect(Number(r4.cl_pressure)).toBe(src.cl);
    expect(Number(r4.cl_momentum)).toBe(src.clMom);
    expect(Number(r4.cl_wall)).toBe(src.clWall);
    expect(Number(r4.cd_wake)).toBe(src.cd);
    expect(Number(r4.cm_c4)).toBe(src.cmc4);
    expect(Number(r4.q_Pa)).toBe(src.q);
    expect(Number(r4.alpha_corr_deg)).toBe(src.alphaCorrDeg);
    expect(Number(r4.gamma_pressure_m2_s)).toBeCloseTo(src.gammaPressure, 6);
    expect(r4.flag_codes).toBe('lift-mismatch');
    expect(r4.flags).toMatch(/^hold: /);
    expect(r4.flags).toContain(LIFT_FLAG.reason);
    expect(r4.review).toContain('rejected by T. Lindqvist');
    // the zero run: kind given, coefficients empty (not 0)
    expect(rows[0].kind).toBe('zero');
    expect(rows[0].cl_pressure).toBe('');
    expect(rows[0].q_Pa).toBe('');
    // a run without flags has empty flag cells
    expect(rows[1].flag_codes).toBe('');
  });

  it('quotes commas, quotes and newlines, and defuses spreadsheet formulas in text cells', () => {
    const runs = fixtureRuns();
    runs[3].review!.comment = 'tufts, "stall" cell\nsecond line';
    runs[2].result!.flags = [{ code: 'unsteady', severity: 'warn', reason: '=HYPERLINK("x")' }];
    const rows = records(exportResultsCsv(runs, fixtureSetup()));
    expect(rows).toHaveLength(4);
    expect(rows[3].review).toContain('tufts, "stall" cell\nsecond line');
    expect(rows[2].flags.startsWith('=')).toBe(false);
    expect(csvText('=1+1')).toBe("'=1+1");
    expect(csvText('a,b')).toBe('"a,b"');
    expect(csvText('plain')).toBe('plain');
  });
});

describe('results JSON (real store)', () => {
  let dir: string;
  let store: Store;
  let sessionId: number;
  beforeAll(async () => {
    dir = mkdtempSync(join(tmpdir(), 'rakeline-export-'));
    const folder = makeTinySession(join(dir, 'session'));
    store = Store.open(join(dir, 'db.sqlite'));
    sessionId = (await importSessionFolder(store, folder, { actor: 'test' })).sessionId;
    reduceStoredSession(store, sessionId, { actor: 'test' });
    const tap = store.getSetup(sessionId).taps[3].id;
    store.setTapBad(sessionId, tap, true, 'test', 'pinched tube');
  });
  afterAll(() => {
    store?.close();
    rmSync(dir, { recursive: true, force: true });
  });

  it('holds the session, setup, settings, every run with its latest full result, and the audit trail', () => {
    const doc = JSON.parse(exportResultsJson(store, sessionId));
    expect(doc.session.id).toBe(sessionId);
    expect(doc.setup.model.name).toBe(store.getSetup(sessionId).model.name);
    expect(doc.settings.badTaps).toEqual(store.getSettings(sessionId).badTaps);
    const rows = store.listRuns(sessionId);
    expect(doc.runs.map((r: { run: number }) => r.run)).toEqual(rows.map((r) => r.run));
    const data = doc.runs.filter((r: { kind: string }) => r.kind === 'data');
    expect(data.length).toBeGreaterThan(0);
    for (const r of data) {
      const latest = store.latestResult(sessionId, r.run)!;
      expect(r.result.run).toBe(r.run);
      expect(r.result.corrected.cl).toBe(latest.corrected.cl);
      expect(Array.isArray(r.result.taps)).toBe(true);
    }
    for (const r of doc.runs.filter((x: { kind: string }) => x.kind === 'zero')) expect(r.result).toBeNull();
    const actions = doc.audit.map((a: { action: string }) => a.action);
    expect(actions.length).toBe(store.auditTrail(sessionId).length);
    expect(JSON.stringify(doc.audit)).toContain('pinched tube');
  });
});
