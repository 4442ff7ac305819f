// setup.json (parseSetup), runs.csv (parseRunIndex) and the committed JSON Schema.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parseSetup } from '../app/log/setup';
import { parseRunIndex, parseRunIndexDetailed } from '../app/log/runIndex';
import { LogError } from '../app/log/errors';
import { lineOf, locateJsonPath } from '../app/log/jsonLocate';
import { SCHEMA_FILE, schemaText } from '../scripts/gen-schema';
import { miniSetup } from './helpers/mini-session';

const setupText = JSON.stringify(miniSetup(), null, 2);
const edited = (f: (s: any) => void) => {
  const s = JSON.parse(setupText);
  f(s);
  return JSON.stringify(s, null, 2);
};
function setupErr(text: string): LogError {
  try {
    parseSetup(text, 'setup.json');
  } catch (e) {
    expect(e).toBeInstanceOf(LogError);
    return e as LogError;
  }
  throw new Error('expected a LogError');
}
/** 1-based line of the first occurrence of `needle` after `after` (independent of jsonLocate). */
function lineOfText(text: string, needle: string, after = ''): number {
  const start = after ? text.indexOf(after) : 0;
  const at = text.indexOf(needle, start);
  expect(at).toBeGreaterThanOrEqual(0);
  return text.slice(0, at).split('\n').length;
}

describe('parseSetup: transducer groups', () => {
  const group = (over: Record<string, unknown> = {}) => ({
    id: 'MOD1', channels: ['S_CU01', 'S_CU02'], unit: 'Pa', fullScale: 2500, gainPercent: 0.05, zero: 2, linearityPercentFS: 0.03, ...over,
  });
  it('a valid group is accepted and kept', () => {
    const s = parseSetup(edited((x) => (x.transducerGroups = [group()])), 'setup.json');
    expect(s.transducerGroups).toEqual([group()]);
  });
  it('errors name the file, the line of the offending value and its key', () => {
    const unknown = edited((x) => (x.transducerGroups = [group({ channels: ['S_CU01', 'NOPE'] })]));
    const e1 = setupErr(unknown);
    expect(e1.message).toBe(`setup.json line ${lineOfText(unknown, '"NOPE"')}, field transducerGroups[0].channels[1]: transducer group "MOD1" names channel "NOPE", which is not in the channel map`);
    const twice = edited((x) => (x.transducerGroups = [group({ channels: ['S_CU01', 'S_CU02', 'S_CU01'] })]));
    expect(setupErr(twice).message).toMatch(/^setup\.json line \d+, field transducerGroups\[0\]\.channels\[2\]: transducer group "MOD1" names channel "S_CU01" twice$/);
    const two = edited((x) => (x.transducerGroups = [group(), group({ id: 'MOD2', channels: ['S_CU02'] })]));
    expect(setupErr(two).message).toMatch(/field transducerGroups\[1\]\.channels\[0\]: channel "S_CU02" is in transducer groups "MOD1" and "MOD2"/);
    const negative = edited((x) => (x.transducerGroups = [group({ gainPercent: -0.05 })]));
    const e2 = setupErr(negative);
    expect(e2.message).toMatch(/^setup\.json line (\d+), field transducerGroups\[0\]\.gainPercent: /);
    expect(e2.line).toBe(lineOfText(negative, '"gainPercent"'));
    const text = edited((x) => (x.transducerGroups = [group({ zero: 'two' })]));
    const e3 = setupErr(text);
    expect(e3.message).toMatch(/field transducerGroups\[0\]\.zero: /);
    expect(e3.line).toBe(lineOfText(text, '"zero"'));
    expect(setupErr(edited((x) => (x.transducerGroups = [group({ channels: ['P_STAT', 'DP_REF'] }), group({ id: 'MOD1', channels: ['S_CU01'] })]))).message)
      .toMatch(/transducer group id "MOD1" is used twice/);
  });
});

