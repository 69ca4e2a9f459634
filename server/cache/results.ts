/**
 * Results kept in memory per database: at most `keep` of them, the least recently used leaving
 * first; each is computed once even when many ask at the same time (they share the promise).
 * A failure is not kept, nor a result whose `final` is false (it may still change).
 */
export function recentResults<T>(keep: number) {
  const perDb = new WeakMap<object, Map<string, Promise<T>>>();
  return (db: object, key: string, make: () => Promise<{ value: T; final: boolean }>): Promise<T> => {
    let kept = perDb.get(db);
    if (!kept) perDb.set(db, (kept = new Map()));
    const hit = kept.get(key);
    if (hit) {
      kept.delete(key);
      kept.set(key, hit);
      return hit;
    }
    const made = make();
    const value = made.then((m) => m.value);
    kept.set(key, value);
    if (kept.size > keep) kept.delete(kept.keys().next().value!);
    const forget = () => kept.get(key) === value && kept.delete(key);
    made.then((m) => !m.final && forget()).catch(forget);
    return value;
  };
}

/** The copy under `key`, built once: callers arriving while it is built share it, and a build that fails is not kept. */
export function buildOnce<T>(copies: Map<string, Promise<unknown>>, key: string, build: () => Promise<T>): Promise<T> {
  const copy = copies.get(key) as Promise<T> | undefined;
  if (copy) return copy;
  const ready = build();
  copies.set(key, ready);
  ready.catch(() => copies.get(key) === ready && copies.delete(key));
  return ready;
}
