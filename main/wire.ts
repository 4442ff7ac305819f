// JSON encoding of contract messages for the browser-mode bridge (HTTP + SSE). Plain JSON loses
// what Electron's structured clone keeps: NaN/±Infinity (a wake-less run has cd = NaN) become
// null and typed arrays become index-keyed objects. This codec keeps non-finite numbers as a tagged
// object and turns typed arrays into plain arrays. Pure module: used by main/serve.ts and by
// renderer/bridge.ts.

/** The envelope every call answers with, over IPC and HTTP alike. */
import type { ContractError } from './contract';

export type Envelope<T = unknown> = { result: T } | { error: ContractError };

const TAG = '~num';

function replacer(this: unknown, _key: string, value: unknown): unknown {
  if (typeof value === 'number') {
    if (Number.isFinite(value)) return value;
    return { [TAG]: Number.isNaN(value) ? 'NaN' : value > 0 ? 'Infinity' : '-Infinity' };
  }
  if (ArrayBuffer.isView(value) && !(value instanceof DataView)) {
    return Array.from(value as unknown as ArrayLike<number>);
  }
  return value;
}

function reviver(_key: string, value: unknown): unknown {
  if (value !== null && typeof value === 'object' && !Array.isArray(value)) {
    const o = value as Record<string, unknown>;
    const t = o[TAG];
    if (typeof t === 'string' && Object.keys(o).length === 1) {
      if (t === 'NaN') return NaN;
      if (t === 'Infinity') return Infinity;
      if (t === '-Infinity') return -Infinity;
    }
  }
  return value;
}

/** JSON text of a value, keeping NaN/±Infinity and flattening typed arrays. */
export function encodeWire(value: unknown): string {
  return JSON.stringify(value === undefined ? null : value, replacer);
}

/** Inverse of encodeWire. Throws SyntaxError on malformed JSON. */
export function decodeWire(text: string): unknown {
  return JSON.parse(text, reviver);
}