describe('parseSetup', () => {
  it('accepts the mini setup and returns it unchanged', () => {
    expect(parseSetup(setupText, 'setup.json')).toEqual(miniSetup());
    expect(parseSetup('\uFEFF' + setupText.replace(/\n/g, '\r\n'), 'setup.json')).toEqual(miniSetup());
  });

  it('unknown unit: the error names the channel and the line of the unit', () => {
    const text = edited((s) => (s.channels[4].unit = 'kpa'));
    const e = setupErr(text);
    const ch = miniSetup().channels[4].name;
    const line = lineOfText(text, '"unit": "kpa"');
    expect(e.message).toBe(`setup.json line ${line}, channel ${ch}: unknown unit "kpa"; expected one of Pa, kPa, hPa, mbar, psi, inH2O, mmH2O, mmHg, torr, deg`);
    expect([e.line, e.column]).toEqual([line, ch]);
  });

  it('a channel target that does not exist', () => {
    const text = edited((s) => (s.channels[3].target.id = 'Q99'));
    const ch = miniSetup().channels[3].name;
    expect(setupErr(text).message).toBe(`setup.json line ${lineOfText(text, '"Q99"')}, channel ${ch}: target tap "Q99" is not in the tap table`);
    const rake = edited((s) => (s.channels.find((c: any) => c.target.kind === 'rake').target.id = 'T77'));
    expect(setupErr(rake).message).toMatch(/channel R_T01: target rake probe "T77" is not in the rake probe table$/);
  });

  it('ids unique, channel names unique, one channel per point, references present', () => {
    expect(setupErr(edited((s) => (s.taps[1].id = s.taps[0].id))).message).toMatch(/^setup\.json line \d+, field taps\[1\]\.id: tap id "U01" is used twice$/);
    expect(setupErr(edited((s) => (s.channels[3].name = s.channels[2].name))).message).toMatch(/channel S_CU01: this channel name is used twice$/);
    expect(setupErr(edited((s) => (s.channels[3].target = { ...s.channels[2].target }))).message).toMatch(/channel S_CU02: measures the same point as channel S_CU01$/);
    expect(setupErr(edited((s) => (s.channels = s.channels.filter((c: any) => c.name !== 'W_F02')))).message).toMatch(/field floor\[1\]: floor tap F02 has no channel in the channel map$/);
    expect(setupErr(edited((s) => (s.channels = s.channels.filter((c: any) => c.name !== 'P_STAT')))).message).toMatch(/needs a reference channel "pStatic"/);
  });

  it('units must fit the target; reserved channel names', () => {
    expect(setupErr(edited((s) => (s.channels[0].unit = 'deg'))).message).toMatch(/channel DP_REF: a pressure channel needs a pressure unit, found "deg"$/);
    expect(setupErr(edited((s) => (s.channels[0].name = 't_s'))).message).toMatch(/channel t_s: channels\[0\]\.name: the names "t_s" and "run" are reserved/);
  });

  it('schema errors name the field and its line', () => {
    const text = edited((s) => (s.facility.sectionHeight = -0.9));
    const e = setupErr(text);
    expect(e.message).toMatch(/^setup\.json line (\d+), field facility\.sectionHeight: /);
    expect(e.line).toBe(lineOfText(text, '"sectionHeight"'));
    expect(setupErr(edited((s) => (s.formatVersion = 2))).message).toMatch(/field formatVersion:/);
    expect(setupErr(edited((s) => (s.extra = 1))).message).toMatch(/\(top level\)|extra/);
  });

  it('JSON syntax errors carry the line; an empty file is said to be empty', () => {
    const text = setupText.replace('"formatVersion": 1,', '"formatVersion": 1');
    const e = setupErr(text);
    expect(e.message).toMatch(/^setup\.json line 3: not valid JSON/);
    expect(setupErr('  \n').message).toBe('setup.json line 1: expected a JSON setup object, found an empty file');
  });

  it('jsonLocate finds nested values (checked against a plain text search)', () => {
    const off = locateJsonPath(setupText, ['channels', 5, 'unit'])!;
    const sixth = setupText.indexOf('"name": "S_CU04"');
    expect(lineOf(setupText, off)).toBe(lineOfText(setupText, '"unit"', setupText.slice(sixth, sixth + 20)));
  });
});

const INDEX_HEAD = 'run,kind,time,alpha_deg,baro,temp_C,rh_pct,file';
const idx = (lines: string[], head = INDEX_HEAD) => [head, ...lines].join('\n') + '\n';
const L1 = '1,zero,2026-11-18T09:00:00Z,0,101325,18.5,52,runs/run-0001.csv';
const L2 = '2,data,2026-11-18T09:02:00Z,4.0,101320,18.6,51,runs/run-0002.csv';
function indexErr(text: string): LogError {
  try {
    parseRunIndex(text, 'runs.csv');
  } catch (e) {
    expect(e).toBeInstanceOf(LogError);
    return e as LogError;
  }
  throw new Error('expected a LogError');
}

