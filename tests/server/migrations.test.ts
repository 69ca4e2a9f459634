import { cpSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { PGlite } from '@electric-sql/pglite';
import { drizzle } from 'drizzle-orm/pglite';
import { migrate } from 'drizzle-orm/pglite/migrator';
import { describe, expect, it } from 'vitest';
import * as schema from '../../server/db/schema';
import { storedHead, storedResult } from '../../server/db/fits.repository';
import type { Db } from '../../server/db/client';

/** The migrations up to and including `last` (by tag), as a folder of their own. */
function migrationsUpTo(last: string) {
  const dir = mkdtempSync(path.join(os.tmpdir(), 'plumbline-migrations-'));
  cpSync(path.resolve('drizzle'), dir, { recursive: true });
  const journalFile = path.join(dir, 'meta', '_journal.json');
  const journal = JSON.parse(readFileSync(journalFile, 'utf8')) as { entries: { idx: number; tag: string }[] };
  const cut = journal.entries.findIndex((e) => e.tag === last);
  expect(cut).toBeGreaterThan(0);
  journal.entries = journal.entries.slice(0, cut + 1);
  writeFileSync(journalFile, JSON.stringify(journal));
  return dir;
}

describe('migrations of data stored by earlier versions', () => {
  it('moves the correlation and information of results stored whole into fit_parts, and reads them back the same', async () => {
    const client = new PGlite();
    const db = drizzle(client, { schema });
    const before = migrationsUpTo('0009_register_notices_for_answers_and_revisions');
    try {
      await migrate(db, { migrationsFolder: before });
      await client.exec(`
        insert into analyses (slug, name) values ('a', 'A');
        insert into model_versions (analysis_id, number, model, sha256) values (1, 1, '{"regions": []}', 'x');`);
      const result = { status: 'converged', summary: { mu: { value: 1 } }, correlation: { names: ['mu', 'jes'], values: [1, 0.25, 0.25, 1] }, information: [{ parameter: 'jes', total: 4 }], yields: { prefit: [], postfit: null } };
      await client.query('insert into fits (analysis_id, model_version_id, options, state, result) values (1, 1, $1, $2, $3)', [{}, 'succeeded', result]);
      await migrate(db, { migrationsFolder: path.resolve('drizzle') });
      const head = (await storedHead(db as unknown as Db, 1)) as Record<string, unknown>;
      expect(Object.keys(head).sort()).toEqual(['status', 'summary', 'yields']);
      expect(await storedResult(db as unknown as Db, 1)).toEqual(result);
    } finally {
      await client.close();
      rmSync(before, { recursive: true, force: true });
    }
  });

  it('blinds every region a blinded analysis has had as a signal region, by its current role, its versions or its revisions, and records the regions of each fit', async () => {
    const client = new PGlite();
    const db = drizzle(client, { schema });
    const before = migrationsUpTo('0007_worker_heartbeats');
    try {
      await migrate(db, { migrationsFolder: before });
      await client.exec(`
        insert into analyses (slug, name, blinding) values ('blind', 'Blind', 'blinded'), ('open', 'Open', 'unblinded');
        insert into regions (analysis_id, key, role, observable, edges) values
          (1, 'SR', 'control', 'm', '[0,1]'), (1, 'SR2', 'signal', 'm', '[0,1]'), (1, 'CR', 'control', 'm', '[0,1]'), (2, 'SR', 'signal', 'm', '[0,1]');
        insert into model_versions (analysis_id, number, model, sha256) values
          (1, 1, '{"regions": [{"key": "SR", "role": "signal"}, {"key": "SR2", "role": "signal"}, {"key": "CR", "role": "control"}]}', 'x'),
          (1, 2, '{"regions": [{"key": "SR", "role": "control"}, {"key": "SR2", "role": "signal"}, {"key": "CR", "role": "control"}]}', 'y');
        insert into revisions (analysis_id, action, summary, before, after) values (1, 'region.edited', 'x', '{"key": "OLD", "role": "signal"}', '{"key": "OLD", "role": "control"}');
        insert into fits (analysis_id, model_version_id, options) values
          (1, 2, '{"dataset": "observed", "controlOnly": true, "excludeRegions": []}'),
          (1, 1, '{"dataset": "observed", "controlOnly": false, "excludeRegions": ["SR2"]}');`);
      await migrate(db, { migrationsFolder: path.resolve('drizzle') });
      const { rows } = await client.query<{ slug: string; blinded_regions: string[] }>('select slug, blinded_regions from analyses order by id');
      expect(rows).toEqual([
        { slug: 'blind', blinded_regions: ['OLD', 'SR', 'SR2'] },
        { slug: 'open', blinded_regions: [] },
      ]);
      const fits = await client.query<{ regions_in_fit: string[] }>('select regions_in_fit from fits order by id');
      expect(fits.rows.map((r) => r.regions_in_fit)).toEqual([['CR', 'SR'], ['CR', 'SR']]);
      // from now on the triggers keep the set: a role change of a blinded region is refused
      await expect(client.exec(`update regions set role = 'signal' where key = 'SR' and analysis_id = 1`)).rejects.toThrow(/blinded/);
    } finally {
      await client.close();
      rmSync(before, { recursive: true, force: true });
    }
  });

  it('renames the template-statistics parameters of results stored before to tstat:<region>:<bin>', async () => {
    const client = new PGlite();
    const db = drizzle(client, { schema });
    const before = migrationsUpTo('0013_review_sets');
    try {
      await migrate(db, { migrationsFolder: before });
      await client.exec(`
        insert into analyses (slug, name) values ('a', 'A');
        insert into model_versions (analysis_id, number, model, sha256) values (1, 1, '{"regions": []}', 'x');`);
      const result = {
        gammas: { list: [{ name: 'gamma_CR_low_12', region: 'CR_low', bin: 12 }, { name: 'gamma_SR-core_0', region: 'SR-core', bin: 0 }] },
        convergence: { parametersAtBound: ['gamma_CR_low_12'], warnings: ['gamma_CR_low_12 is at a bound of its range; gamma_SR-core_0 too.'] },
      };
      await client.query('insert into fits (analysis_id, model_version_id, options, state, result) values (1, 1, $1, $2, $3)', [{}, 'succeeded', result]);
      await migrate(db, { migrationsFolder: path.resolve('drizzle') });
      const { rows } = await client.query<{ result: typeof result }>('select result from fits');
      expect(rows[0].result.gammas.list.map((g) => g.name)).toEqual(['tstat:CR_low:12', 'tstat:SR-core:0']);
      expect(rows[0].result.convergence).toEqual({ parametersAtBound: ['tstat:CR_low:12'], warnings: ['tstat:CR_low:12 is at a bound of its range; tstat:SR-core:0 too.'] });
      expect(JSON.stringify(rows[0].result)).not.toMatch(/gamma_/);
    } finally {
      await client.close();
      rmSync(before, { recursive: true, force: true });
    }
  });
});
