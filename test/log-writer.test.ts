// main/logwriter.ts: what it writes reads back through the parser (units, digits, layouts).
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, expect, it } from 'vitest';
import { readSessionFolder } from '../main/import';
import { indexLine, writeSessionFolder } from '../main/logwriter';
import { cleanupTempDirs, tempDir } from './helpers/store-fixtures';
import { miniRuns, miniSetup } from './helpers/mini-session';

afterAll(() => cleanupTempDirs());

it('writes each channel in its unit, baro in the unit asked for, and reads back', async () => {
  const dir = tempDir();
  const setup = miniSetup();
  const { index, runs } = miniRuns(setup, { dataRuns: 1, samples: 5 });
  writeSessionFolder(dir, setup, index, runs, { digits: 6, baroUnit: 'kPa', eol: '\r\n', sampleRateHz: 50 });
  const idx = readFileSync(join(dir, 'runs.csv'), 'utf8');
  expect(idx.split('\r\n')[0]).toBe('run,kind,time,alpha_deg,baro_kPa,temp_C,rh_pct,file');
  expect(idx.split('\r\n')[1]).toBe('1,zero,2026-11-18T09:00:00Z,0,101.2,18.5,52,runs/run-0001.csv');
  const log = readFileSync(join(dir, 'runs/run-0002.csv'), 'utf8').split('\r\n');
  const head = log[0].split(',');
  const row = log[2].split(',');
  expect(row[0]).toBe('0.02'); // 50 Hz
  // DP_REF is a kPa channel: the text is the Pa value / 1000 to 6 significant digits.
  const dp = runs[1].channels.DP_REF[1];
  expect(row[head.indexOf('DP_REF')]).toBe(String(Number((dp / 1000).toPrecision(6))));
  const parsed = await readSessionFolder(dir);
  expect(parsed.index.map((i) => i.baro)).toEqual(index.map((i) => i.baro));
  parsed.runs[1].channels.W_K01.forEach((v, i) => expect(Math.abs(v - runs[1].channels.W_K01[i])).toBeLessThan(1e-5 * Math.abs(v) + 1e-9));
});

it('quotes file names that need it', () => {
  const info = { run: 4, kind: 'data' as const, time: '2026-11-18T10:00:00Z', alphaDeg: 2, baro: 101300, temperatureC: 18, humidity: 50 };
  expect(indexLine(info, 'runs/run 4, repeat.csv')).toBe('4,data,2026-11-18T10:00:00Z,2,101300,18,50,"runs/run 4, repeat.csv"');
});
