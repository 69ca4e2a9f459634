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

export function untilNotified<T>(client: DbClient, channel: string | string[], create: () => T, onNotice: (state: T, payload: string) => void): Promise<T> {
  if (!client.listen) return Promise.resolve(create());
  let channels = listeners.get(client);
  if (!channels) listeners.set(client, (channels = new Map()));
  const names = [channel].flat();
  const key = names.join(' ');
  let state = channels.get(key) as Promise<T> | undefined;
  if (!state) {
    const value = create();
    state = Promise.all(names.map((name) => client.listen!(name, (payload) => onNotice(value, payload)))).then(() => value);
    channels.set(key, state);
  }
  return state;
}

/**
 * Copies per analysis, kept until `channel` announces a change to that analysis (the payload is
 * the analysis id). Each copy is built once: readers arriving while it is built share it, and a
 * build that fails is not kept. Copies are shared: callers must not change them.
 */
export function copiesUntilChanged(channel: string | string[]) {
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
/** Copies that depend on the register and on the answers to its questions (the lists of questions). */
export const untilQuestionsChange = copiesUntilChanged(['register_changed', 'answers_changed']);

/**
 * Copies of one entry's page, per analysis and name (the entry's key), kept until "entry_changed"
 * announces a change to that entry ("<analysis>:<entry id>"), to every entry of its analysis
 * ("<analysis>") or to anyone's name ("*"). A copy still being built when a change to its analysis
 * is announced is dropped too, since which entry it holds is not known yet. Each copy is built once;
 * a build that fails is not kept. Copies are shared: callers must not change them.
 */
export async function untilEntryChanges<T>(client: DbClient, analysisId: number, name: string, build: () => Promise<{ entryId: number; value: T }>): Promise<T> {
  type Copy = { entryId: number | null; value: Promise<T> };
  const analyses = await untilNotified(
    client,
    'entry_changed',
    () => new Map<number, Map<string, Copy>>(),
    (all, payload) => {
      if (payload === '*') return all.clear();
      const [analysis, entry] = payload.split(':');
      const copies = all.get(Number(analysis));
      if (!copies) return;
      if (entry === undefined) return void all.delete(Number(analysis));
      for (const [key, copy] of copies) if (copy.entryId === null || copy.entryId === Number(entry)) copies.delete(key);
    },
  );
  let copies = analyses.get(analysisId);
  if (!copies) analyses.set(analysisId, (copies = new Map()));
  const kept = copies.get(name);
  if (kept) return kept.value;
  // kept before it is built, so that a change announced meanwhile drops it too
  const built = build();
  const copy: Copy = { entryId: null, value: built.then((b) => b.value) };
  copies.set(name, copy);
  built.then(
    (b) => void (copy.entryId = b.entryId),
    () => copies.get(name) === copy && copies.delete(name),
  );
  return copy.value;
}
