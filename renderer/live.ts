// Live mode state (watching a session folder for new runs), kept by the App across screens.
import type { Events } from '../main/contract';

export interface LiveState {
  watching: boolean;
  folder: string | null;
  lastRun: number | null;
  /** The session the watched folder feeds (from the runs that arrived), null until known. */
  sessionId: number | null;
  /** Newest first. */
  events: (Events['watch.run'] & { at: string })[];
}

export const LIVE_IDLE: LiveState = { watching: false, folder: null, lastRun: null, sessionId: null, events: [] };

export function addLiveEvent(s: LiveState, e: Events['watch.run'], at = new Date().toISOString()): LiveState {
  return { ...s, lastRun: e.ok && e.run !== null ? e.run : s.lastRun, sessionId: e.sessionId ?? s.sessionId, events: [{ ...e, at }, ...s.events].slice(0, 200) };
}
