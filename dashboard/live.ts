/**
 * One EventSource for the whole page (GET /api/live). Views subscribe to
 * parsed messages and unsubscribe when they leave; the link state shows in
 * the top bar. EventSource reconnects by itself after the server's "retry".
 */
import type { AlarmWire, EventWire, ResultWire } from './api.js';
import { withToken } from './api.js';

export type LiveMessage =
  | { type: 'result'; data: ResultWire }
  | { type: 'alarm'; data: AlarmWire }
  | { type: 'event'; data: EventWire };

type Listener = (m: LiveMessage) => void;
export type LinkState = 'connecting' | 'live' | 'down';

const listeners = new Set<Listener>();
const stateListeners = new Set<(s: LinkState) => void>();
let source: EventSource | null = null;

function emit(m: LiveMessage): void {
  for (const l of listeners) {
    try {
      l(m);
    } catch (e) {
      console.error(e);
    }
  }
}

function setState(s: LinkState): void {
  for (const l of stateListeners) l(s);
}

export function connectLive(): void {
  source?.close();
  setState('connecting');
  source = new EventSource(withToken('/api/live'));
  source.addEventListener('open', () => setState('live'));
  source.addEventListener('error', () => setState(source?.readyState === EventSource.CLOSED ? 'down' : 'connecting'));
  for (const type of ['result', 'alarm', 'event'] as const) {
    source.addEventListener(type, (ev) => {
      const data = JSON.parse((ev as MessageEvent<string>).data);
      emit({ type, data } as LiveMessage);
    });
  }
}

export function onLive(l: Listener): () => void {
  listeners.add(l);
  return () => listeners.delete(l);
}

export function onLinkState(l: (s: LinkState) => void): void {
  stateListeners.add(l);
}
