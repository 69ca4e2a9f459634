import type { Config } from './config';
import type { Db, DbClient } from './db/client';
import type { Mailer } from './mail/mailer';
import type { FitRunner } from './runs/fit-runner';
import type { ToyRunner } from './runs/toy-runner';
import type { HypothesisScanRunner } from './runs/hypothesis-scan-runner';

/** What every route and service may reach: built once in createApp. */
export type AppContext = {
  db: Db;
  client: DbClient;
  config: Config;
  mailer: Mailer;
  fits: FitRunner;
  toys: ToyRunner;
  scans: HypothesisScanRunner;
  log: (line: string) => void;
};
