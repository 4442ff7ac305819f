// A bounded free list of used buffers, handed out again first fit (common practice, no source). A
// reader of many run logs otherwise allocates megabytes per file that the garbage collector and the
// kernel must clear again: the run-log parser takes its sample columns from one
// (app/log/runParser.ts, option `arena`), and the import packs runs into buffers handed back to
// another once stored (main/runFile.ts prepareRun). Pure module.

export class BufferPool {
  private readonly free: ArrayBuffer[] = [];
  /** Keep at most `max` buffers. */
  constructor(private readonly max = 4096) {}

  /** Keep `b` for a later take() (the caller no longer uses it). */
  give(b: ArrayBufferLike): void {
    if (this.free.length < this.max && b.byteLength > 0) this.free.push(b as ArrayBuffer);
  }

  /** A kept buffer of at least `bytes` bytes (its contents are stale), or null. */
  take(bytes: number): ArrayBuffer | null {
    const free = this.free;
    for (let k = free.length - 1; k >= 0; k--) {
      const b = free[k];
      if (b.byteLength >= bytes) {
        free[k] = free[free.length - 1];
        free.pop();
        return b;
      }
    }
    return null;
  }
}
