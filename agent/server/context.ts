/** What every route plugin receives as options: the deps and a few shared helpers. */
import { AgentError } from '../core/errors.js';
import type { ServerDeps } from './deps.js';

export interface RouteContext {
  readonly deps: ServerDeps;
  now(): number;
  /** Throws API_NOT_FOUND unless the feeder is known to the agent or has stored data. */
  requireFeeder(id: string): Promise<void>;
}

export function createContext(deps: ServerDeps): RouteContext {
  const now = deps.now ?? Date.now;
  return {
    deps,
    now,
    async requireFeeder(id: string): Promise<void> {
      if (deps.feeders().some((f) => f.id === id)) return;
      const stored = await deps.store.feeders();
      if (stored.some((f) => f.feeder === id)) return;
      throw new AgentError('API_NOT_FOUND', `Unknown feeder "${id}": GET /api/feeders lists the feeders`, { details: { feeder: id } });
    },
  };
}

export interface PluginOptions {
  ctx: RouteContext;
}
