// Reading setup.json: JSON syntax, the zod schema (app/log/schema.ts), then cross-checks the
// schema cannot express (unique ids, every channel target exists, each measuring point has one
// channel, references present, units fit the target). Every error is a LogError naming the file,
// the line of the offending value and, inside the channel map, the channel.
// Pure module (runs in a browser worker).
import type { Channel, Setup } from '../types';
import { LogError, shown } from './errors';
import { formatJsonPath, lineOf, locateJsonPath, type JsonPath } from './jsonLocate';
import { CHANNEL_UNITS, setupSchema } from './schema';

const JSON_POS = /position (\d+)/;
const JSON_LINE = /line (\d+) column (\d+)/;

function fail(text: string, file: string, path: JsonPath, reason: string, channel?: string): never {
  const off = locateJsonPath(text, path);
  throw new LogError({
    file,
    line: off === undefined ? undefined : lineOf(text, off),
    column: channel ?? formatJsonPath(path),
    columnKind: channel !== undefined ? 'channel' : 'field',
    reason,
  });
}

export function parseSetup(text: string, file: string): Setup {
  const body = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
  if (body.trim() === '') throw new LogError({ file, line: 1, expected: 'a JSON setup object', found: 'an empty file' });
  let raw: unknown;
  try {
    raw = JSON.parse(body);
  } catch (e) {
    const msg = (e as Error).message;
    const lc = JSON_LINE.exec(msg);
    const pos = JSON_POS.exec(msg);
    const line = lc ? Number(lc[1]) : pos ? lineOf(body, Number(pos[1])) : undefined;
    throw new LogError({ file, line, reason: `not valid JSON (${msg})` });
  }
  const r = setupSchema.safeParse(raw);
  if (!r.success) {
    const issue = r.error.issues[0];
    const path = issue.path as (string | number)[];
    const more = r.error.issues.length > 1 ? ` (and ${r.error.issues.length - 1} more problem${r.error.issues.length > 2 ? 's' : ''})` : '';
    // Inside the channel map, name the channel.
    let channel: string | undefined;
    if (path[0] === 'channels' && typeof path[1] === 'number') {
      const ch = (raw as { channels?: { name?: unknown }[] }).channels?.[path[1]];
      if (ch && typeof ch.name === 'string') channel = ch.name;
    }
    let reason = `${formatJsonPath(path)}: ${issue.message}`;
    if (path[0] === 'channels' && path[2] === 'unit') {
      const got = (raw as { channels: { unit?: unknown }[] }).channels[path[1] as number]?.unit;
      reason = `unknown unit ${shown(String(got))}; expected one of ${CHANNEL_UNITS.join(', ')}`;
    }
    fail(body, file, path, reason + more, channel);
  }
  const setup = r.data as Setup;
  crossCheck(setup, body, file);
  return setup;
}

