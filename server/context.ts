import type { PGlite } from '@electric-sql/pglite';
import type { Config } from './config';
import type { Db } from './db/client';
import type { Mailer } from './mail/mailer';

/** What every route and service may reach: built once in createApp. */
export type AppContext = {
  db: Db;
  client: PGlite;
  config: Config;
  mailer: Mailer;
  log: (line: string) => void;
};
