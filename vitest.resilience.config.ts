import { defineConfig } from 'vitest/config';

// Resilience tests kill server processes and restart the test database
// cluster: one file at a time, after the integration tests, so nothing else
// shares the cluster while it restarts.
export default defineConfig({
  test: {
    include: ['tests/resilience/**/*.test.ts'],
    environment: 'node',
    setupFiles: ['tests/support/fast-check-setup.ts'],
    testTimeout: 180_000,
    hookTimeout: 120_000,
    pool: 'forks',
    maxWorkers: 1,
    fileParallelism: false,
  },
});
