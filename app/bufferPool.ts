// A bounded free list of used buffers, handed out again first fit (common practice, no source). A
// reader of many run logs otherwise allocates megabytes per file that the garbage collector and the
// kernel must clear again: the run-log parser takes its sample columns from one
// (app/log/runParser.ts, option `arena`), and the import packs runs into buffers handed back to
// another once stored (main/runFile.ts prepareRun). Pure module.

/**
 * The byte size to allocate for a buffer of at least `bytes` bytes: the next of 4 KiB·2^k·(1 + j/8),
 * j = 0…7 (at most 12.5 % more). Buffers allocated in these size classes fit the next file's
 * columns when its length differs by a few samples; exact sizes (every run log's own length) would
 * each need fresh buffers while the pool filled up with ones a few bytes too small (measured on the
 * 300-run import: peak RSS grew steadily by ~70 MiB a thread). Common practice (size-class
 * allocators), no source.
 */
export function sizeClass(bytes: number): number {
  if (bytes <= 4096) return 4096;
  const top = 2 ** Math.floor(Math.log2(bytes));
  const step = top / 8;
  return Math.min(top * 2, Math.ceil(bytes / step) * step);
}

export class BufferPool {
  private readonly free: ArrayBuffer[] = [];
  private bytes = 0;
  /** Keep at most `max` buffers and `maxBytes` bytes in all. */
  constructor(private readonly max = 4096, private readonly maxBytes = 64 * 1024 * 1024) {}

  /** Keep `b` for a later take() (the caller no longer uses it). */
  give(b: ArrayBufferLike): void {
    if (this.free.length < this.max && b.byteLength > 0 && this.bytes + b.byteLength <= this.maxBytes) {
      this.free.push(b as ArrayBuffer);
      this.bytes += b.byteLength;
    }
  }

  /** Bytes kept. */
  get keptBytes(): number {
    return this.bytes;
  }

  /** A kept buffer of at least `bytes` bytes (its contents are stale), or null. */
  take(bytes: number): ArrayBuffer | null {
    const free = this.free;
    for (let k = free.length - 1; k >= 0; k--) {
      const b = free[k];
      if (b.byteLength >= bytes) {
        free[k] = free[free.length - 1];
        free.pop();
        this.bytes -= b.byteLength;
        return b;
      }
    }
    return null;
  }
}