function crossCheck(s: Setup, text: string, file: string): void {
  const unique = (list: { id: string }[], key: string, what: string) => {
    const seen = new Set<string>();
    list.forEach((t, i) => {
      if (seen.has(t.id)) fail(text, file, [key, i, 'id'], `${what} id ${shown(t.id)} is used twice`);
      seen.add(t.id);
    });
  };
  unique(s.taps, 'taps', 'tap');
  unique(s.floor, 'floor', 'floor tap');
  unique(s.ceiling, 'ceiling', 'ceiling tap');
  if (s.rake.probes.length > 0) {
    const seen = new Set<string>();
    s.rake.probes.forEach((p, i) => {
      if (seen.has(p.id)) fail(text, file, ['rake', 'probes', i, 'id'], `rake probe id ${shown(p.id)} is used twice`);
      seen.add(p.id);
    });
  }
  if (s.model.geometry.kind === 'coordinates' && s.model.geometry.x.length !== s.model.geometry.y.length) {
    fail(text, file, ['model', 'geometry', 'y'], `geometry has ${s.model.geometry.x.length} x values but ${s.model.geometry.y.length} y values`);
  }

  const tapIds = new Set(s.taps.map((t) => t.id));
  const probes = new Map(s.rake.probes.map((p) => [p.id, p]));
  const floorIds = new Set(s.floor.map((t) => t.id));
  const ceilIds = new Set(s.ceiling.map((t) => t.id));
  const names = new Set<string>();
  const targets = new Map<string, string>(); // target key → channel name
  s.channels.forEach((c: Channel, i) => {
    if (names.has(c.name)) fail(text, file, ['channels', i, 'name'], 'this channel name is used twice', c.name);
    names.add(c.name);
    const t = c.target;
    let key: string;
    let angle = false;
    switch (t.kind) {
      case 'tap':
        if (!tapIds.has(t.id)) fail(text, file, ['channels', i, 'target', 'id'], `target tap ${shown(t.id)} is not in the tap table`, c.name);
        key = `tap:${t.id}`;
        break;
      case 'rake': {
        const p = probes.get(t.id);
        if (!p) fail(text, file, ['channels', i, 'target', 'id'], `target rake probe ${shown(t.id)} is not in the rake probe table`, c.name);
        angle = p.kind === 'angle';
        key = `rake:${t.id}`;
        break;
      }
      case 'floor':
        if (!floorIds.has(t.id)) fail(text, file, ['channels', i, 'target', 'id'], `target floor tap ${shown(t.id)} is not in the floor tap table`, c.name);
        key = `floor:${t.id}`;
        break;
      case 'ceiling':
        if (!ceilIds.has(t.id)) fail(text, file, ['channels', i, 'target', 'id'], `target ceiling tap ${shown(t.id)} is not in the ceiling tap table`, c.name);
        key = `ceiling:${t.id}`;
        break;
      case 'reference':
        key = `ref:${t.ref}`;
        break;
    }
    const prev = targets.get(key);
    if (prev !== undefined) fail(text, file, ['channels', i, 'target'], `measures the same point as channel ${prev}`, c.name);
    targets.set(key, c.name);
    if (angle && c.unit !== 'deg') fail(text, file, ['channels', i, 'unit'], `a flow-angle probe needs unit "deg", found ${shown(c.unit)}`, c.name);
    if (!angle && c.unit === 'deg') fail(text, file, ['channels', i, 'unit'], 'a pressure channel needs a pressure unit, found "deg"', c.name);
  });
  const needs: [string, JsonPath, string][] = [
    ...s.taps.map((t, i): [string, JsonPath, string] => [`tap:${t.id}`, ['taps', i], `tap ${t.id}`]),
    ...s.rake.probes.map((p, i): [string, JsonPath, string] => [`rake:${p.id}`, ['rake', 'probes', i], `rake probe ${p.id}`]),
    ...s.floor.map((t, i): [string, JsonPath, string] => [`floor:${t.id}`, ['floor', i], `floor tap ${t.id}`]),
    ...s.ceiling.map((t, i): [string, JsonPath, string] => [`ceiling:${t.id}`, ['ceiling', i], `ceiling tap ${t.id}`]),
  ];
  for (const [key, path, what] of needs) {
    if (!targets.has(key)) fail(text, file, path, `${what} has no channel in the channel map`);
  }
  for (const ref of ['dpRef', 'pStatic'] as const) {
    if (!targets.has(`ref:${ref}`)) {
      fail(text, file, ['channels'], `the channel map needs a reference channel "${ref}" (target {"kind":"reference","ref":"${ref}"})`);
    }
  }
  checkGroups(s, text, file);
  const bad = s.settings?.badTaps ?? [];
  bad.forEach((b, i) => {
    if (!tapIds.has(b)) fail(text, file, ['settings', 'badTaps', i], `bad tap ${shown(b)} is not in the tap table`);
  });
}

/** Transducer groups: every channel named exists, is a pressure channel and sits in one group
 *  only; group ids are unique. */
function checkGroups(s: Setup, text: string, file: string): void {
  const groups = s.transducerGroups ?? [];
  const units = new Map(s.channels.map((c) => [c.name, c.unit]));
  const ids = new Set<string>();
  const owner = new Map<string, string>();
  groups.forEach((g, i) => {
    if (ids.has(g.id)) fail(text, file, ['transducerGroups', i, 'id'], `transducer group id ${shown(g.id)} is used twice`);
    ids.add(g.id);
    g.channels.forEach((name, j) => {
      const at: JsonPath = ['transducerGroups', i, 'channels', j];
      const unit = units.get(name);
      if (unit === undefined) fail(text, file, at, `transducer group ${shown(g.id)} names channel ${shown(name)}, which is not in the channel map`);
      if (unit === 'deg') fail(text, file, at, `transducer group ${shown(g.id)} names the flow-angle channel ${shown(name)}; groups hold pressure channels`);
      const prev = owner.get(name);
      if (prev !== undefined) {
        fail(text, file, at, prev === g.id
          ? `transducer group ${shown(g.id)} names channel ${shown(name)} twice`
          : `channel ${shown(name)} is in transducer groups ${shown(prev)} and ${shown(g.id)}; a channel sits on one transducer`);
      }
      owner.set(name, g.id);
    });
  });
}
