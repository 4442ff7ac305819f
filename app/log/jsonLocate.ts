// Where in a JSON text a value sits (line numbers for error messages). A small scanner over the
// JSON grammar of RFC 8259; it only runs on text that JSON.parse has already accepted.
// Pure module (runs in a browser worker).

export type JsonPath = readonly (string | number)[];

/** 1-based line of a character offset. */
export function lineOf(text: string, offset: number): number {
  let n = 1;
  const end = Math.min(offset, text.length);
  for (let i = 0; i < end; i++) if (text.charCodeAt(i) === 10) n++;
  return n;
}

/** Offset of the value at `path` (or of the deepest existing ancestor), or undefined. */
export function locateJsonPath(text: string, path: JsonPath): number | undefined {
  let i = 0;
  let best: number | undefined;
  const ws = () => {
    for (;;) {
      const c = text.charCodeAt(i);
      if (c === 32 || c === 9 || c === 10 || c === 13 || c === 0xfeff) i++;
      else return;
    }
  };
  const str = (): string => {
    const start = i;
    i++;
    for (;;) {
      const c = text.charCodeAt(i);
      if (Number.isNaN(c)) throw new Error('unterminated string');
      if (c === 92) i += 2;
      else if (c === 34) {
        i++;
        return JSON.parse(text.slice(start, i)) as string;
      } else i++;
    }
  };
  const skipScalar = () => {
    while (i < text.length && !',]}'.includes(text[i]) && !/\s/.test(text[i])) i++;
  };
  // The value at depth d of the path (d = null: a value off the path, only skipped); returns
  // true when the target was found inside (stop scanning).
  const walk = (d: number | null): boolean => {
    ws();
    if (d === path.length) {
      best = i;
      return true;
    }
    const c = text[i];
    if (c === '{' || c === '[') {
      const close = c === '{' ? '}' : ']';
      i++;
      ws();
      if (text[i] === close) {
        i++;
        return false;
      }
      for (let k = 0; ; k++) {
        ws();
        let key: string | number = k;
        if (c === '{') {
          key = str();
          ws();
          i++; // ':'
        }
        if (d !== null && key === path[d]) {
          ws();
          best = i;
          if (walk(d + 1)) return true;
        } else if (walk(null)) return true;
        ws();
        if (text[i] === ',') i++;
        else {
          i++;
          return false;
        }
      }
    }
    if (c === '"') str();
    else skipScalar();
    return false;
  };
  try {
    walk(0);
  } catch {
    /* malformed text: keep what was found */
  }
  return best;
}

/** "channels[3].unit" */
export function formatJsonPath(path: JsonPath): string {
  let s = '';
  for (const p of path) s += typeof p === 'number' ? `[${p}]` : s ? `.${p}` : p;
  return s || '(top level)';
}
