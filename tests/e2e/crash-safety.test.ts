import { existsSync, readFileSync, rmSync } from 'node:fs';
import path from 'node:path';
import { PGlite } from '@electric-sql/pglite';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { syntheticModel } from '../../server/fit';
import { INTERRUPTED } from '../../server/runs/fit-runner';
import { startServer, type RunningServer } from './support';

const ENV = { UPLOAD_LIMIT_BYTES: '50000000', SIGN_IN_LIMIT: '1000' };
const PASSWORD = 'lantern-demo-2026';
const LARGE = 'crash-large';

/** A signed-in caller, as the client is: a session cookie, and the CSRF token on every write. */
class Session {
  cookie = '';
  constructor(
    public base: string,
    readonly email: string,
  ) {}
  async fetch(path: string, init: RequestInit = {}) {
    const res = await fetch(this.base + path, { ...init, headers: { ...(init.headers ?? {}), cookie: this.cookie } });
    const set = res.headers.get('set-cookie');
    if (set) this.cookie = set.split(';')[0];
    return res;
  }
  async get(path: string) {
    const res = await this.fetch(path);
    if (res.status !== 200) throw new Error(`GET ${path}: ${res.status} ${await res.text()}`);
    return res.json();
  }
  async send(method: string, path: string, body?: unknown) {
    const res = await this.fetch(path, { method, headers: { 'content-type': 'application/json', 'x-csrf-token': await this.token() }, body: JSON.stringify(body ?? {}) });
    if (res.status >= 400) throw new Error(`${method} ${path}: ${res.status} ${await res.text()}`);
    return res.status === 204 ? null : res.json();
  }
  /** Posts one file as the upload forms do. */
  async upload(path: string, name: string, content: string, type: string) {
    const form = new FormData();
    form.append('file', new Blob([content], { type }), name);
    return this.fetch(path, { method: 'POST', headers: { 'x-csrf-token': await this.token() }, body: form });
  }
  async signIn() {
    await this.send('POST', '/api/auth/sign-in', { email: this.email, password: PASSWORD });
  }
  private async token() {
    return (await (await this.fetch('/api/auth/csrf')).json()).token as string;
  }
}

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

async function waitForFit(session: Session, url: string) {
  for (const t0 = Date.now(); Date.now() - t0 < 30_000; await sleep(100)) {
    const fit = await session.get(url);
    if (!['queued', 'running'].includes(fit.state)) return fit;
  }
  throw new Error(`${url} did not end in 30 s`);
}

/** Waits until no fit of the analysis is queued or running (the demo's story starts some on first start). */
async function waitForAnalysisFits(session: Session, slug: string) {
  for (const t0 = Date.now(); Date.now() - t0 < 180_000; await sleep(250)) {
    const fits: { state: string }[] = await session.get(`/api/analyses/${slug}/fits`);
    if (!fits.some((f) => ['queued', 'running'].includes(f.state))) return;
  }
  throw new Error(`the fits of ${slug} did not end in 180 s`);
}

/** ±1σ variations of every template of the large synthetic model: a scale and a shape effect each (160 effects). */
function variationsCsv(factor: number) {
  const rows = ['region,process,kind,bin,up,down'];
  for (const t of syntheticModel('large').templates) {
    rows.push(`${t.region},${t.process},scale,,${factor.toFixed(4)},${(1 / factor).toFixed(4)}`);
    t.nominal.forEach((v, j) => rows.push(`${t.region},${t.process},shape,${j + 1},${(v * factor).toFixed(4)},${(v / factor).toFixed(4)}`));
  }
  return rows.join('\n') + '\n';
}
const TEMPLATES = syntheticModel('large').templates.length;
const LARGE_MODEL = JSON.stringify({ ...syntheticModel('large'), name: 'crash safety' });

