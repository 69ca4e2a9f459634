import type { PGlite } from '@electric-sql/pglite';
import type { Config } from './config';
import type { Db } from './db/client';
import type { Mailer } from './mail/mailer';
import type { FitRunner } from './jobs/fit-runner';

/** What every route and service may reach: built once in createApp. */
export type AppContext = {
  db: Db;
  client: PGlite;
  config: Config;
  mailer: Mailer;
  fits: FitRunner;
  log: (line: string) => void;
};
