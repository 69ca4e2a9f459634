import { createHash, randomBytes } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { openDatabase } from '../../server/db/client';
import { storedPartBytes } from '../../server/db/fits.repository';

describe('bytes in the embedded database', () => {
  it('stores every byte value as bytes and reads the same bytes back, through Drizzle and plain queries', async () => {
    const database = await openDatabase();
    try {
      const { client, db } = database;
      await client.exec(`
        insert into analyses (slug, name) values ('a', 'A');
        insert into model_versions (analysis_id, number, model, sha256) values (1, 1, '{"regions": []}', 'x');
        insert into fits (analysis_id, model_version_id, options) values (1, 1, '{}');`);
      const every = Buffer.from(Array.from({ length: 256 }, (_, i) => i));
      const large = Buffer.concat([every, randomBytes(1_000_000)]);
      // a view into a larger buffer: only its own bytes are stored
      const view = new Uint8Array(large.buffer, large.byteOffset + 10, 300);
      await client.query('insert into fit_parts (fit_id, part, encoding, data) values (1, $1, $2, $3), (1, $4, $2, $5)', ['correlation', 'gzip', large, 'information', view]);
      // the database itself sees these bytes (not their text)
      const { rows } = await client.query<{ length: number; md5: string }>("select length(data) as length, md5(data) as md5 from fit_parts where part = 'correlation'");
      expect(rows[0]).toEqual({ length: large.length, md5: createHash('md5').update(large).digest('hex') });
      const back = await storedPartBytes(db, 1, 'correlation');
      expect(Buffer.isBuffer(back!.data)).toBe(true);
      expect(back!.data.equals(large)).toBe(true);
      expect((await storedPartBytes(db, 1, 'information'))!.data.equals(Buffer.from(view))).toBe(true);
      await expect(client.query('insert into fit_parts (fit_id, part, encoding, data) values (1, $1, $2, $3::bytea)', ['x', 'gzip', 'not bytes'])).rejects.toThrow(/bytea/);
    } finally {
      await database.close();
    }
  });
});
