import { execFileSync, spawnSync } from 'node:child_process';
import { chownSync, existsSync, mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import path from 'node:path';

/**
 * A throwaway PostgreSQL server from Debian's packages (postgresql), for the tests and the
 * scaling benchmark: a new cluster in a temporary folder, listening on a free loopback port,
 * trust authentication, removed by stop(). The server refuses to run as root, so as root the
 * cluster belongs to the "postgres" account the package creates.
 */
export type PostgresServer = { url: string; stop: () => void };

export function postgresBin(): string | null {
  const base = '/usr/lib/postgresql';
  if (!existsSync(base)) return null;
  const versions = readdirSync(base)
    .filter((v) => existsSync(path.join(base, v, 'bin', 'postgres')))
    .sort((a, b) => Number(b) - Number(a));
  return versions.length ? path.join(base, versions[0], 'bin') : null;
}

async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = createServer();
    s.listen(0, '127.0.0.1', () => {
      const port = (s.address() as { port: number }).port;
      s.close(() => resolve(port));
    });
    s.on('error', reject);
  });
}

export async function startPostgres(): Promise<PostgresServer> {
  const bin = postgresBin();
  if (!bin) throw new Error('PostgreSQL is not installed: apt-get install postgresql (Debian), or run .ci/run, which installs it.');
  const root = process.getuid?.() === 0;
  const dir = mkdtempSync(path.join(tmpdir(), 'plumbline-pg-'));
  const data = path.join(dir, 'data');
  const as = (cmd: string, args: string[]) => (root ? ['runuser', ['-u', 'postgres', '--', cmd, ...args]] : [cmd, args]) as [string, string[]];
  if (root) {
    const uid = Number(execFileSync('id', ['-u', 'postgres']).toString().trim());
    const gid = Number(execFileSync('id', ['-g', 'postgres']).toString().trim());
    chownSync(dir, uid, gid);
  }
  const run = (cmd: string, args: string[]) => {
    const [c, a] = as(cmd, args);
    const r = spawnSync(c, a, { encoding: 'utf8' });
    if (r.status !== 0) throw new Error(`${cmd} failed: ${r.stderr || r.stdout}`);
  };
  run(path.join(bin, 'initdb'), ['-D', data, '-U', 'plumbline', '--auth=trust', '-E', 'UTF8', '--no-sync']);
  const port = await freePort();
  run(path.join(bin, 'pg_ctl'), ['-D', data, '-l', path.join(dir, 'server.log'), '-w', '-o', `-p ${port} -c listen_addresses=127.0.0.1 -k ${dir} -c max_connections=200 -c fsync=off`, 'start']);
  run(path.join(bin, 'createdb'), ['-h', '127.0.0.1', '-p', String(port), '-U', 'plumbline', 'plumbline']);
  return {
    url: `postgres://plumbline@127.0.0.1:${port}/plumbline`,
    stop: () => {
      const [c, a] = as(path.join(bin, 'pg_ctl'), ['-D', data, '-m', 'immediate', '-w', 'stop']);
      spawnSync(c, a);
      rmSync(dir, { recursive: true, force: true });
    },
  };
}
