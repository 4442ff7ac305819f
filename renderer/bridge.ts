// The renderer's one door to the back end: getApi() returns the typed contract (main/contract.ts).
// Under Electron the preload exposes window.rakeline (IPC, answers as { result } | { error });
// in browser mode this file implements the same API over HTTP (POST /api/<channel>) and
// server-sent events (GET /api/events), with the per-launch token taken from location.hash.
// Either way a failed call rejects with a ContractFailure whose .detail is the ContractError.
import {
  ContractFailure,
  type Channel, type ContractError, type EventName, type Events, type Payload, type RakelineApi, type Results,
} from '../main/contract';
import { decodeWire, encodeWire, type Envelope } from '../main/wire';

/** What main/preload.ts exposes as window.rakeline. */
export interface PreloadBridge {
  call(channel: string, payload: unknown): Promise<Envelope>;
  on(event: string, listener: (data: unknown) => void): () => void;
}

declare global {
  interface Window {
    rakeline?: PreloadBridge;
  }
}

const TOKEN_KEY = 'rakeline.token';

function unwrap<T>(answer: Envelope<T>): T {
  if (answer && typeof answer === 'object' && 'error' in answer) throw new ContractFailure(answer.error);
  if (answer && typeof answer === 'object' && 'result' in answer) return answer.result;
  throw new ContractFailure({ kind: 'internal', message: 'Malformed answer from the back end.' });
}

/** The contract over the Electron preload. */
export function electronApi(bridge: PreloadBridge): RakelineApi {
  return {
    async call<C extends Channel>(channel: C, payload: Payload<C>): Promise<Results[C]> {
      return unwrap(await bridge.call(channel, payload)) as Results[C];
    },
    on<E extends EventName>(event: E, listener: (data: Events[E]) => void): () => void {
      return bridge.on(event, (data) => listener(data as Events[E]));
    },
  };
}

/** Read the token from `#token=…` (then keep it in sessionStorage and drop it from the URL). */
export function takeToken(loc: Location = window.location, storage: Storage = window.sessionStorage): string | null {
  const m = /(?:^#|&)token=([^&]+)/.exec(loc.hash);
  if (m) {
    const token = decodeURIComponent(m[1]);
    try {
      storage.setItem(TOKEN_KEY, token);
    } catch {
      /* storage disabled: keep it in memory only */
    }
    const rest = loc.hash.replace(/(^#|&)token=[^&]+/, '$1').replace(/^#&/, '#').replace(/&$/, '').replace(/^#$/, '');
    try {
      window.history.replaceState(window.history.state, '', `${loc.pathname}${loc.search}${rest}`);
    } catch {
      /* not fatal */
    }
    return token;
  }
  try {
    return storage.getItem(TOKEN_KEY);
  } catch {
    return null;
  }
}

/** The contract over HTTP + SSE (browser mode). */
export function httpApi(token: string | null, base = ''): RakelineApi {
  const listeners = new Map<string, Set<(data: unknown) => void>>();
  let source: EventSource | null = null;

  const ensureSource = () => {
    if (source || !token) return;
    source = new EventSource(`${base}/api/events?token=${encodeURIComponent(token)}`);
    for (const name of listeners.keys()) attach(name);
  };
  const attached = new Set<string>();
  const attach = (name: string) => {
    if (!source || attached.has(name)) return;
    attached.add(name);
    source.addEventListener(name, (ev) => {
      let data: unknown;
      try {
        data = decodeWire((ev as MessageEvent<string>).data);
      } catch {
        return;
      }
      for (const l of listeners.get(name) ?? []) l(data);
    });
  };

  return {
    async call<C extends Channel>(channel: C, payload: Payload<C>): Promise<Results[C]> {
      if (!token) {
        throw new ContractFailure({
          kind: 'unsupported',
          message: 'No access token: open Rakeline with the address printed by `npm run serve` (it ends in #token=…).',
        });
      }
      let res: Response;
      try {
        res = await fetch(`${base}/api/${encodeURIComponent(channel)}`, {
          method: 'POST',
          headers: { 'Content-Type': 'application/json', 'x-rakeline-token': token },
          body: encodeWire(payload ?? {}),
          credentials: 'omit',
          cache: 'no-store',
        });
      } catch (e) {
        throw new ContractFailure({ kind: 'internal', message: `The Rakeline server did not answer (${e instanceof Error ? e.message : String(e)}). Is it still running?` });
      }
      const text = await res.text();
      const type = res.headers.get('content-type') ?? '';
      if (!type.startsWith('application/json')) {
        const kind: ContractError['kind'] = res.status === 401 || res.status === 403 ? 'validation' : 'internal';
        throw new ContractFailure({ kind, message: `HTTP ${res.status}: ${text.slice(0, 300)}` });
      }
      return unwrap(decodeWire(text) as Envelope<Results[C]>);
    },
    on<E extends EventName>(event: E, listener: (data: Events[E]) => void): () => void {
      let set = listeners.get(event);
      if (!set) {
        set = new Set();
        listeners.set(event, set);
      }
      const l = listener as (data: unknown) => void;
      set.add(l);
      ensureSource();
      attach(event);
      return () => {
        set.delete(l);
      };
    },
  };
}

let api: RakelineApi | null = null;

/** The back end, whichever mode the app runs in (one instance per page). */
export function getApi(): RakelineApi {
  if (api) return api;
  api = typeof window !== 'undefined' && window.rakeline ? electronApi(window.rakeline) : httpApi(takeToken());
  return api;
}

/** Which transport getApi() uses. */
export function bridgeMode(): 'electron' | 'browser' {
  return typeof window !== 'undefined' && window.rakeline ? 'electron' : 'browser';
}
