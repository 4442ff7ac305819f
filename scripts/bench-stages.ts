// `npm run bench -- --stages [--runs 100] [--files N]`: where the time of an import goes, stage by
// stage, on one thread (no worker threads, no store): each run log of the bench session is read
// in 1 MiB chunks, then each stage is timed on its own over all files — SHA-256, the run-log
// scanner (bytes → SI doubles), the channel statistics (app/samples.ts channelStats at the
// session's spike threshold) and the packing (main/sampleCodec.ts) — plus the fused reader
// (main/runFile.ts RunFileReader: hash, scan, statistics and packing as the import threads run
// them). Each figure is CPU time (process.cpuUsage; the wall time of a stage stretches with the
// other jobs on shared cores), the second of two passes (the first lets the JIT compile). Figures
// printed, never asserted.
import { closeSync, openSync, readdirSync, readFileSync, readSync, statSync } from 'node:fs';
import { createHash } from 'node:crypto';
import { loadavg } from 'node:os';
import { join } from 'node:path';
import { createRunParser, type RunChannels } from '../app/log/runParser';
import { parseSetup } from '../app/log/setup';
import { parseRunIndex } from '../app/log/runIndex';
import { planRunFiles } from '../app/log/session';
import { averageRun } from '../app/samples';
import { channelToSI } from '../app/units';
import { BufferPool } from '../app/bufferPool';
import { PackedRun, packSamples } from '../main/sampleCodec';
import { RunFileReader } from '../main/runFile';

/** CPU time of this process, ms (one thread here): other jobs on the shared cores stretch the
 *  wall time of a stage, much less its CPU time. */
const cpuMs = () => {
  const u = process.cpuUsage();
  return (u.user + u.system) / 1000;
};
const load = () => loadavg().map((v) => v.toFixed(2)).join(' ');
const CHUNK = 1 << 20;

export function benchStages(folder: string, maxFiles: number): void {
  const setup = parseSetup(readFileSync(join(folder, 'setup.json'), 'utf8'), 'setup.json');
  const index = parseRunIndex(readFileSync(join(folder, 'runs.csv'), 'utf8'), 'runs.csv');
  const plans = planRunFiles(index).filter((p) => !p.long).slice(0, maxFiles);
  const infos = new Map(index.map((i) => [i.run, i]));
  const paths = plans.map((p) => join(folder, p.file));
  const bytes = paths.reduce((s, p) => s + statSync(p).size, 0);
  const spikeK = 5;
  const arena = new BufferPool();
  const chunk = new Uint8Array(CHUNK);
  const chunksOf = (p: string): Uint8Array[] => {
    const out: Uint8Array[] = [];
    const fd = openSync(p, 'r');
    try {
      for (;;) {
        const n = readSync(fd, chunk, 0, CHUNK, null);
        if (n === 0) break;
        out.push(chunk.slice(0, n));
      }
    } finally {
      closeSync(fd);
    }
    return out;
  };
  const ms = { read: 0, hash: 0, scan: 0, stats: 0, pack: 0, fused: 0 };
  for (let pass = 0; pass < 2; pass++) {
    for (const k of Object.keys(ms) as (keyof typeof ms)[]) ms[k] = 0;
    for (let f = 0; f < paths.length; f++) {
      let t0 = cpuMs();
      const chunks = chunksOf(paths[f]);
      ms.read += cpuMs() - t0;
      t0 = cpuMs();
      const h = createHash('sha256');
      for (const c of chunks) h.update(c);
      h.digest();
      ms.hash += cpuMs() - t0;
      t0 = cpuMs();
      const parser = createRunParser(plans[f].file, setup, { runColumn: false, expectedBytes: statSync(paths[f]).size, arena });
      for (const c of chunks) parser.push(c);
      const channels = parser.end() as RunChannels;
      ms.scan += cpuMs() - t0;
      const info = infos.get(plans[f].runs[0])!;
      t0 = cpuMs();
      averageRun({ info, channels }, spikeK);
      ms.stats += cpuMs() - t0;
      t0 = cpuMs();
      const n = channels[setup.channels[0].name].length;
      const packed = new PackedRun(setup.channels.length * n * 3 + 64);
      for (const c of setup.channels) packSamples(packed, channels[c.name], channelToSI(1, c.unit));
      ms.pack += cpuMs() - t0;
      for (const x of Object.values(channels)) arena.give(x.buffer);
      t0 = cpuMs();
      const reader = new RunFileReader(plans[f], setup, infos, spikeK, { expectedBytes: statSync(paths[f]).size, arena });
      for (const c of chunks) reader.push(c);
      reader.end();
      ms.fused += cpuMs() - t0;
    }
  }
  const mb = bytes / 1e6;
  const row = (label: string, t: number) =>
    console.log(`${label.padEnd(40)} ${(t / 1000).toFixed(2).padStart(6)} s  ${(mb / (t / 1000)).toFixed(0).padStart(6)} MB/s`);
  console.log(`import stages, one thread, CPU time, ${paths.length} run logs (${mb.toFixed(0)} MB) of ${folder} (load ${load()})`);
  row('read (1 MiB chunks, page cache)', ms.read);
  row('SHA-256', ms.hash);
  row('scan (bytes → SI doubles)', ms.scan);
  row('statistics (median, MAD, spikes, mean)', ms.stats);
  row('pack (lossless codec)', ms.pack);
  const sum = ms.hash + ms.scan + ms.stats + ms.pack;
  row('sum of the four stages', sum);
  row('RunFileReader (as an import thread)', ms.fused);
  console.log(`(load ${load()})`);
}

if (process.argv[1]?.endsWith('bench-stages.ts')) {
  const argv = process.argv.slice(2);
  const opt = (n: string) => (argv.includes(n) ? argv[argv.indexOf(n) + 1] : undefined);
  const runs = Number(opt('--runs') ?? 100);
  const folder = opt('--folder') ?? join('.bench', `session-${runs}r-96t-64p-40w-2000s-d6`);
  benchStages(folder, Number(opt('--files') ?? 1e9));
  void readdirSync;
}
