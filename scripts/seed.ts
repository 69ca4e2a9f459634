import { rmSync } from 'node:fs';
import { ConfigError, loadConfig } from '../server/config';
import { DataDirLockedError, openDatabase } from '../server/db/client';
import { seedDemo } from '../server/seed/demo';

/** npm run seed [-- --reset]: writes the invented demo into the data folder (emptied first with --reset). */
async function main() {
  const config = loadConfig();
  if (process.argv.includes('--reset')) rmSync(config.dataDir, { recursive: true, force: true });
  const database = await openDatabase(config.dataDir);
  const outcome = await seedDemo(database.db);
  await database.close();
  console.log(outcome.seeded ? `Demo written into ${config.dataDir}.` : `${config.dataDir} already has accounts; nothing written (use --reset to start again).`);
  console.log(`Demo accounts (password for all: ${outcome.password}):`);
  for (const a of outcome.accounts) console.log(`  ${a.email.padEnd(26)} ${a.note}`);
}

main().catch((e) => {
  console.error(e instanceof ConfigError || e instanceof DataDirLockedError ? e.message : e);
  process.exit(1);
});