describe('parseRunIndex', () => {
  it('reads runs; BOM, CRLF, quoted file names', () => {
    const runs = parseRunIndex('\uFEFF' + idx([L1, L2.replace('runs/run-0002.csv', '"runs/run 2, b.csv"')]).replace(/\n/g, '\r\n'), 'runs.csv');
    expect(runs).toEqual([
      { run: 1, kind: 'zero', time: '2026-11-18T09:00:00Z', alphaDeg: 0, baro: 101325, temperatureC: 18.5, humidity: 52, file: 'runs/run-0001.csv' },
      { run: 2, kind: 'data', time: '2026-11-18T09:02:00Z', alphaDeg: 4, baro: 101320, temperatureC: 18.6, humidity: 51, file: 'runs/run 2, b.csv' },
    ]);
  });

  it('baro unit from the column name (baro_kPa, baro_hPa); empty file cell = long log', () => {
    // 1 kPa = 1000 Pa, 1 hPa = 100 Pa (SI prefixes, SI Brochure 9th ed., Table 7).
    const k = parseRunIndex(idx(['1,zero,2026-11-18T09:00:00Z,0,101.325,18.5,52,'], INDEX_HEAD.replace('baro', 'baro_kPa')), 'runs.csv');
    expect(k[0].baro).toBe(101325);
    expect(k[0].file).toBeUndefined();
    const h = parseRunIndex(idx(['1,zero,2026-11-18T09:00:00Z,0,1013.25,18.5,52,x.csv'], INDEX_HEAD.replace('baro', 'baro_hPa')), 'runs.csv');
    expect(h[0].baro).toBeCloseTo(101325, 9);
    expect(indexErr(idx([L1], INDEX_HEAD.replace('baro', 'baro_bar'))).message).toBe(
      'runs.csv line 1, column baro_bar: unknown pressure unit "bar" in the column name; use e.g. baro (Pa), baro_kPa or baro_hPa',
    );
  });

  it('duplicate run number names both lines', () => {
    const e = indexErr(idx([L1, L2, L2.replace('09:02', '09:04')]));
    expect(e.message).toBe('runs.csv line 4, column run: run 2 is listed twice (first on line 3)');
  });

  it('bad cells name line and column', () => {
    expect(indexErr(idx([L1, L2.replace(',data,', ',wind,')])).message).toBe('runs.csv line 3, column kind: expected "zero" (wind-off) or "data", found "wind"');
    expect(indexErr(idx([L1.replace('2026-11-18T09:00:00Z', '18/11/2026 09:00')])).message).toMatch(/^runs\.csv line 2, column time: expected an ISO 8601 start time/);
    expect(indexErr(idx([L2.replace('4.0', 'NaN')])).message).toBe('runs.csv line 2, column alpha_deg: expected a finite number, found "NaN"');
    expect(indexErr(idx([L2.replace('101320', '101.3')])).message).toMatch(/^runs\.csv line 2, column baro: barometric pressure 101\.3 Pa is outside 30–120 kPa; is the unit right\?/);
    expect(indexErr(idx([L2.replace(',51,', ',151,')])).message).toMatch(/column rh_pct: expected a relative humidity/);
    expect(indexErr(idx([L2.replace('runs/run-0002.csv', '../etc/passwd')])).message).toMatch(/column file: the file name "\.\.\/etc\/passwd" is a path leaving the session folder/);
    expect(indexErr(idx([L2.split(',').slice(0, 5).join(',')])).message).toBe('runs.csv line 2, column temp_C: the line has 5 of 8 cells (truncated line?)');
  });

  it('header problems: missing column, wrong delimiter, empty file; unknown columns warned', () => {
    expect(indexErr(idx([L1], INDEX_HEAD.replace(',temp_C', ''))).message).toMatch(/^runs\.csv line 1, column temp_C: the header lacks this column/);
    expect(indexErr(idx([L1]).replace(/,/g, ';')).message).toMatch(/^runs\.csv line 1: the columns are separated by semicolons/);
    expect(indexErr('').message).toBe('runs.csv line 1: expected a header line "run,kind,time,alpha_deg,baro,temp_C,rh_pct,file", found an empty file');
    const r = parseRunIndexDetailed(idx([L1 + ',Okonkwo'], INDEX_HEAD + ',operator'), 'runs.csv');
    expect(r.warnings).toEqual(['runs.csv: column "operator" is not an index column; ignored']);
    expect(r.lines).toEqual([2]);
  });
});

describe('docs/setup.schema.json', () => {
  it('is the schema generated from the zod schema (run: npx tsx scripts/gen-schema.ts)', () => {
    expect(readFileSync(SCHEMA_FILE, 'utf8')).toBe(schemaText());
  });
  it('describes the fields of the Setup type', () => {
    const s = JSON.parse(schemaText());
    expect(s.$schema).toBe('https://json-schema.org/draft/2020-12/schema');
    expect(Object.keys(s.properties).sort()).toEqual([...Object.keys(miniSetup()), 'transducerGroups'].sort());
    expect(s.required).toEqual(['formatVersion', 'session', 'facility', 'model', 'taps', 'rake', 'floor', 'ceiling', 'channels']);
  });
});
