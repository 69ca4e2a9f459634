import { execSync } from 'node:child_process';

/** Browser tests run against the production build of the client. */
export default function setup() {
  execSync('node scripts/build-if-needed.mjs', { stdio: 'inherit' });
}
