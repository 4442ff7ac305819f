// One run log made ready for the store: its bytes hashed (SHA-256) and parsed as they stream in,
// then each run's channels averaged (app/samples.ts, at the session's spike threshold) and packed
// losslessly (main/sampleCodec.ts). The same code runs on an import worker thread
// (main/importWorker.ts) and, for small imports or sources that are not files on disk, on the
// calling thread (main/import.ts). Bad input throws the parser's LogError (file, line, channel).
import { createHash, type Hash } from 'node:crypto';
import type { ChannelStats, RawRun, RunInfo, Setup } from '../app/types';
import { averageRun } from '../app/samples';
import { channelToSI } from '../app/units';
import { collectRuns, runParserFor, type RunFilePlan } from '../app/log/session';
import type { RunParser } from '../app/log/runParser';
import type { BufferPool } from '../app/bufferPool';
import { PackedRun, packSamples, type ChannelPart } from './sampleCodec';

/** A run ready to be stored: packed samples (channels in setup order) and their statistics. */
export interface PreparedRun {
  info: RunInfo;
  /** Samples per channel. */
  n: number;
  /** Channel names, in the order of `parts`. */
  names: string[];
  parts: ChannelPart[];
  /** The packed bytes of every channel (parts[k].offset/length index into it). */
  bytes: Uint8Array;
  stats: Record<string, ChannelStats>;
}

/** A run log ready to be stored. */
export interface PreparedFile {
  name: string;
  sha256: string;
  bytes: number;
  runs: PreparedRun[];
  /** Parser notes (ignored columns, samples of runs the index does not place here). */
  warnings: string[];
}

/** Pack the channels of one parsed (or in-memory) run and average them (into a spare buffer if
 *  one is large enough). */
export function prepareRun(
  setup: Setup, info: RunInfo, channels: Record<string, Float64Array>, spikeK: number, spares?: BufferPool,
): PreparedRun {
  const { stats } = averageRun({ info, channels }, spikeK);
  const n = channels[setup.channels[0]?.name]?.length ?? 0;
  const capacity = Math.max(1024, setup.channels.length * n * 3 + 64);
  const packed = new PackedRun(capacity, spares?.take(capacity));
  const names: string[] = [];
  for (const c of setup.channels) {
    const a = channels[c.name];
    if (!a) throw new Error(`run ${info.run}: no samples of channel ${c.name}`);
    packSamples(packed, a, channelToSI(1, c.unit));
    names.push(c.name);
  }
  return { info, n, names, parts: packed.parts, bytes: packed.bytes.subarray(0, packed.length), stats };
}

/** Streaming reader of one run log: push() its chunks, then end(). */
export class RunFileReader {
  private readonly hash: Hash = createHash('sha256');
  private readonly parser: RunParser;
  private size = 0;

  constructor(
    private readonly plan: RunFilePlan,
    private readonly setup: Setup,
    private readonly infos: Map<number, RunInfo>,
    /** Spike threshold for end()'s statistics (endRaw() does not average). */
    private readonly spikeK: number,
    private readonly opts: {
      expectedBytes?: number;
      /** Sample buffers to reuse (end() gives them back; endRaw() hands them to the caller). */
      arena?: BufferPool;
      /** Buffers to pack runs into (the caller gives them back once the runs are stored). */
      spares?: BufferPool;
    } = {},
  ) {
    this.parser = runParserFor(plan, setup, { expectedBytes: opts.expectedBytes, arena: opts.arena });
  }

  get bytesRead(): number {
    return this.size;
  }

  push(chunk: Uint8Array): void {
    this.hash.update(chunk);
    this.parser.push(chunk);
    this.size += chunk.byteLength;
  }

  /** The file's runs as parsed (samples in SI units), its hash and the parser's notes. */
  endRaw(): { name: string; sha256: string; bytes: number; raws: RawRun[]; warnings: string[] } {
    const warnings: string[] = [];
    const raws = collectRuns(this.plan, this.parser.end(), this.infos, warnings);
    warnings.push(...this.parser.warnings);
    return { name: this.plan.file, sha256: this.hash.digest('hex'), bytes: this.size, raws, warnings };
  }

  /** The file's runs ready for the store (averaged and packed). */
  end(): PreparedFile {
    const { raws, ...rest } = this.endRaw();
    const { arena, spares } = this.opts;
    const runs = raws.map((r) => prepareRun(this.setup, r.info, r.channels, this.spikeK, spares));
    if (arena) for (const r of raws) for (const x of Object.values(r.channels)) arena.give(x.buffer);
    return { ...rest, runs };
  }
}
