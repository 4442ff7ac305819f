// Random bytes in place of each file of a session (fast-check): reading never crashes or hangs;
// every outcome is a parsed session (which then stores cleanly) or a LogError naming a file.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, expect, it } from 'vitest';
import fc from 'fast-check';
import { readSessionFolder, type SessionSource } from '../main/import';
import { Store } from '../main/store';
import { LogError } from '../app/log/errors';
import { cleanupTempDirs, miniFolder, tempDir } from './helpers/store-fixtures';

afterAll(() => cleanupTempDirs());

function memorySource(files: Map<string, Uint8Array>, chunk: number): SessionSource {
  return {
    folder: null,
    size: async (name) => files.get(name)?.byteLength ?? null,
    open: (name) =>
      (async function* () {
        const b = files.get(name)!;
        for (let i = 0; i < b.length; i += chunk) yield b.subarray(i, i + chunk);
      })(),
  };
}

it('random bytes in any file: a session or a LogError, never anything else', async () => {
  const dir = tempDir();
  const f = miniFolder(join(dir, 's'), { setup: { taps: 2, rakeProbes: 1, wallTaps: 1 }, runs: { dataRuns: 1, samples: 3 } });
  const names = ['setup.json', 'runs.csv', ...f.index.map((i) => i.file!)];
  const good = new Map(names.map((n) => [n, new Uint8Array(readFileSync(join(f.dir, n)))]));
  const store = Store.open(join(dir, 'db.sqlite'));
  const enc = new TextEncoder();
  // Mutations: pure random bytes, CSV-looking noise, a real file with bytes flipped/cut, or the
  // real file unchanged.
  const noise = fc.array(fc.constantFrom(...'0123456789.,-+eE \r\n\t;"xN{}[]:'.split('')), { maxLength: 300 }).map((a) => enc.encode(a.join('')));
  const mutateReal = (b: Uint8Array) =>
    fc.tuple(fc.integer({ min: 0, max: b.length }), fc.array(fc.tuple(fc.nat(), fc.integer({ min: 0, max: 255 })), { maxLength: 5 })).map(([cut, flips]) => {
      const c = b.slice(0, cut);
      for (const [at, v] of flips) if (c.length) c[at % c.length] = v;
      return c;
    });
  let parsedOk = 0;
  let logErrors = 0;
  await fc.assert(
    fc.asyncProperty(
      fc.constantFrom(...names).chain((target) =>
        fc.tuple(fc.constant(target), fc.oneof(fc.uint8Array({ maxLength: 3000 }), noise, mutateReal(good.get(target)!), fc.constant(good.get(target)!)), fc.integer({ min: 1, max: 500 })),
      ),
      async ([target, bytes, chunk]) => {
        const files = new Map(good);
        files.set(target, bytes);
        try {
          const parsed = await readSessionFolder('(memory)', undefined, { source: memorySource(files, chunk) });
          parsedOk++;
          const rep = store.importParsed(parsed, 'fuzz');
          expect(rep.sessionId).toBeGreaterThan(0);
        } catch (e) {
          if (!(e instanceof LogError)) throw e;
          logErrors++;
          expect(names).toContain(e.file);
        }
      },
    ),
    // A fixed seed keeps the run reproducible; the unmodified file as one arm makes sure both
    // outcomes (parsed and refused) are exercised on every run, not only by chance.
    { numRuns: 600, seed: 20261202 },
  );
  expect(logErrors).toBeGreaterThan(0);
  expect(parsedOk).toBeGreaterThan(0);
  store.close();
}, 60_000);
