import path from 'node:path';
import { defineConfig } from 'vitest/config';

export default defineConfig({
  resolve: {
    tsconfigPaths: true,
    // `server-only` throws outside React's server bundle; tests import server modules directly.
    alias: { 'server-only': path.resolve(import.meta.dirname, 'tests/support/server-only.ts') },
  },
  test: {
    include: ['tests/**/*.test.ts'],
    globalSetup: ['tests/support/global-setup.ts'],
    // Integration and browser tests share one server and database; run files one after another.
    fileParallelism: false,
    testTimeout: 30_000,
    hookTimeout: 120_000,
  },
});
