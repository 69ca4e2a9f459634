import type { DbClient } from './client';
import { keptOnce } from '../kept';

/**
 * Copies kept in memory stay true by listening to what the database announces: triggers in the
 * migrations `pg_notify` a channel at commit whenever rows a copy depends on change, and the
 * embedded database delivers the notice before the writing query returns. `watched` makes the
 * per-database state of one channel once, subscribes it, and hands every caller the same state.
 *
 * A PostgreSQL server delivers notices after the commit, on another connection, and other
 * processes write too: there, nothing is kept (every caller gets a new state, so every read goes
 * to the database) and a reader never sees a copy older than its own write.
 */
const watchers = new WeakMap<object, Map<string, Promise<unknown>>>();

export function watched<T>(client: DbClient, channel: string, create: () => T, onNotice: (state: T, payload: string) => void): Promise<T> {
  if (!client.listen) return Promise.resolve(create());
  let channels = watchers.get(client);
  if (!channels) watchers.set(client, (channels = new Map()));
  let state = channels.get(channel) as Promise<T> | undefined;
  if (!state) {
    const value = create();
    state = client.listen!(channel, (payload) => onNotice(value, payload)).then(() => value);
    channels.set(channel, state);
  }
  return state;
}

/**
 * Copies per analysis, kept until `channel` announces a change to that analysis (the payload is
 * the analysis id). Each copy is built once: readers arriving while it is built share it, and a
 * build that fails is not kept. Copies are shared: callers must not change them.
 */
export function keptPerAnalysis(channel: string) {
  return async <T>(client: DbClient, analysisId: number, what: string, build: () => Promise<T>): Promise<T> => {
    const analyses = await watched(
      client,
      channel,
      () => new Map<number, Map<string, Promise<unknown>>>(),
      (all, id) => all.delete(Number(id)),
    );
    let copies = analyses.get(analysisId);
    if (!copies) analyses.set(analysisId, (copies = new Map()));
    return keptOnce(copies, what, build);
  };
}
