import { defineConfig } from 'vitest/config';

// Server integration tests against the real PostgreSQL that the test command starts.
export default defineConfig({
  test: {
    include: ['tests/server/**/*.test.ts'],
    environment: 'node',
    setupFiles: ['tests/support/fast-check-setup.ts'],
    testTimeout: 60_000,
    hookTimeout: 120_000,
    pool: 'forks',
    maxWorkers: 2,
  },
});
