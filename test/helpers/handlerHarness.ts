// The contract handlers on a real SQLite file, as the Electron main process and browser mode use
// them, with typed `call` (throws on a contract error) and `failure` (expects one). Each test file
// that imports this still mocks 'electron' itself (vi.mock is hoisted per file).
import { Store } from '../../main/store';
import { createHandlers, dispatch, type HandlerContext, type Handlers } from '../../main/handlers';
import type { Channel, ContractError, EventName, Payload, Results } from '../../main/contract';

export type SeenEvents = { event: EventName; data: unknown }[];

export interface HandlerHarness {
  store: Store;
  handlers: Handlers;
  events: SeenEvents;
  call<C extends Channel>(channel: C, payload: Payload<C>): Promise<Results[C]>;
  failure(channel: string, payload: unknown): Promise<ContractError>;
}

export function openHandlers(dbFile: string, extra: Partial<HandlerContext> = {}): HandlerHarness {
  const store = Store.open(dbFile);
  const events: SeenEvents = [];
  const handlers = createHandlers({
    store, mode: 'browser', demoSessionId: null, emit: (event, data) => events.push({ event, data }), progressIntervalMs: 0, ...extra,
  });
  const call = async <C extends Channel>(channel: C, payload: Payload<C>): Promise<Results[C]> => {
    const answer = await dispatch(handlers, channel, payload);
    if ('error' in answer) throw new Error(`${channel}: ${answer.error.kind}: ${answer.error.message}`);
    return answer.result as Results[C];
  };
  const failure = async (channel: string, payload: unknown): Promise<ContractError> => {
    const answer = await dispatch(handlers, channel, payload);
    if (!('error' in answer)) throw new Error(`${channel} should have failed`);
    return answer.error;
  };
  return { store, handlers, events, call, failure };
}
