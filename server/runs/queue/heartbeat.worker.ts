import pg from 'pg';

/**
 * Thread entry: says every few seconds that this worker process is alive. It runs on a thread of
 * its own, with a connection of its own, so a long serial step on the worker's main thread (the
 * minimum of a large model) does not make the worker look gone. Ends when the thread is ended.
 */
export default async function beat({ url, name, threads, everyMs }: { url: string; name: string; threads: number; everyMs: number }): Promise<never> {
  const client = new pg.Client({ connectionString: url, application_name: 'plumbline-heartbeat' });
  client.on('error', () => {});
  await client.connect();
  const once = () =>
    client
      .query('insert into worker_processes (name, threads) values ($1, $2) on conflict (name) do update set seen_at = now(), threads = excluded.threads', [name, threads])
      .catch(() => {});
  await once();
  setInterval(once, everyMs);
  return new Promise<never>(() => {});
}
