// Builds the client when dist/client is missing or older than any client source.
import { execSync } from 'node:child_process';
import { existsSync, readdirSync, statSync } from 'node:fs';
import path from 'node:path';

const built = 'dist/client/index.html';
const newest = (p) => {
  if (!existsSync(p)) return 0;
  const s = statSync(p);
  if (!s.isDirectory()) return s.mtimeMs;
  return Math.max(0, ...readdirSync(p).map((f) => newest(path.join(p, f))));
};
const sources = Math.max(...['src', 'shared', 'index.html', 'vite.config.ts', 'package-lock.json'].map(newest));
if (!existsSync(built) || statSync(built).mtimeMs < sources) {
  console.log('Building the client…');
  execSync('npx vite build --logLevel warn', { stdio: 'inherit' });
}