describe('crash safety: the server killed with SIGKILL during uploads and a fit starts again on the same data folder', () => {
  let server: RunningServer;
  let dataDir = '';
  const admin = new Session('', 'admin@lantern.example');
  const otto = new Session('', 'otto@lantern.example');
  const sessions = [admin, otto];
  /** what was saved before any kill, as the API reads it */
  const before = new Map<string, unknown>();
  const savedReads: [Session, string][] = [
    [otto, '/api/analyses/vireon-search/entries'],
    [otto, '/api/analyses/cascade-rate/entries'],
    [otto, '/api/analyses/cascade-rate/model'],
    [otto, '/api/analyses/vireon-search/entries/crash_kept'],
    [admin, `/api/analyses/${LARGE}/model`],
    [admin, `/api/analyses/${LARGE}/entries/syst0`],
  ];
  let cascadeVersion = 0;
  /** how long a whole import of the large model took here, to aim kills into one */
  let importTook = 0;
  /** upload and import attempts that a kill cut off, and what each left behind */
  const outcomes: string[] = [];

  async function start() {
    server = await startServer(ENV, dataDir ? { dataDir } : {});
    dataDir = server.dataDir;
    for (const s of sessions) s.base = server.url;
  }

  /** SIGKILL, as a crash or the out-of-memory killer ends a process, then a start on the same folder. */
  async function crashAndRestart() {
    const pid = server.process.pid;
    await server.kill('SIGKILL');
    // the lock file of the dead process is still there: the new server must see that it is stale
    expect(readFileSync(path.join(dataDir, 'plumbline.lock'), 'utf8').trim()).toBe(String(pid));
    await start();
  }

  /**
   * Kills the server during a write, `times` times, each kill aimed closer to the moment the write
   * commits: after a kill that left nothing saved the next comes later, after one that found the
   * write saved it comes earlier. So the kills close in on the saving transaction instead of landing
   * in the transfer of the file or after the answer. `check` reads, after the restart, what the kill
   * left (the write's `n` counts the saved ones) and says whether the write was saved.
   */
  async function aimedKills(name: string, times: number, took: number, write: (n: number) => Promise<Response>, check: (n: number) => Promise<boolean>) {
    let cutOff = 0;
    let early = 0;
    let late = took;
    let n = 0;
    for (let i = 0; i < times; i++) {
      const delay = (early + late) / 2;
      let status: number | null = null;
      const pending = write(n).then(
        (res) => (status = res.status),
        () => {},
      );
      await sleep(delay);
      await crashAndRestart();
      await pending;
      const saved = await check(n);
      if (status === null) cutOff++;
      outcomes.push(`${name} killed after ${Math.round(delay)} ms (a whole one took ${Math.round(took)} ms): ${status ? `answered ${status}` : 'unanswered'}, ${saved ? 'all' : 'nothing'} saved`);
      // an answered save is durable
      if (status === 201) expect(saved).toBe(true);
      if (saved) {
        late = delay;
        n++;
      } else early = delay;
    }
    // at least one kill came before the answer, or none tested anything
    expect(cutOff).toBeGreaterThan(0);
  }

  beforeAll(async () => {
    await start();
    for (const s of sessions) await s.signIn();

    await admin.send('POST', '/api/analyses', { slug: LARGE, name: 'Crash safety: large model', blinded: false });
    await admin.send('POST', `/api/analyses/${LARGE}/members`, { email: admin.email, role: 'analyst' });
    const t0 = performance.now();
    const imported = await admin.upload(`/api/analyses/${LARGE}/exchange`, 'large.json', LARGE_MODEL, 'application/json');
    importTook = performance.now() - t0;
    expect(imported.status).toBe(201);
    const saved = await admin.upload(`/api/analyses/${LARGE}/entries/syst0/variations?save=1`, 'syst0.csv', variationsCsv(1.02), 'text/csv');
    expect(saved.status).toBe(201);

    await otto.send('POST', '/api/analyses/vireon-search/entries', { key: 'crash_kept', label: 'Saved before the crashes' });
    const shape = Array.from({ length: 8 }, (_, i) => `CR-shower,continuum,shape,${i + 1},${100 + i},${90 - i}`);
    const kept = await otto.upload('/api/analyses/vireon-search/entries/crash_kept/variations?save=1', 'kept.csv', ['region,process,kind,bin,up,down', ...shape].join('\n') + '\n', 'text/csv');
    expect(kept.status).toBe(201);

    cascadeVersion = (await otto.send('POST', '/api/analyses/cascade-rate/versions', { note: 'before the crashes' })).number;
    const finished = `/api/analyses/cascade-rate/fits/${(await otto.send('POST', '/api/analyses/cascade-rate/fits', { version: cascadeVersion, options: { dataset: 'observed', impacts: 'quick' } })).id}`;
    expect((await waitForFit(otto, finished)).state).toBe('succeeded');
    savedReads.push([otto, finished], [otto, `${finished}/parts/correlation`]);
    // an entry's read shows the latest fit that concerns it: the demo's own fits must have ended first
    for (const slug of ['vireon-search', 'cascade-rate', 'cascade-modes']) await waitForAnalysisFits(otto, slug);
    for (const [session, read] of savedReads) before.set(read, await session.get(read));
  });

  afterAll(async () => {
    console.log(outcomes.join('\n'));
    await server?.kill('SIGKILL');
    if (dataDir) rmSync(dataDir, { recursive: true, force: true });
  });

  it('a model import killed part-way leaves the new analysis with no model at all or with all of it', async () => {
    const slug = (n: number) => `crash-import-${n}`;
    for (let n = 0; n < 2; n++) {
      await admin.send('POST', '/api/analyses', { slug: slug(n), name: `Crash safety: import ${n}`, blinded: false });
      await admin.send('POST', `/api/analyses/${slug(n)}/members`, { email: admin.email, role: 'analyst' });
    }
    await aimedKills(
      'a model import',
      2,
      importTook,
      (n) => admin.upload(`/api/analyses/${slug(n)}/exchange`, 'large.json', LARGE_MODEL, 'application/json'),
      async (n) => {
        const model = await admin.get(`/api/analyses/${slug(n)}/model`);
        const register = await admin.get(`/api/analyses/${slug(n)}/entries`);
        if (model.regions.length === 0) {
          expect(model).toEqual({ regions: [], processes: [], floatingNorms: [], parametersOfInterest: [], templates: [] });
          expect(register).toEqual([]);
          return false;
        }
        expect(model.regions).toHaveLength(10);
        expect(model.templates).toHaveLength(TEMPLATES);
        expect(register).toHaveLength(250);
        return true;
      },
    );
  });

  it('a variations upload killed part-way leaves the entry as it was or with the whole upload and its revision', async () => {
    const entry = (n: number) => `/api/analyses/${LARGE}/entries/syst${n + 2}`;
    const file = (n: number) => variationsCsv(1.04 + n / 100);
    // a preview first (the server's first parse of such a file is slower), then a timed save
    expect((await admin.upload(`/api/analyses/${LARGE}/entries/syst1/variations`, 'syst1.csv', file(-1), 'text/csv')).status).toBe(200);
    const t0 = performance.now();
    expect((await admin.upload(`/api/analyses/${LARGE}/entries/syst1/variations?save=1`, 'syst1.csv', file(-1), 'text/csv')).status).toBe(201);
    const took = performance.now() - t0;
    const was = await Promise.all([0, 1, 2].map((n) => admin.get(entry(n))));

    await aimedKills(
      'a variations upload',
      3,
      took,
      (n) => admin.upload(`${entry(n)}/variations?save=1`, `syst${n + 2}.csv`, file(n), 'text/csv'),
      async (n) => {
        const now = await admin.get(entry(n));
        if (now.version === was[n].version) {
          expect(now).toEqual(was[n]);
          return false;
        }
        // all of it: one revision, the version one up, and every effect of the file with the file kept behind it
        expect(now.version).toBe(was[n].version + 1);
        expect(now.revisions).toHaveLength(was[n].revisions.length + 1);
        expect(now.revisions[0]).toMatchObject({ action: 'variations.uploaded' });
        const fromFile = now.effects.filter((e: { upload: { filename: string } | null }) => e.upload?.filename === `syst${n + 2}.csv`);
        expect(fromFile).toHaveLength(2 * TEMPLATES);
        expect(new Set(fromFile.map((e: { upload: { sha256: string } }) => e.upload.sha256)).size).toBe(1);
        return true;
      },
    );
  });

  it('marks a fit killed while running failed with the reason, and runs the fit queued behind it after the restart', async () => {
    const version = await admin.send('POST', `/api/analyses/${LARGE}/versions`, { note: 'to be interrupted' });
    const running = (await admin.send('POST', `/api/analyses/${LARGE}/fits`, { version: version.number, label: 'interrupted', options: { dataset: 'observed', impacts: 'full' } })).id;
    const queued = (await otto.send('POST', '/api/analyses/cascade-rate/fits', { version: cascadeVersion, label: 'queued behind', options: { dataset: 'observed', impacts: 'quick' } })).id;
    const fitUrl = `/api/analyses/${LARGE}/fits/${running}`;
    let fit = await admin.get(fitUrl);
    for (const t0 = Date.now(); !(fit.state === 'running' && fit.progress > 0); fit = await admin.get(fitUrl)) {
      if (Date.now() - t0 > 30_000) throw new Error(`the fit did not start running: ${JSON.stringify(fit)}`);
      await sleep(100);
    }
    expect((await otto.get(`/api/analyses/cascade-rate/fits/${queued}`)).state).toBe('queued');

    await crashAndRestart();
    fit = await admin.get(fitUrl);
    expect(fit).toMatchObject({ state: 'failed', stage: 'interrupted', failure: INTERRUPTED, headline: null, result: null });
    expect(fit.finishedAt).not.toBeNull();
    expect((await waitForFit(otto, `/api/analyses/cascade-rate/fits/${queued}`)).state).toBe('succeeded');
  });

  it('reads back everything saved before the kills unchanged', async () => {
    for (const [session, read] of savedReads) expect(await session.get(read), read).toEqual(before.get(read));
  });

  it('leaves in the data folder no upload without its effects and revision, and no change without its revision', async () => {
    await server.kill('SIGTERM');
    expect(existsSync(path.join(dataDir, 'plumbline.lock'))).toBe(false);
    const db = new PGlite(path.join(dataDir, 'db'));
    const rows = async (query: string) => (await db.query<Record<string, unknown>>(query)).rows;
    try {
      // every kept file: its revision names it and every effect it gave is there (no entry here gets two uploads, so none was replaced)
      expect(
        await rows(`
          select u.id, u.filename, r.after->'effects' as listed, (select count(*)::int from effects e where e.upload_id = u.id) as effects
          from uploads u left join revisions r on r.action = 'variations.uploaded' and (r.after->>'upload')::int = u.id
          where r.id is null or jsonb_array_length(r.after->'effects') <> (select count(*) from effects e where e.upload_id = u.id)`),
      ).toEqual([]);
      // every upload revision: its file is kept
      expect(await rows(`select r.id from revisions r left join uploads u on u.id = (r.after->>'upload')::int where r.action = 'variations.uploaded' and u.id is null`)).toEqual([]);
      // every imported entry not changed since: the effects its revision counts
      expect(
        await rows(`
          select e.key, r.after->>'effects' as listed, (select count(*)::int from effects f where f.entry_id = e.id) as effects
          from entries e join revisions r on r.entry_id = e.id and r.action = 'imported'
          where e.version = 1 and (r.after->>'effects')::int <> (select count(*) from effects f where f.entry_id = e.id)`),
      ).toEqual([]);
      // an entry's version counts its changes, each written with its revision in one transaction
      expect(await rows(`select e.key, e.version, (select count(*)::int from revisions r where r.entry_id = e.id) as revisions from entries e where e.version <> (select count(*) from revisions r where r.entry_id = e.id)`)).toEqual([]);
      // an imported model comes with its revision, and a revision with its model
      expect(
        await rows(`
          select a.slug, (select count(*)::int from regions g where g.analysis_id = a.id) as regions, (select count(*)::int from entries e where e.analysis_id = a.id) as entries,
            (select count(*)::int from revisions r where r.analysis_id = a.id and r.action = 'model.imported') as imported
          from analyses a where a.slug like 'crash-%' and
            (select count(*) from revisions r where r.analysis_id = a.id and r.action = 'model.imported') <> (case when exists (select 1 from regions g where g.analysis_id = a.id) then 1 else 0 end)`),
      ).toEqual([]);
      // no fit is left running
      expect(await rows(`select id, state from fits where state in ('running', 'queued')`)).toEqual([]);
    } finally {
      await db.close();
    }
  });
});
