import { mkdirSync } from 'node:fs';
import { defineConfig } from 'drizzle-kit';

// drizzle-kit only needs a scratch database to diff against; PGlite does not create parent folders.
mkdirSync('data/drizzle-kit', { recursive: true });

export default defineConfig({
  dialect: 'postgresql',
  driver: 'pglite',
  schema: './server/db/schema.ts',
  out: './drizzle',
  dbCredentials: { url: './data/drizzle-kit' },
});
