import type { DbClient } from '../db/client';
import { buildOnce } from './results';

/**
 * Copies kept in memory stay true by listening to what the database announces: triggers in the
 * migrations `pg_notify` a channel at commit whenever rows a copy depends on change, and the
 * embedded database delivers the notice before the writing query returns. `untilNotified` makes the
 * per-database state of one channel once, subscribes it, and hands every caller the same state.
 *
 * A PostgreSQL server delivers notices after the commit, on another connection, and other
 * processes write too: there, nothing is kept (every caller gets a new state, so every read goes
 * to the database) and a reader never sees a copy older than its own write.
 */
const listeners = new WeakMap<object, Map<string, Promise<unknown>>>();

export function untilNotified<T>(client: DbClient, channel: string, create: () => T, onNotice: (state: T, payload: string) => void): Promise<T> {
  if (!client.listen) return Promise.resolve(create());
  let channels = listeners.get(client);
  if (!channels) listeners.set(client, (channels = new Map()));
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
export function copiesUntilChanged(channel: string) {
  return async <T>(client: DbClient, analysisId: number, what: string, build: () => Promise<T>): Promise<T> => {
    const analyses = await untilNotified(
      client,
      channel,
      () => new Map<number, Map<string, Promise<unknown>>>(),
      (all, id) => all.delete(Number(id)),
    );
    let copies = analyses.get(analysisId);
    if (!copies) analyses.set(analysisId, (copies = new Map()));
    return buildOnce(copies, what, build);
  };
}

/** Copies that depend on an analysis's model (regions, processes, normalisations, templates, effects). */
export const untilModelChanges = copiesUntilChanged('model_changed');
/** Copies that depend on an analysis's register (entries, effects, groups, questions, owners' names). */
export const untilRegisterChanges = copiesUntilChanged('register_changed');
