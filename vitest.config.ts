import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vitest/config';

const root = fileURLToPath(new URL('.', import.meta.url));
const alias = { '@shared': `${root}shared` };

// Two projects: fast unit/API tests, and browser tests that start a real server and chromium.
export default defineConfig({
  resolve: { alias },
  test: {
    reporters: ['default', './tests/closing-line-reporter.ts'],
    projects: [
      {
        resolve: { alias },
        test: { name: 'unit', include: ['tests/**/*.test.ts', 'tests/**/*.test.tsx'], exclude: ['tests/e2e/**'], testTimeout: 30_000, hookTimeout: 60_000 },
      },
      {
        resolve: { alias },
        test: { name: 'e2e', include: ['tests/e2e/**/*.test.ts'], globalSetup: ['tests/e2e/global-setup.ts'], testTimeout: 120_000, hookTimeout: 120_000, fileParallelism: false },
      },
    ],
  },
});
